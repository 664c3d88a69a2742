// the set-reset latch of two cross-coupled NOR gates (common practice): s sets q, r resets it
module sr_latch_nor(input s, input r, output q, output qn);
  nor n1 (q, r, qn);
  nor n2 (qn, s, q);
endmodule
