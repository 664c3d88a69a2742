// A 4-bit register whose next value a 'case' on a 2-bit opcode picks: hold (an empty
// item), load d, rotate left, invert.  Initial value 0 from the declaration.
module case_clocked(input clk, input [1:0] op, input [3:0] d, output reg [3:0] q = 4'b0000);
  always @(posedge clk)
    case (op)
      2'b00: ;
      2'b01: q <= d;
      2'b10: q <= {q[2:0], q[3]};
      default: q <= ~q;
    endcase
endmodule
