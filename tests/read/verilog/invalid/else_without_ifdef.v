// expect: 4:1: `else without `ifdef
module else_without_ifdef(input a, output y);
  assign y = a;
`else
endmodule
