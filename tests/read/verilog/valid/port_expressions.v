// Port connections beyond plain names: an expression, a concatenation and a
// constant on inputs; a concatenation and a part-select on outputs; a skipped
// positional port; a module instantiated twice.
module swap2(input [1:0] i, input inv, output [1:0] o, output any);
  assign o = {i[0], i[1]} ^ {2{inv}};
  assign any = |i;
endmodule

module port_expressions(input a, input b, input [3:0] v, output [1:0] y, output [3:0] w, output z);
  wire lo, hi;
  swap2 u1 (.i({a, b}), .inv(1'b0), .o({hi, lo}), .any(z));
  swap2 u2 (.i(v[3:2] & v[1:0]), .inv(a ^ b), .o(w[3:2]), .any());
  swap2 u3 (v[1:0], 1'b1, w[1:0], );
  assign y = {lo, hi};
endmodule
