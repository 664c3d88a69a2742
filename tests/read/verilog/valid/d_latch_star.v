// D latch, transparent while en is high.
module d_latch_star(input d, input en, output reg q);
  always @* if (en) q = d;
endmodule
