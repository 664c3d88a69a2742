// SR latch from two cross-coupled NOR gates: legal Verilog, but a
// combinational loop; netfit's netlist check refuses it and names the loop.
module sr_latch_nor(input s, input r, output q, output qn);
  nor n1 (q, r, qn);
  nor n2 (qn, s, q);
endmodule
