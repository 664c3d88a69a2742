// expect: 3:7: 'q' is declared twice (first at line 2)
module ansi_redeclared(input a, output q);
  reg q;
  always @* q = a;
endmodule
