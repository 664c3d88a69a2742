// expect: 3:16: a shift by a net ('<<' needs a constant amount) is outside the structural subset
module shift_by_net(input [3:0] a, input [1:0] n, output [3:0] y);
  assign y = a << n;
endmodule
