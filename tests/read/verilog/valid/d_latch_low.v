// D latch transparent while en is low (if (!en)), comma-separated event list.
module d_latch_low(input d, input en, output reg q);
  always @(en, d) begin
    if (!en) q = d;
  end
endmodule
