// expect: 4:8: 'w' is declared twice (first at line 3)
module declared_twice(input a, output y);
  wire w;
  wire w;
  assign w = a;
  assign y = w;
endmodule
