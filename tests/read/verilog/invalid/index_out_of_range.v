// expect: 3:14: index 4 is outside 'a[3:0]'
module index_out_of_range(input [3:0] a, output y);
  assign y = a[4];
endmodule
