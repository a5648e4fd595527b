// immediate-field selector: a two-bit format code picks the field that drives imm
// exhaustive: PASS
//
// Which field of the instruction word drives the immediate operand bit is
// picked by the format code through a tree of transmission gates, then
// buffered.
//
// railyard demo as an IEEE 1364-2005 switch-level module: cmos switches
// (out, data, ncontrol, pcontrol), nmos and pmos (out, data, control),
// supply nets as the rails, a vector of fields, and module instances with
// named and ordered connections. Shows a selector that passes full levels
// both ways (the cmos switches), and the delay written on one switch is
// read and ignored (a note says so).
module inv (input a, output y);
  supply1 vdd;
  supply0 gnd;
  pmos (y, vdd, a);
  nmos (y, gnd, a);
endmodule

module imm_select (fmt, field, imm);
  input [1:0] fmt;      // 0: bits of field 0 ... 3: field 3
  input [3:0] field;
  output imm;
  wire [1:0] fmt_b;
  wire lo, hi, pick;

  inv f0 (.a(fmt[0]), .y(fmt_b[0]));
  inv f1 (fmt[1], fmt_b[1]);

  // first level: fmt[0] picks within each pair
  cmos s0 (lo, field[0], fmt_b[0], fmt[0]), s1 (lo, field[1], fmt[0], fmt_b[0]);
  cmos s2 (hi, field[2], fmt_b[0], fmt[0]), s3 (hi, field[3], fmt[0], fmt_b[0]);
  // second level: fmt[1] picks the pair
  cmos #1 t0 (pick, lo, fmt_b[1], fmt[1]);
  cmos t1 (pick, hi, fmt[1], fmt_b[1]);

  inv b0 (.a(pick), .y(pick_b));
  inv b1 (.a(pick_b), .y(imm));
endmodule
