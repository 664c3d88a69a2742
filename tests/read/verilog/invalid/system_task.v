// expect: 5:5: the system task '$display' is outside the structural subset
module system_task(input clk, d, output reg q);
  always @(posedge clk) begin
    q <= d;
    $display("q=%b", q);
  end
endmodule
