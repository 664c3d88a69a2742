// expect: 5:30: port 'i' of type 'integer' is outside the structural subset
// An integer output port, though also a 'for' loop's variable, is not a loop constant: the
// port is part of the design (legal Verilog, IEEE 1364-2005 12.3.3 from memory; iverilog and
// pyslang accept it), and netfit reads vectors only.
module integer_port(input a, output integer i, output y);
  assign y = a;
  always @* for (i = 0; i < 1; i = i + 1) ;
endmodule
