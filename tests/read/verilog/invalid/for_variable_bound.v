// expect: 5:19: a 'for' loop whose condition is not constant
module for_variable_bound(input [3:0] a, input [1:0] n, output reg y);
  integer i;
  always @* begin
    for (i = 0; i < n; i = i + 1)
      y = a[i];
  end
endmodule
