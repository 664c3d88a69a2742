// A function without side effects, inlined where it is called: y = ~a.
module function_m(input a, output y);
  function f; input x; f = ~x; endfunction
  assign y = f(a);
endmodule
