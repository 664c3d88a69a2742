// Full adder from two half-adder instances and an OR (textbook construction).
module ha(input x, input y, output s, output c);
  assign s = x ^ y;
  assign c = x & y;
endmodule

module full_adder_inst(input a, input b, input cin, output s, output cout);
  wire s1, c1, c2;
  ha h1 (.x(a), .y(b), .s(s1), .c(c1));
  ha h2 (s1, cin, s, c2);           // positional connections
  assign cout = c1 | c2;
endmodule
