// expect: 3:3: SystemVerilog 'always_ff' is outside the structural subset
module always_ff_m(input clk, d, output reg q);
  always_ff @(posedge clk) q <= d;
endmodule
