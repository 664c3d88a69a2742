// expect: 4:3: an 'initial' block is outside the structural subset
module initial_block(input a, output reg q);
  always @* q = a;
  initial q = 1'b0;
endmodule
