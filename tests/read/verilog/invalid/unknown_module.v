// expect: 3:3: unknown module 'full_adder'
module unknown_module(input a, b, c, output s, co);
  full_adder fa0 (a, b, c, s, co);
endmodule
