// master-slave D flip-flop of two gated D latches, master open while clk is low (common practice)
module msff(input d, input clk, output q);
  wire dn, clkn, s1, r1, m, mn, s2, r2, qn;
  not  g0 (dn, d);
  not  g9 (clkn, clk);
  nand g1 (s1, d, clkn);
  nand g2 (r1, dn, clkn);
  nand g3 (m, s1, mn);
  nand g4 (mn, r1, m);
  nand g5 (s2, m, clk);
  nand g6 (r2, mn, clk);
  nand g7 (q, s2, qn);
  nand g8 (qn, r2, q);
endmodule
