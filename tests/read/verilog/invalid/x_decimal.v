// expect: 3:14: 'x' digit in '4'dx'
module x_decimal(output [3:0] y);
  assign y = 4'dx;
endmodule
