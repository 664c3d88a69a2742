// expect: 2:1: a user-defined primitive ('primitive') is outside the structural subset
primitive udp_and(out, a, b);
  output out;
  input a, b;
  table
    1 1 : 1;
    0 ? : 0;
    ? 0 : 0;
  endtable
endprimitive
module user_primitive(input a, b, output y);
  and (y, a, b);
endmodule
