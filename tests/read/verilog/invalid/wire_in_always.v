// expect: 5:25: 'q' is a wire: an always block can only assign a reg
module wire_in_always(clk, d, q);
  input clk, d;
  output q;
  always @(posedge clk) q <= d;
endmodule
