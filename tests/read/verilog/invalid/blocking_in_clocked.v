// expect: 3:27: a blocking assignment '=' in a clocked block (use '<=') is outside the structural subset
module blocking_in_clocked(input clk, d, output reg q);
  always @(posedge clk) q = d;
endmodule
