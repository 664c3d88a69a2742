// 8-bit serial-in, parallel-out shift register (textbook circuit, common practice): at each rising clock
// edge q[0] takes the serial input si and each q[i+1] takes q[i]; starts at 0.
module sipo8_v (input clk, input si, output reg [7:0] q = 8'b0);
  always @(posedge clk)
    q <= {q[6:0], si};
endmodule
