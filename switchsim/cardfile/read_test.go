package cardfile_test

import (
	"math"
	"railyard/switchsim/internal/simtest"
	"strings"
	"testing"
	"testing/fstest"

	sw "railyard/switchsim"
	"railyard/switchsim/cardfile"
)

func device(t *testing.T, nl *sw.Netlist, name string) sw.Device {
	t.Helper()
	d, ok := nl.LookupDevice(name)
	if !ok {
		var names []string
		for i := 0; i < nl.NumDevices(); i++ {
			names = append(names, nl.Device(i).Name)
		}
		t.Fatalf("no device %s (devices: %s)", name, strings.Join(names, " "))
	}
	return nl.Device(d)
}

func nodeNum(t *testing.T, nl *sw.Netlist, name string) int {
	t.Helper()
	n, ok := nl.Lookup(name)
	if !ok {
		var names []string
		for i := 0; i < nl.NumNodes(); i++ {
			names = append(names, nl.NodeName(i))
		}
		t.Fatalf("no node %s (nodes: %s)", name, strings.Join(names, " "))
	}
	return n
}

func near(a, b float64) bool { return math.Abs(a-b) <= 1e-9*math.Max(math.Abs(a), math.Abs(b)) }

// Comments and continuations (common practice of the card format): * starts
// a comment line, $ and ; a trailing comment, + continues the card above
// (with comment and blank lines between), and words keep the positions of
// their physical lines.
func TestCommentsAndContinuation(t *testing.T) {
	src := `* a comment line
.subckt c a y
  * an indented comment
mn1 y a 0 0 nch ; trailing comment
+ w=1u $ another
* a comment between a card and its continuation

+ l=0.5u
mp1 y a vdd vdd pch w=2u l=0.5u $trailing is a word, not a comment
.ends
`
	_, err := cardfile.Read("t.sp", []byte(src), cardfile.Options{})
	if err == nil || !strings.Contains(err.Error(), "t.sp:9:33:") {
		t.Fatalf("want an error at the $trailing word (9:33), got %v", err)
	}
	d := read(t, strings.Replace(src, "$trailing", "$ trailing", 1), cardfile.Options{})
	dv := device(t, d.Netlist, "mn1")
	if dv.W != 1e-6 || dv.L != 0.5e-6 {
		t.Errorf("mn1 w=%g l=%g: the + lines should give w=1u l=0.5u", dv.W, dv.L)
	}
	// An error on a continuation line is reported where it is written.
	msg := readErr(t, ".subckt c a y\nmn1 y a 0 0 nch\n+ w=1u\n+   l=bad*\n.ends\n", cardfile.Options{})
	if !strings.Contains(msg, "t.sp:4:7:") {
		t.Errorf("error on the continuation line: %s, want position 4:7", msg)
	}
}

// Names and keywords are case-insensitive; the spelling first seen is the
// one people are shown.
func TestCaseInsensitive(t *testing.T) {
	d := read(t, `.SUBCKT Cell A Y
MN1 Y A GND gnd NCH
mp1 y a Vdd VDD pch
.Ends cell
`, cardfile.Options{})
	nl := d.Netlist
	if nl.NumNodes() != 4 {
		t.Errorf("%d nodes, want 4 (a y vdd gnd): Y and y are one node", nl.NumNodes())
	}
	y := nodeNum(t, nl, "y")
	if nl.DisplayName(y) != "Y" || nl.NodeName(y) != "y" {
		t.Errorf("node y: railyard name %q shown as %q; want y shown as Y", nl.NodeName(y), nl.DisplayName(y))
	}
	if _, ok := nl.Lookup("Y"); !ok {
		t.Error("Lookup by the original spelling Y failed")
	}
	if d.Name != "cell" {
		t.Errorf("design name %q, want cell", d.Name)
	}
}

// Hierarchical names as for use in .sw: instance x1's inner node n and
// device m are x1.n and x1.m; the original spelling is kept.
func TestHierarchicalNames(t *testing.T) {
	d := read(t, `.subckt top a y
X1 a m buf
X2 m y buf
.ends
.subckt buf i o
XA i mid inv
XB mid o inv
.ends
.subckt inv i o
MN3 o i gnd gnd nch
MP3 o i vdd vdd pch
.ends
`, cardfile.Options{})
	nl := d.Netlist
	dv := device(t, nl, "x2.xb.mn3")
	if got := nl.DeviceDisplayName(func() int { i, _ := nl.LookupDevice("x2.xb.mn3"); return i }()); got != "X2.XB.MN3" {
		t.Errorf("device shown as %q, want X2.XB.MN3", got)
	}
	if nl.NodeName(dv.A) != "y" || nl.NodeName(dv.Gate) != "x2.mid" || dv.B != nl.Ground() {
		t.Errorf("x2.xb.mn3: drain %s gate %s source %s; want y, x2.mid and gnd", nl.NodeName(dv.A), nl.NodeName(dv.Gate), nl.NodeName(dv.B))
	}
	if nl.NumDevices() != 8 {
		t.Errorf("%d devices, want 8", nl.NumDevices())
	}
}

// Parameters: .param at the top, defaults on the .subckt line, values on the
// X card, .param inside a subcircuit, {expressions} and 'expressions', and
// m= multiplying the width and nf= leaving it (w is the total width over
// the fingers, as BSIM4 reads it; from memory).
func TestParams(t *testing.T) {
	d := read(t, `.param lmin=0.18u wunit='2*lmin'
.subckt top a y
x1 a y inv wn={3*wunit}
x2 a z inv
.ends
.subckt inv a y wn=1u
.param wp={2*wn}
mn y a 0 0 nch w=wn l=lmin
mp y a vdd vdd pch w={wp} l={lmin} m=2 nf=3
.ends
`, cardfile.Options{})
	nl := d.Netlist
	for _, c := range []struct {
		dev  string
		w, l float64
	}{
		{"x1.mn", 3 * 2 * 0.18e-6, 0.18e-6},
		{"x1.mp", 2 * 3 * 2 * 0.18e-6 * 2, 0.18e-6}, // w = 2 wn, times m=2; nf=3 fingers share it
		{"x2.mn", 1e-6, 0.18e-6},
		{"x2.mp", 2e-6 * 2, 0.18e-6},
	} {
		dv := device(t, nl, c.dev)
		if !near(dv.W, c.w) || !near(dv.L, c.l) {
			t.Errorf("%s: w=%g l=%g, want w=%g l=%g", c.dev, dv.W, dv.L, c.w, c.l)
		}
	}
	for _, bad := range []struct{ src, want string }{
		{".param a={b}\n.param b={a}\n.subckt c x\nm1 x x 0 0 nch w=a\n.ends\n", "depends on itself"},
		{".subckt c x\nm1 x x 0 0 nch w={wx}\n.ends\n", "unknown parameter wx"},
		{".subckt c x\nx1 x d wq=1\n.ends\n.subckt d y w=1u\nm1 y y 0 0 nch w=w\n.ends\n", "subcircuit d has no parameter wq"},
		{".subckt c x\nm1 x x 0 0 nch w={1/0}\n.ends\n", "division by zero"},
		{".subckt c x\nm1 x x 0 0 nch w=-1u\n.ends\n", "w must be positive"},
	} {
		if msg := readErr(t, bad.src, cardfile.Options{}); !strings.Contains(msg, bad.want) {
			t.Errorf("%q: %s, want %q", bad.src, msg, bad.want)
		}
	}
}

// .option scale multiplies lengths and widths.
func TestOptionScale(t *testing.T) {
	d := read(t, ".option scale=0.09u\n.subckt c a y\nmn y a 0 0 nch w=4 l=2\n.ends\n", cardfile.Options{})
	dv := device(t, d.Netlist, "mn")
	if !near(dv.W, 0.36e-6) || !near(dv.L, 0.18e-6) {
		t.Errorf("w=%g l=%g, want 0.36u and 0.18u", dv.W, dv.L)
	}
}

// A scaled size is the decimal number written, not the product's binary
// noise (0.42 x 1e-6 in float64 is 4.1999999999999995e-07), so that a
// converted design reads w=420n.
func TestOptionScaleExact(t *testing.T) {
	d := read(t, ".option scale=1e-6\n.subckt c a y\nmn y a 0 0 nch w=0.42 l=0.15\n.ends\n", cardfile.Options{})
	dv := device(t, d.Netlist, "mn")
	if dv.W != 0.42e-6 || dv.L != 0.15e-6 {
		t.Errorf("w=%v l=%v, want exactly 4.2e-07 and 1.5e-07", dv.W, dv.L)
	}
}

// .global names a node that every subcircuit shares; so does a trailing !.
func TestGlobal(t *testing.T) {
	d := read(t, `.global clk
.subckt top a y
x1 a m stage
x2 m y stage
.ends
.subckt stage i o
mn o clk i 0 nch
mp o rst! i vdd pch
.ends
`, cardfile.Options{})
	nl := d.Netlist
	if device(t, nl, "x1.mn").Gate != device(t, nl, "x2.mn").Gate || nl.NodeName(device(t, nl, "x1.mn").Gate) != "clk" {
		t.Error("clk is global: both stages' gates should be the one node clk")
	}
	if nl.NodeName(device(t, nl, "x2.mp").Gate) != "rstX21" {
		t.Errorf("rst! is global: gate %s, want rstX21", nl.NodeName(device(t, nl, "x2.mp").Gate))
	}
}

// C cards: to a rail they add to their node; a coupling capacitor counts
// in full on both nodes; m= multiplies. A node without one keeps cnode.
func TestCapacitors(t *testing.T) {
	d := read(t, `.subckt c a y z
mn y a 0 0 nch
mp z a y vdd pch
c1 y 0 2f
c2 y gnd 1.5fF
c3 y z 0.5f
c4 vdd 0 1p
cx z 0 c=1f m=3
.ends
`, cardfile.Options{})
	nl := d.Netlist
	if got := nl.NodeCap(nodeNum(t, nl, "y")); !near(got, 4e-15) {
		t.Errorf("y: %g F, want 2f + 1.5f + 0.5f", got)
	}
	if got := nl.NodeCap(nodeNum(t, nl, "z")); !near(got, 3.5e-15) {
		t.Errorf("z: %g F, want 0.5f + 3 x 1f", got)
	}
	if got := nl.NodeCap(nodeNum(t, nl, "a")); got != nl.Tech.Cnode {
		t.Errorf("a: %g F, want the default %g", got, nl.Tech.Cnode)
	}
	n := notes(d)
	if !strings.Contains(n, "coupling capacitors") || !strings.Contains(n, "t.sp:7:1: skipped: capacitor c4 between the rails") {
		t.Errorf("notes:\n%s", n)
	}
}

// R cards: between two nodes a resistive device with its resistance, to a
// rail a pull with its resistance.
func TestResistors(t *testing.T) {
	d := read(t, `.subckt c a y
r1 a y 10k
rpu y vdd 100k m=2
rsh vdd 0 1
.ends
`, cardfile.Options{Inputs: []string{"a"}})
	nl := d.Netlist
	r1 := device(t, nl, "r1")
	if r1.Kind != sw.Tran || !r1.Resistive || r1.Ohms != 10e3 {
		t.Errorf("r1 = %+v, want a resistive tran of 10 kOhm", r1)
	}
	pu := device(t, nl, "rpu")
	if pu.Kind != sw.PullUp || pu.Ohms != 50e3 || pu.Strength != sw.Pull {
		t.Errorf("rpu = %+v, want a pull-up of 50 kOhm (two in parallel)", pu)
	}
	if !strings.Contains(notes(d), "rsh between the rails") {
		t.Errorf("the resistor across the rails is not noted:\n%s", notes(d))
	}
	// Ideal mode: a supply input through the resistor is pull (IEEE 1364-2005 §7.12).
	s := simtest.New(t, nl, sw.Ideal)
	s.Apply("a=0")
	if got := s.Node("y"); got.Strength != sw.Pull || got.Value != sw.VX {
		t.Errorf("y = %v: a 0 through r1 (pull) meets the pull-up (pull): X at pull", got)
	}
	// Physical mode: a divider of 10k against 50k: y = vdd 10/(10+50).
	p := simtest.New(t, nl, sw.Physical)
	p.Apply("a=0")
	want := nl.Tech.Vdd * 10e3 / 60e3 // Ohm's law
	if got := p.Node("y"); math.Abs(got.Volts-want) > 1e-3 || got.Value != sw.V0 {
		t.Errorf("y = %v at %.3f V, want 0 at %.3f V", got.Value, got.Volts, want)
	}
}

// Level-1 .model cards set the technology; KP follows from U0 and TOX when
// it is absent: KP = U0 eps_ox / TOX (the level-1 model's definition).
func TestModelsSetTech(t *testing.T) {
	d := read(t, `.model nch nmos (level=1 vto=0.5 kp=200u gamma=0.45 phi=0.8)
.model pch pmos level=1 vto=-0.55 u0=150 tox=9n
.subckt c a y
mn y a 0 0 nch
mp y a vdd vdd pch
.ends
`, cardfile.Options{})
	tc := d.Netlist.Tech
	// U0 = 150 cm^2/Vs = 150e-4 m^2/Vs; eps_ox = 3.9 x 8.854e-12 F/m; TOX = 9 nm.
	wantKp := 150e-4 * 3.9 * 8.854e-12 / 9e-9
	if tc.Vtn != 0.5 || tc.Vtp != 0.55 || tc.Kn != 200e-6 || !near(tc.Kp, wantKp) || tc.Gamma != 0.45 || tc.Phi != 0.8 {
		t.Errorf("tech %+v; want vtn 0.5 vtp 0.55 kn 200u kp %g gamma 0.45 phi 0.8", tc, wantKp)
	}
	if !near(cardfile.KPFromMobility(150, 9e-9), 5.7551e-5) { // 150e-4 x 3.45306e-11 / 9e-9, by hand
		t.Errorf("KPFromMobility(150, 9n) = %g", cardfile.KPFromMobility(150, 9e-9))
	}
	// A binned model NAME.1 serves a card that names NAME.
	d = read(t, ".model nch.1 nmos vto=0.3\n.model nch.2 nmos vto=0.35\n.subckt c a y\nmn y a 0 0 nch\n.ends\n", cardfile.Options{})
	if d.Netlist.Tech.Vtn != 0.3 {
		t.Errorf("vtn %g, want 0.3 from the first bin", d.Netlist.Tech.Vtn)
	}
	// A supply source between the rails sets vdd.
	d = read(t, "* supply\nvsup vdd 0 dc 1.2\n.subckt c a y\nmn y a 0 0 nch\n.ends\n", cardfile.Options{Top: "c"})
	if d.Netlist.Tech.Vdd != 1.2 {
		t.Errorf("vdd %g, want 1.2 from vsup", d.Netlist.Tech.Vdd)
	}
}

// Models without cards are typed by --nmos-models/--pmos-models, else by
// the naming habits (common practice); X instances of undefined
// subcircuits with four nodes and a typed name are transistors.
func TestModelTyping(t *testing.T) {
	src := `.subckt c a y
m1 y a 0 0 kit_nfet_01v8 w=1u l=0.15u
m2 y a vdd vdd pfetlvt w=1u l=0.15u
xm3 y a 0 0 nch_mac w=1u l=0.15u
xm4 y a vdd vdd lvtp_core w=2u l=0.15u
m5 y a 0 0 n18
.ends
`
	d := read(t, src, cardfile.Options{PMOSModels: []string{"LVT*_core"}})
	nl := d.Netlist
	for _, c := range []struct {
		dev  string
		kind sw.DeviceKind
	}{{"m1", sw.NMOS}, {"m2", sw.PMOS}, {"xm3", sw.NMOS}, {"xm4", sw.PMOS}, {"m5", sw.NMOS}} {
		if k := device(t, nl, c.dev).Kind; k != c.kind {
			t.Errorf("%s is %s, want %s", c.dev, k, c.kind)
		}
	}
	if dv := device(t, nl, "xm4"); dv.W != 2e-6 || nl.NodeName(dv.Gate) != "a" {
		t.Errorf("xm4 (drain gate source bulk): %+v", dv)
	}
	n := notes(d)
	for _, want := range []string{"kit_nfet_01v8 has no .model card: typed nMOS by its name", "lvtp_core has no .model card: typed pMOS by --pmos-models", "n18 has no .model card: typed nMOS by its first letter"} {
		if !strings.Contains(n, want) {
			t.Errorf("notes lack %q:\n%s", want, n)
		}
	}
	msg := readErr(t, ".subckt c a y\nm1 y a 0 0 lvt\nx2 y a 0 0 zz\n.ends\n", cardfile.Options{})
	for _, want := range []string{"t.sp:2:12: unknown model lvt", "t.sp:3:12: instance x2 of unknown subcircuit zz"} {
		if !strings.Contains(msg, want) {
			t.Errorf("errors lack %q:\n%s", want, msg)
		}
	}
	// --nmos-models types a name the habits would not.
	d = read(t, ".subckt c a y\nm1 y a 0 0 lvt\n.ends\n", cardfile.Options{NMOSModels: []string{"lvt", "hvt"}})
	if device(t, d.Netlist, "m1").Kind != sw.NMOS {
		t.Error("--nmos-models lvt did not type lvt")
	}
}

// Elements the model has no place for are noted with their positions.
func TestSkippedElements(t *testing.T) {
	d := read(t, `deck title
.subckt c a y
d1 y 0 dmod
mn y a 0 0 nch
q1 y a 0 npn1
l1 a y 1n
.ends
va a 0 pwl(0 0 1n 1.8)
.tran 1p 10n
.model dmod d (is=1e-14)
.option reltol=1e-4 scale=1
.measure tran t1 find v(y) at=5n
.end
this is after the end
`, cardfile.Options{Top: "c"})
	n := notes(d)
	for _, want := range []string{
		"t.sp:3:1: skipped: D d1 (a diode)",
		"t.sp:5:1: skipped: Q q1 (a bipolar transistor)",
		"t.sp:6:1: skipped: L l1 (an inductor)",
		"t.sp:10:1: skipped: .model dmod of type d",
		"t.sp:11:1: skipped: options reltol",
		"t.sp:14:1: the rest of the file, after .end, is not read",
	} {
		if !strings.Contains(n, want) {
			t.Errorf("notes lack %q:\n%s", want, n)
		}
	}
}

// Names from extraction and buses map to railyard names reversibly.
func TestNameEscaping(t *testing.T) {
	d := read(t, `.subckt c a_193_47# net<3> X1/MN3 vdd! 12
mn1 net<3> a_193_47# X1/MN3 0 nch
mp1 12 net<3> vdd! vdd! pch
mn2 net[3] a_193_47# 0 0 nch
.ends
`, cardfile.Options{Inputs: []string{"a_193_47#"}})
	nl := d.Netlist
	for _, c := range []struct{ orig, name string }{
		{"a_193_47#", "a_193_47X23"}, {"X1/MN3", "x1.mn3"}, {"12", "N12"},
		// net<3> would be net[3], but the netlist also spells net[3]: the
		// name written validly keeps it, the other is told apart.
		{"net[3]", "net[3]"}, {"net<3>", "net[3]Q2"},
	} {
		n, ok := nl.Lookup(c.orig)
		if !ok {
			t.Errorf("no node spelled %s", c.orig)
			continue
		}
		if nl.NodeName(n) != c.name || nl.DisplayName(n) != c.orig {
			t.Errorf("%s: railyard name %s shown as %s; want %s shown as %s", c.orig, nl.NodeName(n), nl.DisplayName(n), c.name, c.orig)
		}
	}
	if nl.NodeName(nl.Power()) != "vdd" {
		t.Errorf("power rail %s, want vdd (vdd! is a power name)", nl.NodeName(nl.Power()))
	}
}

// The top: --top picks; the only uninstantiated subcircuit is taken;
// several are an error listing them; the top level is the design when it
// holds devices.
func TestTopChoice(t *testing.T) {
	lib := ".subckt a x\nm1 x x 0 0 nch\n.ends\n.subckt b x\nm1 x x 0 0 nch\n.ends\n"
	msg := readErr(t, lib, cardfile.Options{})
	if !strings.Contains(msg, "give --top with one of a, b") {
		t.Errorf("two tops: %s", msg)
	}
	if d := read(t, lib, cardfile.Options{Top: "B"}); d.Name != "b" {
		t.Errorf("--top B gave %s", d.Name)
	}
	if msg := readErr(t, lib, cardfile.Options{Top: "c"}); !strings.Contains(msg, `no subcircuit named "c" (this deck defines: a, b)`) {
		t.Errorf("--top c: %s", msg)
	}
	d := read(t, "* flat deck\nm1 y a 0 0 nch\nm2 y a vdd vdd pch\nva a 0 dc 0\n.tran 1n 10n\n.lib 'models.lib' tt\n", cardfile.Options{})
	nl := d.Netlist
	for _, want := range []string{"t.sp:5:1: skipped: .tran card", "t.sp:6:1: skipped: .lib models.lib", "t.sp:4:1: skipped: V va (a voltage source)"} {
		if !strings.Contains(notes(d), want) {
			t.Errorf("notes lack %q:\n%s", want, notes(d))
		}
	}
	if len(nl.Inputs()) != 1 || nl.NodeName(nl.Inputs()[0]) != "a" {
		t.Errorf("flat deck: inputs %v, want a (driven by va)", nl.Inputs())
	}
}

// Inputs: --inputs, *.pininfo, or a guess from the connections (noted).
func TestInputs(t *testing.T) {
	src := `.subckt mux a b s y z
mn1 a s y 0 nch
mn2 b sb y 0 nch
mi sb s 0 0 nch
mpi sb s vdd vdd pch
mo z y 0 0 nch
mpo z y vdd vdd pch
.ends
`
	d := read(t, src, cardfile.Options{})
	nl := d.Netlist
	names := func(ns []int) string {
		var s []string
		for _, n := range ns {
			s = append(s, nl.NodeName(n))
		}
		return strings.Join(s, " ")
	}
	if got := names(nl.Inputs()); got != "a b s y" {
		t.Errorf("guessed inputs %q, want a b s y (y reaches no rail-driven stage; give --inputs)", got)
	}
	if !strings.Contains(notes(d), "inputs guessed from the connections") {
		t.Errorf("the guess is not noted:\n%s", notes(d))
	}
	d = read(t, src, cardfile.Options{Inputs: []string{"A", "b", "s"}})
	nl = d.Netlist
	if got := names(nl.Inputs()); got != "a b s" {
		t.Errorf("inputs %q with --inputs A,b,s", got)
	}
	if got := names(nl.Outputs()); got != "y z" {
		t.Errorf("outputs %q, want y z", got)
	}
	if msg := readErr(t, src, cardfile.Options{Inputs: []string{"q"}}); !strings.Contains(msg, "--inputs names q, which is not a signal port of subcircuit mux") {
		t.Errorf("--inputs q: %s", msg)
	}
}

// Includes are read relative to the including file through the opener;
// a cycle is an error; depth and count are bounded.
func TestInclude(t *testing.T) {
	files := fstest.MapFS{
		"cells/top.sp":        {Data: []byte(".include 'lib/inv.sp'\n.include \"lib/models.sp\"\n.subckt top a y\nx1 a y inv\n.ends\n")},
		"cells/lib/inv.sp":    {Data: []byte(".subckt inv a y\nmn y a 0 0 nch\nmp y a vdd vdd pch\n.ends\n")},
		"cells/lib/models.sp": {Data: []byte(".model nch nmos vto=0.41\n.model pch pmos vto=-0.43\n")},
		"loop/a.sp":           {Data: []byte(".include b.sp\n")},
		"loop/b.sp":           {Data: []byte(".include a.sp\n")},
	}
	src, _ := files.ReadFile("cells/top.sp")
	d, err := cardfile.Read("cells/top.sp", src, cardfile.Options{Open: mapOpener(files)})
	if err != nil {
		t.Fatal(err)
	}
	if d.Netlist.Tech.Vtn != 0.41 || d.Netlist.NumDevices() != 2 {
		t.Errorf("included models and cell not read: vtn %g, %d devices", d.Netlist.Tech.Vtn, d.Netlist.NumDevices())
	}
	src, _ = files.ReadFile("loop/a.sp")
	_, err = cardfile.Read("loop/a.sp", src, cardfile.Options{Open: mapOpener(files)})
	if err == nil || !strings.Contains(err.Error(), "loop/b.sp:1:10: include cycle: a.sp -> b.sp -> a.sp") {
		t.Errorf("include cycle: %v", err)
	}
	if _, err := cardfile.Read("t.sp", []byte(".include x.sp\n"), cardfile.Options{}); err == nil || !strings.Contains(err.Error(), "no folder to include from") {
		t.Errorf("include without an opener: %v", err)
	}
	deep := fstest.MapFS{}
	for i := 0; i < 30; i++ {
		deep[name(i)] = &fstest.MapFile{Data: []byte(".include " + name(i+1) + "\n")}
	}
	src, _ = deep.ReadFile(name(0))
	if _, err := cardfile.Read(name(0), src, cardfile.Options{Open: mapOpener(deep)}); err == nil || !strings.Contains(err.Error(), "includes nest more than 16 deep") {
		t.Errorf("deep includes: %v", err)
	}
}

func name(i int) string { return "f" + string(rune('a'+i)) + ".sp" }
