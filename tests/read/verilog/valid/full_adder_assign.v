// Full adder as one addition into a concatenation.
module full_adder_assign(input a, b, cin, output s, cout);
  assign {cout, s} = a + b + cin;
endmodule
