// expect: 3:14: signed literal '4'sd3' is outside the structural subset
module signed_literal(output [3:0] y);
  assign y = 4'sd3;
endmodule
