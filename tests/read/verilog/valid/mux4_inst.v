// 4:1 multiplexer from three 2:1 multiplexer instances.
module mux2(input a, input b, input sel, output y);
  assign y = sel ? b : a;
endmodule

module mux4_inst(input [3:0] d, input [1:0] s, output y);
  wire lo, hi;
  mux2 m0 (.a(d[0]), .b(d[1]), .sel(s[0]), .y(lo));
  mux2 m1 (.a(d[2]), .b(d[3]), .sel(s[0]), .y(hi));
  mux2 m2 (lo, hi, s[1], y);
endmodule
