// expect: 8:15: a hierarchical name ('u.…') is outside the structural subset
module leaf(input a, output y);
  wire t;
  assign y = a;
endmodule
module hierarchical_name(input a, output y, z);
  leaf u (.a(a), .y(y));
  assign z = u.t;
endmodule
