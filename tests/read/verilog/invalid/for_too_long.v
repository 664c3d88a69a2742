// expect: 5:5: a 'for' loop that runs more than 8192 times is outside the structural subset
module for_too_long(input a, output reg y);
  integer i;
  always @* begin
    for (i = 0; i >= 0; i = i + 1)
      y = a;
  end
endmodule
