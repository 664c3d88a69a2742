// Full adder from primitives; the internal nets are implicit (IEEE 1364-2005 6.1.2),
// one statement declares two gates, one gate has no instance name.
module full_adder_prims(input a, input b, input cin, output s, output cout);
  xor x1 (t, a, b), x2 (s, t, cin);
  and (g, a, b);
  and a2 (p, t, cin);
  or  o1 (cout, g, p);
endmodule
