// expect: 4:14: 'n1' is not declared (`default_nettype none)
`default_nettype none
module default_nettype_none(input wire a, b, output wire y);
  and g1 (y, n1, b);
  not g2 (n1, a);
endmodule
