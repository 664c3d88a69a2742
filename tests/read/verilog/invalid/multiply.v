// expect: 3:16: operator '*' on nets is outside the structural subset
module multiply(input [3:0] a, b, output [7:0] p);
  assign p = a * b;
endmodule
