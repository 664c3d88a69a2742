// expect: 4:19: a constant is needed here
module generate_variable_bound(input [3:0] a, input [1:0] n, output [3:0] y);
  genvar i;
  for (i = 0; i < n; i = i + 1) begin : g
    assign y[i] = a[i];
  end
endmodule
