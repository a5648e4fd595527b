package vfile_test

// Checks from IEEE 1364-2005 §7 (switch-level modeling): the terminal order
// of each switch primitive and the strength reduction of resistive devices
// (§7.12), every row. Section numbers and table values are from memory of
// the standard.

import (
	"fmt"
	"railyard/switchsim/internal/simtest"
	"strings"
	"testing"

	sw "railyard/switchsim"
	"railyard/switchsim/vfile"
)

// Terminal orders, IEEE 1364-2005 §7: nmos/pmos (out, data, control),
// cmos (out, data, ncontrol, pcontrol), tran (inout1, inout2),
// tranif0/tranif1 (inout1, inout2, control), pullup/pulldown (out).
func TestTerminalOrders(t *testing.T) {
	d := read(t, `module m (input c, input nc, input pc, input d, output o1, output o2, output o3, output o4, output o5, output o6, output o7, output o8);
  nmos     n1 (o1, d, c);      // §7.3
  pmos     p1 (o2, d, c);      // §7.3
  cmos     c1 (o3, d, nc, pc); // §7.5
  tran     t1 (o4, d);         // §7.6
  tranif1  t2 (o5, d, c);      // §7.6
  tranif0  t3 (o6, d, c);      // §7.6
  pullup   u1 (o7);            // §7.7
  pulldown u2 (o8);            // §7.7
  rnmos    r1 (o1, d, c);      // §7.4
  rtranif1 r2 (o5, d, c);      // §7.6
endmodule
`, vfile.Options{})
	nl := d.Netlist
	name := func(n int) string {
		if n < 0 {
			return "-"
		}
		return nl.NodeName(n)
	}
	for _, c := range []struct {
		dev, kind, gate, ends string
		resistive             bool
	}{
		{"n1", "nmos", "c", "d o1", false},
		{"p1", "pmos", "c", "d o2", false},
		{"c1.n", "nmos", "nc", "d o3", false},
		{"c1.p", "pmos", "pc", "d o3", false},
		{"t1", "tran", "-", "o4 d", false},
		{"t2", "nmos", "c", "o5 d", false},
		{"t3", "pmos", "c", "o6 d", false},
		{"u1", "pullup", "-", "vdd o7", false},
		{"u2", "pulldown", "-", "gnd o8", false},
		{"r1", "nmos", "c", "d o1", true},
		{"r2", "nmos", "c", "o5 d", true},
	} {
		dv := device(t, nl, c.dev)
		if got := dv.Kind.String(); got != c.kind || name(dv.Gate) != c.gate || name(dv.A)+" "+name(dv.B) != c.ends || dv.Resistive != c.resistive {
			t.Errorf("%s: %s gate %s channel %s %s resistive %v; want %s gate %s channel %s resistive %v",
				c.dev, dv.Kind, name(dv.Gate), name(dv.A), name(dv.B), dv.Resistive, c.kind, c.gate, c.ends, c.resistive)
		}
	}
}

// The strength reduction of resistive devices, IEEE 1364-2005 §7.12, every
// row, through modules: a source of the row's strength drives net a, an
// rtran joins a to b, and b is a small trireg written 0 through its own
// switch, which then opens.
func TestStrengthReductionRows(t *testing.T) {
	const head = "module row (input ina, input ena, input inb, input enb);\n  supply1 vdd;\n  trireg (small) b;\n  nmos wb (b, inb, enb);\n"
	rows := []struct {
		row, body string
		charge    bool // a is a trireg written then released
		want      sw.Strength
		wantX     bool // a's 1 reduced to small meets b's own small 0: X
	}{
		{"supply drive -> pull drive", "  rtran l (vdd, b);\n  nmos ua (a, ina, ena);\n", false, sw.Pull, false},                         // §7.12
		{"strong drive -> pull drive", "  nmos na (a, vdd, ena);\n  rtran l (a, b);\n  nmos ua (x, ina, ena);\n", false, sw.Pull, false}, // §7.12
		{"pull drive -> weak drive", "  pullup (pull1) pa (a);\n  rtran l (a, b);\n  nmos ua (x, ina, ena);\n", false, sw.Weak, false},   // §7.12
		{"weak drive -> medium capacitor", "  pullup (weak1) pa (a);\n  rtran l (a, b);\n  nmos ua (x, ina, ena);\n", false, sw.Medium, false},
		{"large capacitor -> medium capacitor", "  trireg (large) a;\n  nmos wa (a, ina, ena);\n  rtran l (a, b);\n", true, sw.Medium, false},
		{"medium capacitor -> small capacitor", "  trireg (medium) a;\n  nmos wa (a, ina, ena);\n  rtran l (a, b);\n", true, sw.Small, true},
		{"small capacitor -> small capacitor", "  trireg (small) a;\n  nmos wa (a, ina, ena);\n  rtran l (a, b);\n", true, sw.Small, true},
	}
	for _, r := range rows {
		text := head + r.body + "endmodule\n"
		d, err := vfile.Read("row.v", []byte(text), vfile.Options{})
		if err != nil {
			t.Fatalf("%s: %v\n%s", r.row, err, text)
		}
		s := simtest.New(t, d.Netlist, sw.Ideal)
		s.S.SetRaces(sw.RacesOff)          // both writes released at once: a race to race analysis, see switchsim/resistive_test.go
		s.Apply("ina=1 ena=1 inb=0 enb=1") // write a=1 (charge rows) and b=0, both strongly
		if r.charge {
			s.Apply("ena=0 enb=0")
		} else {
			s.Apply("enb=0")
		}
		got := s.Node("b")
		switch {
		case r.wantX && (got.Value != sw.VX || got.Strength != r.want):
			t.Errorf("%s: b = %s %s, want X at %s", r.row, got.Value, got.Strength, r.want)
		case !r.wantX && (got.Value != sw.V1 || got.Strength != r.want):
			t.Errorf("%s: b = %s %s, want 1 at %s", r.row, got.Value, got.Strength, r.want)
		}
	}
	// The last row, high impedance -> high impedance, has no node to show
	// it on (every railyard node stores charge); the table itself is
	// checked in switchsim (ResistiveReduction).
	if got := sw.ResistiveReduction(sw.HighZ); got != sw.HighZ {
		t.Errorf("high impedance -> %s, want high impedance (IEEE 1364-2005 §7.12)", got)
	}
}

// Non-resistive switches: supply becomes strong, the rest pass unchanged
// (IEEE 1364-2005 §7.12).
func TestNonResistiveReduction(t *testing.T) {
	d := read(t, `module m (input a, output y, output z);
  tran t (a, y);
  pullup (weak1) p (z);
  tran t2 (z, w);
  trireg (small) w;
endmodule
`, vfile.Options{})
	s := simtest.New(t, d.Netlist, sw.Ideal)
	s.Apply("a=1")
	if got := s.Node("y"); got.Strength != sw.Strong {
		t.Errorf("y = %s: supply through a tran is strong", got.Strength)
	}
	if got := s.Node("w"); got.Strength != sw.Weak {
		t.Errorf("w = %s: weak through a tran stays weak", got.Strength)
	}
}

// An IEEE 1364 switch-level transmission-gate latch and a selector,
// checked against their truth tables and hold behaviour in both modes
// (common practice).
const latchModule = `// Pipeline latch bit: transparent while clk=1, holding while clk=0.
module inv (input a, output y);
  supply1 vdd; supply0 gnd;
  pmos (y, vdd, a);
  nmos (y, gnd, a);
endmodule

module tlatch (d, clk, q);
  input d, clk;
  output q;
  wire clkb, s, qb;
  inv i0 (.a(clk), .y(clkb));
  cmos pass (s, d, clk, clkb);   /* on while clk=1 */
  inv i1 (s, qb);
  inv i2 (qb, q);
  cmos fb (s, q, clkb, clk);     // on while clk=0
endmodule
`

func TestLatchModule(t *testing.T) {
	d := read(t, latchModule, vfile.Options{})
	for _, mode := range modes {
		s := simtest.New(t, d.Netlist, mode)
		for i, st := range []struct {
			apply string
			q     sw.State
		}{
			{"clk=1 d=0", sw.State0}, {"clk=1 d=1", sw.State1}, {"clk=0 d=1", sw.State1}, {"clk=0 d=0", sw.State1},
			{"clk=1 d=0", sw.State0}, {"clk=0 d=0", sw.State0}, {"clk=0 d=1", sw.State0},
		} {
			s.Apply(st.apply)
			if got := s.Node("q").State; got != st.q {
				t.Errorf("%s step %d (%s): q %s, want %s", mode, i+1, st.apply, got, st.q)
			}
		}
	}
}

const selectorModule = `module sel4 (input [1:0] s, input [3:0] d, output y);
  supply1 vdd;
  supply0 gnd;
  wire [1:0] sb;
  wire lo, hi;
  pmos (sb[0], vdd, s[0]); nmos (sb[0], gnd, s[0]);
  pmos (sb[1], vdd, s[1]); nmos (sb[1], gnd, s[1]);
  cmos (lo, d[0], sb[0], s[0]), (lo, d[1], s[0], sb[0]);
  cmos (hi, d[2], sb[0], s[0]), (hi, d[3], s[0], sb[0]);
  cmos #(1, 2) (y, lo, sb[1], s[1]);
  cmos #3 (y, hi, s[1], sb[1]);
endmodule
`

func TestSelectorModule(t *testing.T) {
	d := read(t, selectorModule, vfile.Options{})
	if n := notes(d); strings.Count(n, "delays are read and ignored") != 1 {
		t.Errorf("the delay note should come once:\n%s", n)
	}
	for _, mode := range modes {
		s := simtest.New(t, d.Netlist, mode)
		for sel := 0; sel < 4; sel++ {
			for data := 0; data < 16; data += 5 {
				s.Apply(fmt.Sprintf("s[1]=%d s[0]=%d d[3]=%d d[2]=%d d[1]=%d d[0]=%d", sel>>1, sel&1, data>>3&1, data>>2&1, data>>1&1, data&1))
				want := sw.State0 + sw.State(data>>sel&1) // a 4:1 selector through transmission gates passes full levels
				if got := s.Node("y").State; got != want {
					t.Errorf("%s s=%d d=%04b: y %s, want %s", mode, sel, data, got, want)
				}
			}
		}
	}
}
