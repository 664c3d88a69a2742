// expect: 6:10: a continuous assignment to the reg 'q' is outside the structural subset
module assign_to_reg(a, q);
  input a;
  output q;
  reg q;
  assign q = a;
endmodule
