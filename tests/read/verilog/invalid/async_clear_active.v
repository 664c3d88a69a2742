// expect: 3:27: this asynchronous set or reset is tied at its active level
module dff_c (input D, input CLK, input CLR_N, output reg Q);
  always @(posedge CLK or negedge CLR_N)
    if (!CLR_N) Q <= 1'b0; else Q <= D;
endmodule

module async_clear_active (input clk, input d, output q);
  supply0 GND;
  dff_c u1 (.D(d), .CLK(clk), .CLR_N(GND), .Q(q));
endmodule
