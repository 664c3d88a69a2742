// A 'case' in a level-sensitive block with a default: plain logic (y = a when s is 0, else b).
module case_statement(input [1:0] s, input a, b, output reg y);
  always @* begin
    case (s)
      2'b00: y = a;
      default: y = b;
    endcase
  end
endmodule
