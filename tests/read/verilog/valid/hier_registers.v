// One module used many times (netfit lowers the first instance and copies it): a 4-stage
// shift register of flip-flops with an enable, each stage the same module; and a module
// with a supply net and an input it never reads, used three times (once with that input
// open, once connected, once left out).
module stage(input clk, input en, input d, output reg q = 1'b0);
  always @(posedge clk)
    if (en) q <= d;
endmodule

module tie(input a, input spare, output y);
  supply1 one;
  assign y = a ^ one;
endmodule

module hier_registers(input clk, input en, input sin, input [2:0] x, output [3:0] q, output [2:0] nx);
  stage s0 (.clk(clk), .en(en), .d(sin), .q(q[0]));
  stage s1 (.clk(clk), .en(en), .d(q[0]), .q(q[1]));
  stage s2 (.clk(clk), .en(en), .d(q[1]), .q(q[2]));
  stage s3 (.clk(clk), .en(en), .d(q[2]), .q(q[3]));
  tie t0 (.a(x[0]), .y(nx[0]));
  tie t1 (.a(x[1]), .spare(), .y(nx[1]));
  tie t2 (.a(x[2]), .spare(x[0]), .y(nx[2]));
endmodule
