// D latch with an explicit event list and a non-blocking assignment.
module d_latch_list(d, en, q);
  input d, en;
  output q;
  reg q;
  always @(en or d)
    if (en)
      q <= d;
endmodule
