// expect: 2:9: macro 'AND2' takes arguments: macros with arguments are outside the structural subset
`define AND2(x, y) ((x) & (y))
module macro_with_arguments(input a, b, output y);
  assign y = a & b;
endmodule
