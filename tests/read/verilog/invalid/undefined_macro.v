// expect: 2:31: unknown directive or undefined macro `WIDTH
module undefined_macro(input [`WIDTH-1:0] a, output y);
  assign y = |a;
endmodule
