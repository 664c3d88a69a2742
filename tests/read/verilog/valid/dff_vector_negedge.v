// A 4-bit register on the falling edge, with an enable; bit 0 is also set by
// a load that takes precedence. Initial value 0101 from the declaration.
module dff_vector_negedge(input clk, input en, input load, input [3:0] d, output reg [3:0] q = 4'b0101);
  always @(negedge clk) begin
    if (en)
      q <= d;
    if (load)
      q[0] <= 1'b1;
  end
endmodule
