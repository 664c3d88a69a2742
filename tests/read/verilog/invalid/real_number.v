// expect: 3:18: real number '1.5' is outside the structural subset
module real_number(input a, output y);
  assign y = a & 1.5;
endmodule
