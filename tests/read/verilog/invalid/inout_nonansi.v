// expect: 4:3: 'inout' is outside the structural subset
module inout_nonansi(a, b);
  input a;
  inout b;
endmodule
