`timescale 1ns / 1ps
// Directives: macros, conditionals, attributes and comments.
`define WIDTH 4
`define AND_ALL &
`ifdef NOT_DEFINED
  this text is never read
`elsif WIDTH
`define PICKED
`else
  nor this
`endif
`ifndef PICKED
  nor this either
`endif
/* a block comment
   over lines */
(* keep = "true" *)
module directives(input [`WIDTH-1:0] a, output y, output z);
  (* src = "here" *) assign y = `AND_ALL a;   // reduction AND
`ifdef PICKED
  assign z = |a;
`else
  assign z = ^a;
`endif
endmodule
