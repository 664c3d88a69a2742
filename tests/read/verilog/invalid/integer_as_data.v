// expect: 3:3: an 'integer' variable is outside the structural subset (except as a 'for' loop's variable)
module integer_as_data(input [3:0] a, output [3:0] y);
  integer n;
  always @* n = a;
  assign y = a;
endmodule
