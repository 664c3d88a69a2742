// expect: 2:1: `include "../../../valid/../../../../../etc/hosts" is outside the design's folder
`include "../../../valid/../../../../../etc/hosts"
module include_outside(input a, output y);
  assign y = a;
endmodule
