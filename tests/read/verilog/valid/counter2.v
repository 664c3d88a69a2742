// A 2-bit counter with synchronous reset (storage feeding back through logic).
module counter2(input clk, input rst, output reg [1:0] n);
  always @(posedge clk) begin
    if (rst)
      n <= 2'b00;
    else begin
      n[0] <= ~n[0];
      n[1] <= n[1] ^ n[0];
    end
  end
endmodule
