// expect: 3:3: an 'always' block without an event control '@(...)' is outside the structural subset
module always_without_event(output reg clk);
  always #5 clk = ~clk;
endmodule
