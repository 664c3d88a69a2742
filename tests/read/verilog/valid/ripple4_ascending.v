// 4-bit ripple-carry adder with ascending ranges ([0:3]: bit 3 is the least
// significant) and the carries in a vector; boolean equations per stage.
module ripple4_ascending(a, b, cin, sum, cout);
  input [0:3] a, b;
  input cin;
  output [0:3] sum;
  output cout;
  wire [0:4] c;
  assign c[4] = cin;
  assign sum[3] = a[3] ^ b[3] ^ c[4];
  assign c[3] = (a[3] & b[3]) | (a[3] & c[4]) | (b[3] & c[4]);
  assign sum[2] = a[2] ^ b[2] ^ c[3];
  assign c[2] = (a[2] & b[2]) | (a[2] & c[3]) | (b[2] & c[3]);
  assign sum[1] = a[1] ^ b[1] ^ c[2];
  assign c[1] = (a[1] & b[1]) | (a[1] & c[2]) | (b[1] & c[2]);
  assign sum[0] = a[0] ^ b[0] ^ c[1];
  assign c[0] = (a[0] & b[0]) | (a[0] & c[1]) | (b[0] & c[1]);
  assign cout = c[0];
endmodule
