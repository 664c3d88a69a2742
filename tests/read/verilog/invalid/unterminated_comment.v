// expect: 4:17: unterminated /* comment
module unterminated_comment(input a, output y);
  assign y = a;
  assign y = a; /* never closed
endmodule
