// A D flip-flop section with active-low preset and clear, as a chip datasheet describes it
// (common practice), used with both tied off; its starting value is set in an 'initial' line.
module dff_pc (input D, input CLK, input PRE_N, input CLR_N, output reg Q);
  initial Q = 1'b1;
  always @(posedge CLK or negedge CLR_N or negedge PRE_N)
    if (!CLR_N) Q <= 1'b0;
    else if (!PRE_N) Q <= 1'b1;
    else Q <= D;
endmodule

module dff_tied_clear (input clk, input d, output q);
  supply1 VCC;
  dff_pc u1 (.D(d), .CLK(clk), .PRE_N(VCC), .CLR_N(VCC), .Q(q));
endmodule
