// Three levels of hierarchy, an unconnected input that the instance never
// reads, and a module used twice; top chosen as the module nobody instantiates.
module leaf(input a, input unused, output y);
  assign y = ~a;
endmodule

module mid(input a, output y);
  wire t;
  leaf l1 (.a(a), .y(t));
  leaf l2 (.a(t), .unused(), .y(y));
endmodule

module hier_deep(input x, output y1, output y2);
  mid m1 (.a(x), .y(y1));
  mid m2 (.a(y1), .y(y2));
endmodule
