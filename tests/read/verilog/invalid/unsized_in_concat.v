// expect: 3:18: an unsized number in a concatenation has no width; give it one (for example 4'd3)
module unsized_in_concat(input [2:0] a, output [3:0] y);
  assign y = {a, 1};
endmodule
