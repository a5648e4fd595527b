package netfile_test

import (
	"bytes"
	"fmt"
	"math"
	"math/rand"
	"strings"
	"testing"

	"railyard/designs"
	"railyard/switchsim"
	"railyard/switchsim/netfile"
)

// diffNetlists lists every difference between two netlists, matching nodes
// and devices by name: kinds, terminals, sizes, strengths, capacitances,
// charge classes, the technology, the rails, inputs and outputs.
func diffNetlists(a, b *switchsim.Netlist) []string {
	var d []string
	add := func(f string, args ...any) { d = append(d, fmt.Sprintf(f, args...)) }
	if a.Name != b.Name || a.Desc != b.Desc {
		add("name %q %q vs %q %q", a.Name, a.Desc, b.Name, b.Desc)
	}
	if a.Tech != b.Tech {
		add("tech %+v vs %+v", a.Tech, b.Tech)
	}
	if a.NodeName(a.Power()) != b.NodeName(b.Power()) || a.NodeName(a.Ground()) != b.NodeName(b.Ground()) {
		add("rails differ")
	}
	if a.NumNodes() != b.NumNodes() || a.NumDevices() != b.NumDevices() {
		add("%d nodes %d devices vs %d nodes %d devices", a.NumNodes(), a.NumDevices(), b.NumNodes(), b.NumDevices())
	}
	for n := 0; n < a.NumNodes(); n++ {
		name := a.NodeName(n)
		m, ok := b.Lookup(name)
		switch {
		case !ok:
			add("node %s missing", name)
		case a.NodeKind(n) != b.NodeKind(m) || a.NodeCap(n) != b.NodeCap(m) || a.NodeCharge(n) != b.NodeCharge(m):
			add("node %s: %v %g %v vs %v %g %v", name, a.NodeKind(n), a.NodeCap(n), a.NodeCharge(n), b.NodeKind(m), b.NodeCap(m), b.NodeCharge(m))
		}
	}
	names := func(nl *switchsim.Netlist, ns []int) string {
		var s []string
		for _, n := range ns {
			s = append(s, nl.NodeName(n))
		}
		return strings.Join(s, " ")
	}
	if x, y := names(a, a.Inputs()), names(b, b.Inputs()); x != y {
		add("inputs %q vs %q", x, y)
	}
	if x, y := names(a, a.Outputs()), names(b, b.Outputs()); x != y {
		add("outputs %q vs %q", x, y)
	}
	nodeName := func(nl *switchsim.Netlist, n int) string {
		if n < 0 {
			return "-"
		}
		return nl.NodeName(n)
	}
	for i := 0; i < a.NumDevices(); i++ {
		da := a.Device(i)
		j, ok := b.LookupDevice(da.Name)
		if !ok {
			add("device %s missing", da.Name)
			continue
		}
		db := b.Device(j)
		ta := [3]string{nodeName(a, da.Gate), nodeName(a, da.A), nodeName(a, da.B)}
		tb := [3]string{nodeName(b, db.Gate), nodeName(b, db.A), nodeName(b, db.B)}
		if da.Kind != db.Kind || ta != tb || da.W != db.W || da.L != db.L || da.Strength != db.Strength {
			add("device %s: %v %v %g %g %v vs %v %v %g %g %v", da.Name, da.Kind, ta, da.W, da.L, da.Strength, db.Kind, tb, db.W, db.L, db.Strength)
		}
	}
	return d
}

func roundTrip(t *testing.T, name string, d *netfile.Design) string {
	t.Helper()
	var buf bytes.Buffer
	if err := netfile.Write(&buf, d); err != nil {
		t.Fatalf("%s: write: %v", name, err)
	}
	d2, err := netfile.Read(name+".out.sw", buf.Bytes())
	if err != nil {
		t.Fatalf("%s: reading the written design: %v\n%s", name, err, buf.String())
	}
	if diff := diffNetlists(d.Netlist, d2.Netlist); len(diff) > 0 {
		t.Errorf("%s: read(write(d)) differs:\n%s", name, strings.Join(diff, "\n"))
	}
	// Canonical form is a fixed point.
	var again bytes.Buffer
	netfile.Write(&again, d2)
	if again.String() != buf.String() {
		t.Errorf("%s: writing twice differs:\n%s\n---\n%s", name, buf.String(), again.String())
	}
	return buf.String()
}

// read(write(d)) gives the same netlist for every demo, both through the
// statement tree and flat from the netlist.
func TestWriteRoundTrip(t *testing.T) {
	for _, e := range designs.List() {
		d, err := readDemo(e.Name)
		if err != nil {
			t.Fatal(err)
		}
		roundTrip(t, e.Name, d)
		flat := &netfile.Design{Name: d.Name, Netlist: d.Netlist}
		roundTrip(t, e.Name+".flat", flat)
	}
	d := mustRead(t, `design odd "quotes \" and \\ kept"
tech generic vdd=1.2 vtp=-0.4 vil=0.4 vih=0.8
power vcc
ground vss
input a b
output y
node y cap=12.5f charge=small
cell k A Y
  nmos n A Y vss w=1u strength=weak
  pullup p Y strength=supply
end
use k u a y strength=pull
tgate t a b y vcc l=0.2u
`)
	out := roundTrip(t, "odd", d)
	roundTrip(t, "odd.flat", &netfile.Design{Netlist: d.Netlist})
	if !strings.Contains(out, `design odd "quotes \" and \\ kept"`) {
		t.Errorf("description not kept:\n%s", out)
	}
}

// The canonical form, written out by hand: one space between words,
// options in a fixed order, engineering notation, two-space cell indent,
// comments kept, blank runs folded.
func TestWriteCanonical(t *testing.T) {
	src := "# header\n\n\n\ndesign  c\t\"x\"\ntech   vih=1.1  vdd=1.8\ninput a\tb # the inputs\n" +
		"cell  k   A\n      nmos n A  x gnd   strength=WEAK l=0.18u  w=0.00000036\n# inside\nend   # done\n" +
		"use k u a\nnode u.x cap=1e-14 charge=Large\n\n\n"
	want := "# header\n\ndesign c \"x\"\ntech vdd=1.8 vih=1.1\ninput a b  # the inputs\n" +
		"cell k A\n  nmos n A x gnd w=360n l=180n strength=weak\n  # inside\nend  # done\n" +
		"use k u a\nnode u.x cap=10f charge=large\n\n"
	d := mustRead(t, src)
	var buf bytes.Buffer
	if err := netfile.Write(&buf, d); err != nil {
		t.Fatal(err)
	}
	if buf.String() != want {
		t.Errorf("got:\n%s\nwant:\n%s", buf.String(), want)
	}
}

// Numbers: SI prefixes scale by powers of ten (switchsim/FORMATS.md); the conversion
// is done on the decimal text, so 0.18u is the same float64 as 0.18e-6.
func TestParseNumber(t *testing.T) {
	good := map[string]float64{
		"10f": 10e-15, "0.18u": 0.18e-6, "1.5e3k": 1.5e6, "2M": 2e6, "3m": 3e-3, ".5": 0.5, "5.": 5,
		"+1": 1, "-0.45": -0.45, "170u": 170e-6, "12.5k": 12.5e3, "1G": 1e9, "4p": 4e-12, "7n": 7e-9, "1E-3": 1e-3, "0": 0,
	}
	for s, want := range good {
		if got, err := netfile.ParseNumber(s); err != nil || got != want {
			t.Errorf("ParseNumber(%q) = %v, %v; want %v", s, got, err, want)
		}
	}
	for _, s := range []string{"", "u", "1uu", "1e", "1e+", "1.2.3", "--1", "1e99999", "1x", "e5", "1e400", "0x10", "1_0", "inf", "NaN", "1ku"} {
		if v, err := netfile.ParseNumber(s); err == nil {
			t.Errorf("ParseNumber(%q) = %v, want an error", s, v)
		}
	}
}

func TestFormatNumber(t *testing.T) {
	want := map[float64]string{
		0.18e-6: "180n", 0.36e-6: "360n", 5e-15: "5f", 1.8: "1.8", 170e-6: "170u", 12.5e3: "12.5k", 0: "0",
		-0.45: "-450m", 1e-20: "0.00001f", 1e300: "1e+300", 1000: "1k", 999: "999", 2.5e9: "2.5G", 1e12: "1000G",
	}
	for v, s := range want {
		if got := netfile.FormatNumber(v); got != s {
			t.Errorf("FormatNumber(%g) = %q, want %q", v, got, s)
		}
	}
	// Every finite float64 reads back exactly.
	r := rand.New(rand.NewSource(1))
	for i := 0; i < 20000; i++ {
		v := math.Float64frombits(r.Uint64())
		if math.IsNaN(v) || math.IsInf(v, 0) {
			continue
		}
		if i%2 == 0 { // and plenty of everyday magnitudes
			v = (r.Float64() - 0.3) * math.Pow(10, float64(r.Intn(40)-25))
		}
		s := netfile.FormatNumber(v)
		got, err := netfile.ParseNumber(s)
		if err != nil || got != v {
			t.Fatalf("FormatNumber(%v) = %q reads back as %v, %v", v, s, got, err)
		}
	}
}
