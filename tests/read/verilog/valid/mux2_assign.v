// 2:1 multiplexer with the conditional operator.
module mux2_assign(input d0, d1, s, output y);
  assign y = s ? d1 : d0;
endmodule
