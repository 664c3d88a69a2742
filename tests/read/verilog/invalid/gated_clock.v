// expect: 3:25: a clock that is an expression (gated clock) is outside the structural subset
module gated_clock(input clk, en, d, output reg q);
  always @(posedge (clk & en)) q <= d;
endmodule
