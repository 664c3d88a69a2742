// expect: 5:1: a module cannot be declared inside another; is 'endmodule' missing before this line?
module first(input a, output y);
  assign y = a;

module second(input a, output y);
  assign y = ~a;
endmodule
