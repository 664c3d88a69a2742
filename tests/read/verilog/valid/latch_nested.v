// A latch whose enable is the logic of two nested conditions, and a
// level-sensitive block that assigns on every path (plain logic).
module latch_nested(input a, input b, input d, input e, output reg q, output reg m);
  always @* begin
    if (a) begin
      if (b) q = d;
    end else
      q = e;
  end
  always @(a or d or e) begin
    m = e;
    if (a) m = d;
  end
endmodule
