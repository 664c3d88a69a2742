// expect: 4:3: expected ';', found 'assign'
module missing_semicolon(input a, output y, z);
  assign y = a
  assign z = ~a;
endmodule
