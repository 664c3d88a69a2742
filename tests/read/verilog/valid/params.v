// Parameters: a header parameter, a body localparam, overrides by name and by position.
module inverter #(parameter W = 2) (input [W-1:0] a, output [W-1:0] y);
  localparam ONES = {W{1'b1}};
  assign y = a ^ ONES;
endmodule

module params(input [7:0] a, output [7:0] y);
  parameter HALF = 4;
  inverter #(.W(HALF)) lo (.a(a[HALF-1:0]), .y(y[HALF-1:0]));
  inverter #(HALF)     hi (.a(a[7:HALF]),   .y(y[7:HALF]));
endmodule
