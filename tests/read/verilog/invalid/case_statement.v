// expect: 4:5: a 'case' statement is outside the structural subset
module case_statement(input [1:0] s, input a, b, output reg y);
  always @* begin
    case (s)
      2'b00: y = a;
      default: y = b;
    endcase
  end
endmodule
