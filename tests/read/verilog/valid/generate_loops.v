// Generate constructs with constant bounds: a loop of full-adder instances (a ripple-carry
// adder), a conditional block chosen by a parameter, and a case on a parameter.
module fa(input a, b, ci, output s, co);
  assign s = a ^ b ^ ci;
  assign co = (a & b) | (ci & (a ^ b));
endmodule

module generate_loops #(parameter N = 4, parameter MODE = 1) (input [N-1:0] a, b, input ci,
                                                             output [N-1:0] s, output co,
                                                             output [N-1:0] x, output w);
  wire [N:0] c;
  assign c[0] = ci;
  genvar i;
  generate
    for (i = 0; i < N; i = i + 1) begin : stage
      fa u (.a(a[i]), .b(b[i]), .ci(c[i]), .s(s[i]), .co(c[i + 1]));
    end
  endgenerate
  assign co = c[N];
  if (MODE == 0) begin : invert
    assign x = ~a;
  end else begin : mix
    assign x = a ^ b;
  end
  case (N)
    2: begin : two
      assign w = &a;
    end
    default: begin : wide
      assign w = |a;
    end
  endcase
endmodule
