// expect: 3:3: an 'initial' block that does more than give regs their starting values
module several_errors(input a, b, output y, output reg q);
  initial begin q = 0; #1 q = 1; end
  integer i;
  always @(posedge a or b) q <= 1;
  assign y = a;
endmodule
