// expect: 7:3: 'defparam' (override parameters with #( ) on the instance) is outside the structural subset
module inv #(parameter W = 1) (input [W-1:0] a, output [W-1:0] y);
  assign y = ~a;
endmodule
module defparam_m(input [1:0] a, output [1:0] y);
  inv u (.a(a), .y(y));
  defparam u.W = 2;
endmodule
