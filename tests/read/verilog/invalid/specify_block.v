// expect: 4:3: a specify block ('specify') is outside the structural subset
module specify_block(input a, output y);
  assign y = a;
  specify
    (a => y) = 1;
  endspecify
endmodule
