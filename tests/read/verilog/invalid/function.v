// expect: 3:3: a function ('function') is outside the structural subset
module function_m(input a, output y);
  function f; input x; f = ~x; endfunction
  assign y = a;
endmodule
