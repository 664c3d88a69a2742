// the set-reset latch of two cross-coupled NAND gates, set and reset active low (common practice)
module nand_sr(input sn, input rn, output q, output qn);
  nand g1 (q, sn, qn);
  nand g2 (qn, rn, q);
endmodule
