// expect: 6:18: named and positional port connections are mixed
module and2(input a, b, output y);
  assign y = a & b;
endmodule
module mixed_connections(input a, b, output y);
  and2 u (.a(a), b, .y(y));
endmodule
