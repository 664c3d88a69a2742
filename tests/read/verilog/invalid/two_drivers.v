// expect: 5:12: net 'w' has two drivers (first driven at line 4)
module two_drivers(input a, b, output y);
  wire w;
  assign w = a;
  assign w = b;
  assign y = w;
endmodule
