// expect: 5:7: 'x' digit in '2'b1x': unknown (x) and high-impedance (z) values are outside the structural subset
module case_x_item(input [1:0] s, input a, b, output reg y);
  always @*
    case (s)
      2'b1x: y = a;
      default: y = b;
    endcase
endmodule
