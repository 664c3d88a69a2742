// expect: 3:27: a second edge in one event list (an asynchronous set or reset) driven by a net is outside the structural subset
module async_reset(input clk, rst, d, output reg q);
  always @(posedge clk or posedge rst)
    if (rst) q <= 1'b0; else q <= d;
endmodule
