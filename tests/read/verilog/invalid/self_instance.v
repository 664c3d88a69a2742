// expect: 3:3: module 'self_instance' instantiates itself (self_instance → self_instance)
module self_instance(input a, output y);
  self_instance inner (.a(a), .y(y));
endmodule
