// 4-bit ripple-carry adder from full-adder instances (gate primitives inside).
module fa(input a, input b, input ci, output s, output co);
  wire t, g, p;
  xor (t, a, b);
  xor (s, t, ci);
  and (g, a, b);
  and (p, t, ci);
  or  (co, g, p);
endmodule

module ripple4_inst(input [3:0] a, input [3:0] b, input cin, output [3:0] sum, output cout);
  wire [3:1] c;
  fa f0 (.a(a[0]), .b(b[0]), .ci(cin),  .s(sum[0]), .co(c[1]));
  fa f1 (.a(a[1]), .b(b[1]), .ci(c[1]), .s(sum[1]), .co(c[2]));
  fa f2 (.a(a[2]), .b(b[2]), .ci(c[2]), .s(sum[2]), .co(c[3]));
  fa f3 (.a(a[3]), .b(b[3]), .ci(c[3]), .s(sum[3]), .co(cout));
endmodule
