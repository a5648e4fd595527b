package netfile_test

import (
	"bytes"
	"strings"
	"testing"

	"railyard/switchsim/netfile"
)

// `power gnd` on line 2 names the ground's default name: reported at the
// word on line 2, with a column (issue 17 item 15), not at line 1.
func TestRailClashPosition(t *testing.T) {
	list := wantErrors(t, "input a\npower gnd\npullup p a\n", nil, "2:7: power and ground are both named gnd")
	if len(list) != 1 {
		t.Errorf("want one error, got:\n%v", list)
	}
	wantErrors(t, "ground vdd\ninput a\npullup p a\n", nil, "1:8: power and ground are both named vdd")
}

// One run reports every stage's errors (issue 18 item 16): a syntax error,
// a name clash found only once cells are expanded, and an output nothing
// connects to, together.
func TestEveryStageInOneRun(t *testing.T) {
	src := "input a\nnmoss n a x gnd\nnmos u.n a y gnd\nuse inv u a z\noutput w\n"
	list := wantErrors(t, src, nil,
		`2:1: unknown statement "nmoss": did you mean nmos?`,
		`4:1: duplicate device name "u.n"`,
		`5:8: output "w" is not connected to any device`)
	if len(list) != 3 {
		t.Errorf("want 3 errors, got:\n%v", list)
	}
}

// What a statement left out for an error leaves unconnected is not
// reported as well: y lost its only device to the first error.
func TestNoFollowOnErrors(t *testing.T) {
	list := wantErrors(t, "input a\noutput y\nnmos n a y\n", nil, "3:1: wrong number of terminals")
	if len(list) != 1 {
		t.Errorf("want only the device's error, got:\n%v", list)
	}
	// Inside a cell: the cell lost a statement, so its instances' nodes are
	// not judged; the rest of the design still is.
	src := "cell c A\n  node m cap=1f\n  nmos n A m gnd strength=hard\nend\ninput a\noutput q\nuse c u a\n"
	list = wantErrors(t, src, nil, `3:27: unknown strength "hard"`, `6:8: output "q" is not connected`)
	if len(list) != 2 {
		t.Errorf("want 2 errors, got:\n%v", list)
	}
	// The same cell without the error: its node is judged, at the use.
	wantErrors(t, "cell c A\n  node m cap=1f\n  nmos n A x gnd\nend\ninput a\nuse c u a\n", nil,
		`6:1: node "u.m" is not connected to any device`)
}

// An output nothing connects to is reported once (issue 18 item 16).
func TestUnconnectedOutputOnce(t *testing.T) {
	list := wantErrors(t, "input a\noutput a y\nnmos n a x gnd\nnode y cap=1f\n", nil, `2:10: output "y" is not connected to any device`)
	if n := strings.Count(list.Error(), `"y" is not connected`); n != 1 {
		t.Errorf("reported %d times:\n%v", n, list)
	}
}

// Mistyped names get the nearest one by edit distance (issue 18 item 16),
// and names far from any keep the list of what is allowed.
func TestDidYouMean(t *testing.T) {
	for _, c := range []struct{ src, want string }{
		{"input a\nuse invv u a y\n", `2:5: undeclared cell "invv": did you mean inv?`},
		{"cell latchbit D Q\n  nmos n D Q gnd\nend\ninput a\nuse latchbt u a y\n", `5:5: undeclared cell "latchbt": did you mean latchbit?`},
		{"input a\npulldwn p a\n", `2:1: unknown statement "pulldwn": did you mean pulldown?`},
		{"input a\nnmos n a y gnd strenght=weak\n", `2:16: unknown option "strenght" for nmos: did you mean strength? (want w, l, strength)`},
		{"input a\nnmos n a y gnd strength=strng\n", `2:25: unknown strength "strng": did you mean strong? (want`},
		{"tech generic vddd=1.2\ninput a\npullup p a\n", `1:14: unknown technology key "vddd": did you mean vdd? (want one of`},
		{"cell c A\n  pullp p A\nend\n", `2:3: unknown statement "pullp": did you mean pullup?`},
	} {
		wantErrors(t, c.src, nil, c.want)
	}
	list := wantErrors(t, "input a\nuse zzzz u a y\n", nil, `2:5: undeclared cell "zzzz" (built in: inv, nand2, nor2, tinv)`)
	if strings.Contains(list.Error(), "did you mean") {
		t.Errorf("a suggestion for a name far from every cell: %v", list)
	}
}

// Sizes and capacitances outside a cell's plausible range are noted, with
// the prefix the writer probably meant (issue 18 item 15); the design
// still reads. The ranges are common practice, README "Plausible values".
func TestPlausibleValues(t *testing.T) {
	d := mustRead(t, "tech generic wn=0.5\ninput a\nnmos n a y gnd w=0.5\npmos p a y vdd l=2m\nnode y cap=5\ntgate t a a y gnd wn=500 wp=0.72u\n")
	want := []string{
		"t.sw:1:17: wn=0.5 is 0.5 m, outside the plausible range of a transistor's width or length in a cell (10 nm to 1 mm): did you mean wn=0.5u (500 nm)?",
		"t.sw:3:18: w=0.5 is 0.5 m, outside the plausible range of a transistor's width or length in a cell (10 nm to 1 mm): did you mean w=0.5u (500 nm)?",
		"t.sw:4:18: l=2m is 2 mm, outside the plausible range of a transistor's width or length in a cell (10 nm to 1 mm): did you mean l=2u (2 um)?",
		"t.sw:5:12: cap=5 is 5 F, outside the plausible range of a node capacitance in a cell (1 aF to 100 pF): did you mean cap=5f (5 fF)?",
		"t.sw:6:22: wn=500 is 500 m, outside the plausible range of a transistor's width or length in a cell (10 nm to 1 mm): did you mean wn=500n (500 nm)?",
	}
	var got []string
	for _, n := range d.Notes {
		got = append(got, n.Error())
	}
	if strings.Join(got, "\n") != strings.Join(want, "\n") {
		t.Errorf("notes:\n%s\nwant:\n%s", strings.Join(got, "\n"), strings.Join(want, "\n"))
	}
	// Silent on plausible values, the demos and the built-in cells.
	if d := mustRead(t, "tech generic wn=0.36u cnode=2f\ninput a\nnmos n a y gnd w=20n l=0.18u\nnode y cap=0.5f\ntgate t a a y gnd wn=1m\n"); len(d.Notes) != 0 {
		t.Errorf("notes on plausible values: %v", d.Notes)
	}
	for _, name := range demoNames() {
		if d, err := readDemo(name); err != nil || len(d.Notes) != 0 {
			t.Errorf("demo %s: %v %v", name, err, d.Notes)
		}
	}
	// Many implausible values: the first 20 and a count.
	var b strings.Builder
	b.WriteString("input a\n")
	for i := 0; i < 30; i++ {
		b.WriteString("nmos n" + strings.Repeat("x", i) + " a y gnd w=3\n")
	}
	d = mustRead(t, b.String())
	if len(d.Notes) != 21 || !strings.Contains(d.Notes[20].Msg, "and 10 more values outside the plausible ranges") {
		t.Errorf("%d notes, last %v", len(d.Notes), d.Notes[len(d.Notes)-1])
	}
}

// The variant for netlists from elsewhere: sizes that look scaled are said
// once for the design, since only W/L enters the estimates.
func TestScaledSizesOnce(t *testing.T) {
	s := netfile.SizeNotes{Scaled: true}
	for i, w := range []string{"640000u", "320000u", "180000u"} {
		v, _ := netfile.ParseNumber(w)
		s.Size(pos(i+3), "w", w, v)
	}
	s.Size(pos(9), "l", "0.18u", 0.18e-6)
	notes := s.Notes()
	if len(notes) != 1 {
		t.Fatalf("want one note, got %v", notes)
	}
	want := "x.sp:3:1: sizes look scaled: w=640000u is 0.64 m, and 3 of 4 sizes lie outside 10 nm to 1 mm; they are used as written, and only their ratios W/L matter"
	if !strings.HasPrefix(notes[0].Error(), want) {
		t.Errorf("got  %s\nwant %s", notes[0], want)
	}
	quiet := netfile.SizeNotes{Scaled: true}
	quiet.Size(pos(1), "w", "1u", 1e-6)
	if n := quiet.Notes(); len(n) != 0 {
		t.Errorf("plausible sizes noted: %v", n)
	}
}

// corner NAME KEY=VALUE: the design's tech with the keys replaced, in the
// order written, written back by the canonical writer.
func TestCorners(t *testing.T) {
	src := "tech generic vdd=1.8 vtn=0.45\ncorner slow vdd=1.62 vtn=0.5 kn=150u\ncorner fast vdd=1.98 vtn=0.4\ninput a\npullup p a\n"
	d := mustRead(t, src)
	if len(d.Corners) != 2 || d.Corners[0].Name != "slow" || d.Corners[1].Name != "fast" {
		t.Fatalf("corners %+v", d.Corners)
	}
	slow := d.Corners[0]
	if slow.Tech.Vdd != 1.62 || slow.Tech.Vtn != 0.5 || slow.Tech.Kn != 150e-6 || slow.Tech.Vtp != d.Netlist.Tech.Vtp {
		t.Errorf("slow %+v", slow.Tech)
	}
	if slow.Pos.Line != 2 || slow.Pos.Col != 1 || d.Netlist.Tech.Vdd != 1.8 {
		t.Errorf("slow at %v; nominal vdd %g", slow.Pos, d.Netlist.Tech.Vdd)
	}
	var buf bytes.Buffer
	if err := netfile.Write(&buf, d); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(buf.String(), "corner slow kn=150u vdd=1.62 vtn=500m\n") {
		t.Errorf("written:\n%s", buf.String())
	}
	d2 := mustRead(t, buf.String())
	if len(d2.Corners) != 2 || d2.Corners[0].Tech != slow.Tech || d2.Corners[1].Tech != d.Corners[1].Tech {
		t.Errorf("read(write(d)) corners %+v", d2.Corners)
	}

	var many strings.Builder
	for i := 0; i < 17; i++ {
		many.WriteString("corner k" + strings.Repeat("x", i) + " vdd=1.7\n")
	}
	many.WriteString("input a\npullup p a\n")
	for _, c := range []struct{ src, want string }{
		{"corner slow vdd=1.6\ncorner slow vdd=1.7\ninput a\npullup p a\n", "2:8: corner slow given twice (first at 1:1)"},
		{many.String(), "17:1: more than the limit of 16 corners"},
		{"corner slow vt=0.5\ninput a\npullup p a\n", `1:13: unknown technology key "vt"`},
		{"corner slow vdd=fast\ninput a\npullup p a\n", `1:17: bad number "fast" for vdd`},
		{"corner slow vdd=0.3\ninput a\npullup p a\n", "1:1: corner slow: technology: thresholds must lie between 0 and vdd"},
		{"corner slow\ninput a\npullup p a\n", "1:1: corner slow changes nothing"},
		{"corner vdd=1.6\ninput a\npullup p a\n", "1:1: wrong number of terminals: corner takes NAME KEY=VALUE"},
		{"corner slow vdd=1.6 vdd=1.7\ninput a\npullup p a\n", "1:21: technology key vdd given twice"},
		{"cell c A\n  corner slow vdd=1.6\nend\n", "2:3: corner is not allowed inside a cell"},
		{"corner slow \"x\" vdd=1.6\ninput a\npullup p a\n", "1:13: unexpected string"},
	} {
		wantErrors(t, c.src, nil, c.want)
	}
}

// alias NAME "ORIGINAL" records the spelling a netlist gave a node or
// device of the expanded design; people are shown it, lookups take either.
func TestAliases(t *testing.T) {
	src := "input a\nuse inv u a y\nalias u.n \"MN<0>\"\nalias y \"net<3>\"\noutput y\n"
	d := mustRead(t, src)
	nl := d.Netlist
	y, _ := nl.Lookup("y")
	if nl.DisplayName(y) != "net<3>" {
		t.Errorf("y shows as %q", nl.DisplayName(y))
	}
	if n, ok := nl.Lookup("net<3>"); !ok || n != y {
		t.Errorf("lookup by the original: %d %v", n, ok)
	}
	dv, ok := nl.LookupDevice("MN<0>")
	if !ok || nl.Device(dv).Name != "u.n" || nl.DeviceDisplayName(dv) != "MN<0>" {
		t.Errorf("device alias: %v", ok)
	}
	var buf bytes.Buffer
	netfile.Write(&buf, d)
	if !strings.Contains(buf.String(), "alias u.n \"MN<0>\"\n") {
		t.Errorf("written:\n%s", buf.String())
	}
	d2 := mustRead(t, buf.String())
	if y2, _ := d2.Netlist.Lookup("y"); d2.Netlist.DisplayName(y2) != "net<3>" {
		t.Error("read(write(d)) lost the alias")
	}
	for _, c := range []struct{ src, want string }{
		{"input a\npullup p a\nalias q \"Q\"\n", "3:7: alias names q, which is no node or device of the design"},
		{"input a\npullup p a\nalias a \"A\"\nalias a \"B\"\n", "4:7: alias for a given twice (first at 3:7)"},
		{"input a\npullup p a\nalias a \"X\"\nalias p \"X\"\n", `4:9: original spelling "X" given to both a and p`},
		{"input a b\npullup p a\npullup q b\nalias a \"b\"\n", `4:7: the original spelling "b" of a is the name of another node or device`},
		{"input a\npullup p a\nalias a \"\"\n", "3:9: the original spelling of a is empty"},
		{"input a\npullup p a\nalias a\n", "3:1: alias takes one quoted ORIGINAL"},
		{"input a\npullup p a\nalias a \"x\" \"y\"\n", "3:1: alias takes one quoted ORIGINAL spelling after the name, found 2 strings"},
		{"cell c A\n  alias A \"x\"\nend\n", "2:3: alias is not allowed inside a cell"},
		{"input a\npullup p a\nalias a \"A\" x=1\n", `3:13: unknown option "x": alias takes no options`},
	} {
		wantErrors(t, c.src, nil, c.want)
	}
}
