// expect: 3:3: a task ('task') is outside the structural subset
module task_m(input a, output y);
  task t; begin end endtask
  assign y = a;
endmodule
