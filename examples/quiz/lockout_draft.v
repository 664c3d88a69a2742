// Quiz-night lockout for three players (a demo scenario of our own): the first draft.
// Each player has a button (b1..b3) and a lamp (l1..l3).  The first button pressed lights that
// player's lamp and locks the other two out until the host presses clear.  Each lamp is held by
// a set-reset latch of two cross-coupled NAND gates; "free" (no lamp lit) steers the set inputs.
// Fault: a button held down while the host clears makes lamp, "free" and set gate a ring.
module lockout(input b1, input b2, input b3, input clear, output l1, output l2, output l3);
  wire free, cn, s1n, s2n, s3n, l1n, l2n, l3n;
  nor  f0 (free, l1, l2, l3);
  not  c0 (cn, clear);
  nand p1 (s1n, b1, free);
  nand p2 (s2n, b2, free);
  nand p3 (s3n, b3, free);
  nand q1 (l1, s1n, l1n);
  nand r1 (l1n, cn, l1);
  nand q2 (l2, s2n, l2n);
  nand r2 (l2n, cn, l2);
  nand q3 (l3, s3n, l3n);
  nand r3 (l3n, cn, l3);
endmodule
