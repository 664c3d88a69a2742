// expect: 3:18: 'bb' is not declared
module undeclared(input a, b, output y);
  assign y = a & bb;
endmodule
