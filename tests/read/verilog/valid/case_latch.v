// A 'case' without a default in a level-sensitive block: q is assigned for two of the
// four selections only, so it is a latch open while s[1] is 0.
module case_latch(input [1:0] s, input a, b, output reg q);
  always @*
    case (s)
      2'b00: q = a;
      2'b01: q = b;
    endcase
endmodule
