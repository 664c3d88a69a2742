// expect: 3:8: 'signed' is outside the structural subset
module signed_net(input [3:0] a, output [3:0] y);
  wire signed [3:0] s;
  assign y = a;
endmodule
