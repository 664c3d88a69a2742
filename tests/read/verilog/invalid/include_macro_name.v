// expect: 3:1: an `include whose file name comes from a macro is outside the structural subset; write the name in quotes
`define FILE "defs.vh"
`include `FILE
module include_macro_name(input a, output y);
  assign y = a;
endmodule
