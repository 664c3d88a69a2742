// expect: 6:5: function 'f' assigns 'seen', which is not its own: a function with side effects is outside the structural subset
module function_side_effect(input a, output y, output reg seen);
  function f;
    input x;
    begin
    seen = x;
    f = ~x;
    end
  endfunction
  assign y = f(a);
endmodule
