// expect: 3:3: a 'genvar' (generate loops) is outside the structural subset
module genvar_loop(input [3:0] a, output [3:0] y);
  genvar i;
  assign y = a;
endmodule
