// Half adder from gate primitives (textbook: s = a xor b, c = a and b).
module half_adder_prims(a, b, s, c);
  input a, b;
  output s, c;
  xor g_sum (s, a, b);
  and g_carry (c, a, b);
endmodule
