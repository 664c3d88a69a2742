/* 2:1 multiplexer from NOT, AND, OR primitives:
   y = d0 when s = 0, d1 when s = 1 (textbook definition). */
module mux2_prims(output y, input d0, input d1, input s);
  wire sn, t0, t1;
  not   n1 (sn, s);
  and   a0 (t0, d0, sn);
  and   a1 (t1, d1, s);
  or    o1 (y, t0, t1);
endmodule
