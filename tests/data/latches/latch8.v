// 8-bit latch bank on one enable (textbook circuit, common practice): q follows d while en is high and
// holds its value while en is low.
module latch8_v (input en, input [7:0] d, output reg [7:0] q);
  always @*
    if (en) q = d;
endmodule
