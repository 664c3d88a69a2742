// expect: 3:16: a bit-select of 'd' with an index that is not constant is outside the structural subset
module variable_index(input [3:0] d, input [1:0] s, output y);
  assign y = d[s];
endmodule
