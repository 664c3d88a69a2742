// the gated D latch: a NAND set-reset latch steered by two NANDs from d and its complement (common practice)
module dlatch(input d, input en, output q, output qn);
  wire dn, s, r;
  not  g0 (dn, d);
  nand g1 (s, d, en);
  nand g2 (r, dn, en);
  nand g3 (q, s, qn);
  nand g4 (qn, r, q);
endmodule
