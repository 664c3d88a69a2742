// expect: 3:14: a gate terminal must be 1 bit wide; this one is 4 bits
module wide_gate_terminal(input [3:0] a, input b, output y);
  and g1 (y, a, b);
endmodule
