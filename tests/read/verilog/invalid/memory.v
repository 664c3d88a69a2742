// expect: 3:17: an array ('mem[...]' declares a memory) is outside the structural subset
module memory(input a, output y);
  reg [7:0] mem [0:3];
  assign y = a;
endmodule
