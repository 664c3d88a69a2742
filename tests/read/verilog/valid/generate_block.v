// A generate block under a constant condition: it is there, so y = a.
module generate_block(input a, output y);
  generate
    if (1) begin : g
      assign y = a;
    end
  endgenerate
endmodule
