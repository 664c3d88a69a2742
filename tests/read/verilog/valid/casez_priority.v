// A priority encoder written with casez ('?' digits match anything): the lowest request
// wins; 'any' is 0 when there is none.  A second block decodes with casex.
module casez_priority(input [3:0] req, input [2:0] code, output reg [1:0] grant, output reg any,
                      output reg hit);
  always @* begin
    any = 1'b1;
    casez (req)
      4'b???1: grant = 2'd0;
      4'b??10: grant = 2'd1;
      4'b?100: grant = 2'd2;
      4'b1000: grant = 2'd3;
      default: begin grant = 2'd0; any = 1'b0; end
    endcase
  end
  always @* begin
    casex (code)
      3'b1x0, 3'bx11: hit = 1'b1;
      default: hit = 1'b0;
    endcase
  end
endmodule
