// expect: 3:16: the case equality operator '===' is outside the structural subset
module case_equality(input a, b, output y);
  assign y = a === b;
endmodule
