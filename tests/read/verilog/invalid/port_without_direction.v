// expect: 2:37: port 'c' has no input or output declaration
module port_without_direction(a, b, c);
  input a;
  output b;
  assign b = a;
endmodule
