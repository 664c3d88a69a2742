// expect: 3:26: 'q' is read in the always block that assigns it before it is assigned on every path
module latch_reads_itself(input en, output reg q);
  always @* if (en) q = ~q;
endmodule
