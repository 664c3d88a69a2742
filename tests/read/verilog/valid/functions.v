// Functions without side effects: a population count with a 'for' loop and an integer
// of its own, a 'case' that picks a rearrangement, a majority called from an always
// block, and a constant function that sizes a parameter.
module functions(input [7:0] a, input [1:0] sel, output [3:0] ones, output [7:0] y,
                 output reg m, output [3:0] wide);
  function integer log2up(input integer n);
    integer k;
    begin
      log2up = 0;
      for (k = n - 1; k > 0; k = k >> 1)
        log2up = log2up + 1;
    end
  endfunction
  localparam W = log2up(9);  // 4 bits count up to 9
  function [3:0] popcount(input [7:0] v);
    integer k;
    begin
      popcount = 4'd0;
      for (k = 0; k < 8; k = k + 1)
        popcount = popcount + v[k];
    end
  endfunction
  function [7:0] pick(input [7:0] v, input [1:0] how);
    case (how)
      2'd0: pick = v;
      2'd1: pick = {v[3:0], v[7:4]};
      2'd2: pick = ~v;
      default: pick = {v[0], v[7:1]};
    endcase
  endfunction
  function maj(input x, input y, input z);
    maj = (x & y) | (x & z) | (y & z);
  endfunction
  assign ones = popcount(a);
  assign y = pick(a, sel);
  always @* m = maj(a[0], a[1], a[2]);
  assign wide = a[W-1:0];
endmodule
