// 4-bit synchronous binary counter with synchronous clear, parallel load and count enable (textbook
// circuit, common practice): at a rising clock edge clr high empties it; else ld high loads d; else en high
// counts up by one (wrapping from 15 to 0); else it holds.  Starts at 0.
module loadcount4_v (input clk, input clr, input ld, input en, input [3:0] d, output reg [3:0] q = 4'b0);
  always @(posedge clk)
    if (clr) q <= 4'b0;
    else if (ld) q <= d;
    else if (en) q <= q + 4'b1;
endmodule
