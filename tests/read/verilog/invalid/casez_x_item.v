// expect: 5:7: an 'x' digit in a casez item ('3'b1x?') never matches a 0/1 value; use casex or a z digit
module casez_x_item(input [2:0] s, input a, b, output reg y);
  always @*
    casez (s)
      3'b1x?: y = a;
      default: y = b;
    endcase
endmodule
