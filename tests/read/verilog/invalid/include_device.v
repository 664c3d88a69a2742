// expect: 2:1: `include "/dev/zero" is outside the design's folder (allow it with --allow-outside)
`include "/dev/zero"
module include_device(input a, output y);
  assign y = a;
endmodule
