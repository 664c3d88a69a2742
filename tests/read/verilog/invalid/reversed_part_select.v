// expect: 3:14: part-select [0:3] runs the other way from 'a[7:0]'
module reversed_part_select(input [7:0] a, output [3:0] y);
  assign y = a[0:3];
endmodule
