// expect: 3:12: 'a' is an input of the top module and cannot be driven inside it
module input_driven(input a, b, output y);
  assign a = b;
  assign y = b;
endmodule
