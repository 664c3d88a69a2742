// expect: 5:8: several modules could be the top ('first', 'second'); choose one with --top NAME
module first(input a, output y);
  assign y = a;
endmodule
module second(input a, output y);
  assign y = ~a;
endmodule
