// expect: 4:34: port 'i' of type 'integer' is outside the structural subset
// The same in a module below the top (it made the reader fail with an internal error):
// an integer port is no loop constant even when a 'for' loop counts with it.
module counter_of(input [1:0] a, output integer i, output y);
  reg r;
  assign y = r;
  always @* begin
    r = 1'b0;
    for (i = 0; i < 2; i = i + 1)
      r = r ^ a[i];
  end
endmodule
module integer_port_instance(input [1:0] a, output y);
  counter_of u (.a(a), .i(), .y(y));
endmodule
