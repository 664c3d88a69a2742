// expect: 5:30: 't' is read in function 'f' before it is assigned on every path
module function_reads_unassigned(input a, b, output y);
  function f(input x, input en);
    reg t;
    begin if (en) t = x; f = t; end
  endfunction
  assign y = f(a, b);
endmodule
