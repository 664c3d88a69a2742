// expect: 3:14: 'z' digit in '1'bz'
module z_digit(output y);
  assign y = 1'bz;
endmodule
