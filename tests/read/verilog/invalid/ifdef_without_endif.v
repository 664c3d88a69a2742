// expect: 3:1: `ifdef without `endif
module ifdef_without_endif(input a, output y);
`ifdef FAST
  assign y = a;
`else
  assign y = ~a;
endmodule
