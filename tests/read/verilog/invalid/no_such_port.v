// expect: 6:19: module 'buf1' has no port 'z'
module buf1(input a, output y);
  assign y = a;
endmodule
module no_such_port(input a, output y);
  buf1 u (.a(a), .z(y));
endmodule
