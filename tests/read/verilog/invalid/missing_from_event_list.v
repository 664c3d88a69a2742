// expect: 3:30: 'b' is read in this always block but is missing from its event list (use @*)
module missing_from_event_list(input a, b, output reg y);
  always @(a) if (a) y = a ^ b;
endmodule
