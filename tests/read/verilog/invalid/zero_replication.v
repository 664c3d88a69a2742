// expect: 3:15: replication count must be at least 1, not 0
module zero_replication(input a, output [3:0] y);
  assign y = {0{a}};
endmodule
