// expect: 7:7: instance name 'u1' is used twice in module 'instance_name_twice' (first at line 6)
module inv(input a, output y);
  assign y = ~a;
endmodule
module instance_name_twice(input a, output y, z);
  inv u1 (.a(a), .y(y));
  inv u1 (.a(a), .y(z));
endmodule
