// expect: 2:28: 'inout' is outside the structural subset
module inout_port(input a, inout b, output y);
  assign y = a;
endmodule
