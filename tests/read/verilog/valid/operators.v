// Reductions, replication, part-selects, logical operators, equality, shifts,
// sized and unsized literals in every base.
module operators(input [7:0] a, input [3:0] b, output [15:0] y, output [6:0] f);
  assign y[3:0]  = {4{a[0]}} ^ b;
  assign y[7:4]  = a[7:4] & 4'hA | 4'o5 & ~b;
  assign y[11:8] = a[2+:4] ~^ {b[0], b[3:1]};
  assign y[15:12] = (a >> 2) ^ (b << 1);
  assign f[0] = &a;
  assign f[1] = ~&b;
  assign f[2] = a[3:0] == b;
  assign f[3] = a[3:0] != 4'd9;
  assign f[4] = !a || (b[0] && b[1]);
  assign f[5] = ^a ^~ ^b;
  assign f[6] = ~|(a & 8'b1100_0011) ? 1'b1 : 'b0;
endmodule
