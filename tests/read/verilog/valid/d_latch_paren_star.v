// D latch, transparent while en is high; the sensitivity list written @(*).
module d_latch_paren_star(input d, input en, output reg q);
  always @(*) begin
    if (en) q = d;
  end
endmodule
