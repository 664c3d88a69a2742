// expect: 3:3: a 'tri' net is outside the structural subset
module tri_net(input a, output y);
  tri t;
  assign y = a;
endmodule
