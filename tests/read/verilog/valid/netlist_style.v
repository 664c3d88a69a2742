// The style of netlists written by tools: escaped identifiers, supply nets,
// an unconnected output, gate delays (ignored with a warning), buf with two outputs.
module cell_and2(A, B, Y);
  input A, B;
  output Y;
  and #1 (Y, A, B);
endmodule

module cell_ha(input A, input B, output S, output C);
  xor #(1, 2) (S, A, B);
  and (C, A, B);
endmodule

module netlist_style(\in.a , \in.b , out0, out1, out2);
  input \in.a , \in.b ;
  output out0, out1, out2;
  supply1 vdd;
  supply0 gnd;
  wire \n$1 ;
  cell_and2 u1 (.A(\in.a ), .B(vdd), .Y(\n$1 ));
  cell_ha   u2 (.A(\n$1 ), .B(\in.b ), .S(out0), .C());
  buf b1 (out1, out2, \n$1 );
endmodule
