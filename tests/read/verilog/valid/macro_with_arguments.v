// A macro with arguments, expanded by the preprocessor: y = a & b.
`define AND2(x, y) ((x) & (y))
module macro_with_arguments(input a, b, output y);
  assign y = `AND2(a, b);
endmodule
