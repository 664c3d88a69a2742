// 'for' loops with constant bounds: a bit reversal and a parity in a level-sensitive
// block, and a shift register in a clocked block (one integer serves both loops).
module for_loops(input clk, input [7:0] a, input sin, output reg [7:0] rev, output reg par,
                 output reg [3:0] sr = 4'b0000);
  integer i;
  always @* begin
    par = 1'b0;
    for (i = 0; i < 8; i = i + 1) begin
      rev[i] = a[7 - i];
      par = par ^ a[i];
    end
  end
  always @(posedge clk) begin
    sr[0] <= sin;
    for (i = 1; i < 4; i = i + 1)
      sr[i] <= sr[i - 1];
  end
endmodule
