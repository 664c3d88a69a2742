// expect: 2:46: output 'y' is never driven
module top_not_driven_output(input a, output y);
endmodule
