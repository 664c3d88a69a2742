// expect: 3:3: the switch-level or tristate primitive 'bufif1' is outside the structural subset
module tristate_primitive(input a, en, output y);
  bufif1 b1 (y, a, en);
endmodule
