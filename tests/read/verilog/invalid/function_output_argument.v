// expect: 3:30: a function argument that is not an input ('z') is outside the structural subset
module function_output_argument(input a, output y);
  function f(input x, output z);
    begin z = x; f = ~x; end
  endfunction
  assign y = a;
endmodule
