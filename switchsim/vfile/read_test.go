package vfile_test

import (
	"strings"
	"testing"

	sw "railyard/switchsim"
	"railyard/switchsim/vfile"
)

// List-style and ANSI ports, named and ordered connections, vectors,
// escaped identifiers, comments, trireg charge strengths, supply nets as
// the rails, and several instances in one statement.
func TestModuleFeatures(t *testing.T) {
	d := read(t, `/* a register bit
   with a comment block */
module cell (a, y);
  input a; output y;
  supply1 VDD; supply0 VSS;
  pmos (y, VDD, a); nmos (y, VSS, a);
endmodule

module top (input [1:0] din, input \en# , output [1:0] q, inout bus);
  trireg (large) [1:0] st;
  tri mid;
  cell c0 (.a(din[0]), .y(st[0])), c1 (din[1], st[1]);   // two instances
  tranif1 g0 (st[0], q[0], \en# ), g1 (st[1], q[1], \en# );
  cell c2 (.y(bus), .a());                                // a port left open
  rtran r (bus, mid);
  pullup (strong1) keep (mid);
endmodule
`, vfile.Options{Top: "top"})
	nl := d.Netlist
	names := func(ns []int) string {
		var s []string
		for _, n := range ns {
			s = append(s, nl.NodeName(n))
		}
		return strings.Join(s, " ")
	}
	if got := names(nl.Inputs()); got != "din[1] din[0] enX23" {
		t.Errorf("inputs %q, want din[1] din[0] enX23 (msb first)", got)
	}
	if got := names(nl.Outputs()); got != "q[1] q[0] bus" {
		t.Errorf("outputs %q, want q[1] q[0] bus (inout is an output unless --inputs names it)", got)
	}
	n, _ := nl.Lookup("st[1]")
	if nl.NodeCharge(n) != sw.Large {
		t.Errorf("st[1] charge %s, want large (trireg (large))", nl.NodeCharge(n))
	}
	if nl.NodeName(nl.Power()) != "VDD" || nl.NodeName(nl.Ground()) != "VSS" {
		t.Errorf("rails %s %s, want the supply nets VDD and VSS", nl.NodeName(nl.Power()), nl.NodeName(nl.Ground()))
	}
	en, _ := nl.Lookup("en#")
	if nl.DisplayName(en) != "en#" {
		t.Errorf("the escaped identifier is shown as %q", nl.DisplayName(en))
	}
	if dv := device(t, nl, "c1.pmos_6_3"); nl.NodeName(dv.Gate) != "din[1]" || nl.NodeName(dv.B) != "st[1]" {
		t.Errorf("c1's pMOS: gate %s out %s", nl.NodeName(dv.Gate), nl.NodeName(dv.B))
	}
	if dv := device(t, nl, "c2.nmos_6_21"); nl.NodeName(dv.Gate) != "c2.a" {
		t.Errorf("the open port a of c2 is %s, want the inner node c2.a", nl.NodeName(dv.Gate))
	}
	if dv := device(t, nl, "keep"); dv.Strength != sw.Strong || dv.Kind != sw.PullUp {
		t.Errorf("keep = %+v", dv)
	}
	d = read(t, strings.Replace(`module m (input a, inout b); tran t (a, b); endmodule`, "", "", 1), vfile.Options{Inputs: []string{"b"}})
	if len(d.Netlist.Inputs()) != 2 {
		t.Errorf("--inputs b: inputs %v, want a and b", d.Netlist.Inputs())
	}
	// An escaped identifier is named in either spelling: as the module
	// spells it, or by its railyard name (what a steps file can hold).
	for _, given := range []string{"b#", "bX23"} {
		d = read(t, "module m (input a, inout \\b# ); tran t (a, \\b# ); endmodule", vfile.Options{Inputs: []string{given}})
		if len(d.Netlist.Inputs()) != 2 {
			t.Errorf("--inputs %s: inputs %v, want a and b#", given, d.Netlist.Inputs())
		}
	}
}

// Outside the switch-level subset: errors with positions that say what is read.
func TestOutsideSubset(t *testing.T) {
	for _, c := range []struct{ src, want string }{
		{"module m (input a, output y);\n  assign y = a;\nendmodule\n", "t.v:2:3: assign (continuous assignment) is outside the switch-level subset; railyard reads modules with ports"},
		{"module m (input a, output y);\n  always @(a) y = a;\nendmodule\n", "t.v:2:3: always (behavioural code) is outside"},
		{"module m (input a, output y);\n  not (y, a);\nendmodule\n", "t.v:2:3: gate primitive not is outside the switch-level subset"},
		{"module m (input a, output y);\n  and g (y, a, a);\nendmodule\n", "t.v:2:3: gate primitive and"},
		{"primitive u (o, a);\n output o; input a;\n table 0 : 1; endtable\nendprimitive\n", "t.v:1:1: a user-defined primitive (UDP) is outside"},
		{"module m (input a, output reg y);\nendmodule\n", "t.v:1:27: a reg is outside"},
		{"module m (input a, output y);\n  nmos (y, a);\nendmodule\n", "t.v:2:3: wrong number of terminals: nmos takes 3 (out, data, control) (IEEE 1364-2005 §7), found 2"},
		{"module m (input a, output y);\n  cmos c (y, a, a);\nendmodule\n", "cmos takes 4 (out, data, ncontrol, pcontrol)"},
		{"module m (input a, output y);\n  nmos (strong0, weak1) (y, a, a);\nendmodule\n", "t.v:2:8: nmos takes no drive strength"},
		{"module m (input a, output y);\n  sub u (a, y);\nendmodule\n", "t.v:2:3: instance u of unknown module sub"},
		{"module m (input a);\n  m u (a);\nendmodule\n", "t.v:2:3: module m instantiates itself: m -> m"},
		{"module m (input [3:0] a, output y);\n  nmos (y, a, a[0]);\nendmodule\n", "t.v:2:12: a terminal of nmos is one bit, and a is 4 bits wide"},
		{"module m (input [3:0] a, output y);\n  nmos (y, a[4], a[0]);\nendmodule\n", "bit 4 of a is outside its range [3:0]"},
		{"module m (input [w:0] a);\nendmodule\n", "t.v:1:18: expected an integer constant"},
		{"module m (a, y);\n  input a;\nendmodule\n", "port y of module m has no direction"},
		{"module m (input a, output y);\n  nmos (y, a, a);\n", "t.v:1:1: module m has no endmodule"},
		{"`define W 4\nmodule m (input a); endmodule\n", "t.v:1:1: compiler directive `define is not supported"},
		{"module m (input a, output y);\n  /* open comment\n", "t.v:2:3: comment /* is not closed"},
		{"module m (input a, output y);\n  wire w = a;\nendmodule\n", "t.v:2:10: a net declaration with an assignment is outside"},
		{"\x00module", "t.v:1:1: not a text file: NUL byte"},
		{"module a (input x); b u (x); endmodule\nmodule b (input x); a u (x); endmodule\n", "module a instantiates itself: a -> b -> a"},
		{"module a (input x); endmodule\nmodule b (input x); endmodule\n", "give --top with one of a, b"},
		{"module m (input a, output y);\n  nmos (y, {a, a}, a);\nendmodule\n", "t.v:2:12: concatenations are not supported"},
	} {
		msg := readErr(t, c.src)
		if !strings.Contains(msg, c.want) {
			t.Errorf("%q:\n%s\nwant %q", c.src, msg, c.want)
		}
	}
	// All errors, sorted.
	msg := readErr(t, "module m (input a, output y);\n  assign y = a;\n  not (y, a);\n  nmos (y);\nendmodule\n")
	if lines := strings.Split(msg, "\n"); len(lines) != 3 {
		t.Errorf("want 3 errors:\n%s", msg)
	}
}

// `timescale and specify blocks are read and ignored; parameters noted.
func TestIgnored(t *testing.T) {
	d := read(t, "`timescale 1ns/1ps\n`celldefine\nmodule m (input a, output y);\n  parameter d = 1;\n  specify (a => y) = (1, 2); endspecify\n  nmos #d (y, a, a);\nendmodule\n`endcelldefine\n", vfile.Options{})
	n := notes(d)
	for _, w := range []string{"t.v:4:3: parameter read and ignored", "t.v:5:3: specify block read and ignored", "t.v:6:8: delays are read and ignored"} {
		if !strings.Contains(n, w) {
			t.Errorf("notes lack %q:\n%s", w, n)
		}
	}
}

func TestLimits(t *testing.T) {
	var b strings.Builder
	b.WriteString("module l0 (input a); nmos (a, a, a); endmodule\n")
	for i := 1; i <= 30; i++ {
		b.WriteString("module l" + itoa(i) + " (input a); l" + itoa(i-1) + " u1 (a); l" + itoa(i-1) + " u2 (a); endmodule\n")
	}
	_, err := vfile.Read("t.v", []byte(b.String()), vfile.Options{Top: "l30"})
	if err == nil || !strings.Contains(err.Error(), "more than the limit of 2000000 devices") {
		t.Errorf("2^30 devices: %v", err)
	}
	_, err = vfile.Read("t.v", []byte("module m (input [100000:0] a); endmodule\n"), vfile.Options{})
	if err == nil || !strings.Contains(err.Error(), "wider than the limit of 4096 bits") {
		t.Errorf("wide vector: %v", err)
	}
	_, err = vfile.Read("t.v", []byte(strings.Repeat("x", 100)), vfile.Options{Limits: vfile.Limits{FileSize: 50}})
	if err == nil || !strings.Contains(err.Error(), "t.v:1:51: file is longer than the limit of 50 bytes") {
		t.Errorf("file size: %v", err)
	}
}

func itoa(i int) string {
	if i < 10 {
		return string(rune('0' + i))
	}
	return itoa(i/10) + string(rune('0'+i%10))
}

func TestMessagesPrintable(t *testing.T) {
	msg := readErr(t, "module m (input a, output y);\n  sub \\u\x1b[2J (a, y);\nendmodule\n")
	if strings.ContainsRune(msg, 0x1b) || !strings.Contains(msg, `\x1b[2J`) {
		t.Errorf("error %q: want the escape written out", msg)
	}
}
