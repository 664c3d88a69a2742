// expect: 3:18: 'x' digit in '4'b10x1': unknown (x) and high-impedance (z) values are outside the structural subset
module x_digit(input [3:0] a, output [3:0] y);
  assign y = a & 4'b10x1;
endmodule
