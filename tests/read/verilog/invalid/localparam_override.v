// expect: 7:17: 'K' is a localparam of 'inv' and cannot be set
module inv #(parameter W = 1) (input [W-1:0] a, output [W-1:0] y);
  localparam K = 2;
  assign y = ~a;
endmodule
module localparam_override(input a, output y);
  inv #(.W(1), .K(3)) u (.a(a), .y(y));
endmodule
