// expect: 6:8: input 'b' of instance 'u1' is not connected, but the instance reads it
module and2(input a, b, output y);
  assign y = a & b;
endmodule
module unconnected_input(input x, output y);
  and2 u1 (.a(x), .y(y));
endmodule
