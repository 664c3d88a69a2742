// the gated set-reset latch: a NAND set-reset latch whose set and reset pass two NANDs opened by en
// (common practice)
module gated_sr(input s, input r, input en, output q, output qn);
  wire sn, rn;
  nand g1 (sn, s, en);
  nand g2 (rn, r, en);
  nand g3 (q, sn, qn);
  nand g4 (qn, rn, q);
endmodule
