// expect: 3:3: an 'initial' block is outside the structural subset
module several_errors(input a, b, output y, output reg q);
  initial q = 0;
  integer i;
  always @(posedge a or negedge b) q <= 1;
  assign y = a;
endmodule
