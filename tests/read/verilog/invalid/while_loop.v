// expect: 4:5: a 'while' loop is outside the structural subset
module while_loop(input a, output reg y);
  always @* begin
    while (a) y = 1'b0;
    y = a;
  end
endmodule
