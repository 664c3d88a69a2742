// expect: 3:3: a generate block ('generate') is outside the structural subset
module generate_block(input a, output y);
  generate
    if (1) begin : g
      assign y = a;
    end
  endgenerate
endmodule
