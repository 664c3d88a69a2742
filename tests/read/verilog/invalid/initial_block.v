// expect: 4:3: an 'initial' block that does more than give regs their starting values
module initial_block(input a, output reg q);
  always @* q = a;
  initial $display("q starts at %b", q);
endmodule
