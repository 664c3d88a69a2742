// 'for' loops stepped by SystemVerilog's increment and decrement operators (IEEE 1800-2017
// 11.4.2, from memory), in the step of the loop and as a statement of its body: a bit
// reversal, a parity, the parity of the even bits (two steps a turn) and a shift register.
module loop_steps(input clk, input [5:0] a, input sin, output reg [5:0] rev, output reg par,
                  output reg even, output reg [3:0] sr = 4'b0000);
  integer i;
  always @* begin
    for (i = 0; i < 6; i++)
      rev[i] = a[5 - i];
    par = 1'b0;
    for (i = 5; i >= 0; --i)
      par = par ^ a[i];
    even = 1'b0;
    for (i = 0; i < 6; i++) begin
      even = even ^ a[i];
      ++i;
    end
  end
  always @(posedge clk) begin
    for (i = 3; i > 0; i--)
      sr[i] <= sr[i - 1];
    sr[0] <= sin;
  end
endmodule
