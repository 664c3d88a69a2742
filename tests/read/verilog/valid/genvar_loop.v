// A generate loop over a genvar with constant bounds: y is a with its bits reversed.
module genvar_loop(input [3:0] a, output [3:0] y);
  genvar i;
  for (i = 0; i < 4; i = i + 1) begin : g
    assign y[i] = a[3 - i];
  end
endmodule
