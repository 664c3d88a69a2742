// Two relay contacts in parallel feed one lamp: the lamp lights when either closes (common practice);
// written as a 'wor' net with two drivers, as netfit's relay builds are.
module wired_or (input a, input b, input c, output wor lamp);
  assign lamp = a & b;
  assign lamp = c;
endmodule
