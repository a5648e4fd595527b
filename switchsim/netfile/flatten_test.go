package netfile_test

import (
	"testing"

	"railyard/switchsim"
)

// Cells flatten with hierarchical names: inner nodes and devices are
// prefixed by the instance path, ports become the connected nodes, rails
// stay global (switchsim/FORMATS.md).
func TestFlattenNames(t *testing.T) {
	d := mustRead(t, `
input a
output y
cell buf IN OUT
  use inv i1 IN mid
  use inv i2 mid OUT
end
cell pair IN OUT
  use buf b IN x
  use buf c x OUT strength=pull
end
use pair top a y
`)
	nl := d.Netlist
	for _, n := range []string{"a", "y", "top.x", "top.b.mid", "top.c.mid", "vdd", "gnd"} {
		if _, ok := nl.Lookup(n); !ok {
			t.Errorf("no node %s", n)
		}
	}
	for _, n := range []string{"IN", "OUT", "mid", "x", "top.IN", "top.b.vdd"} {
		if _, ok := nl.Lookup(n); ok {
			t.Errorf("node %s should not exist", n)
		}
	}
	dev := func(name string) switchsim.Device {
		i, ok := nl.LookupDevice(name)
		if !ok {
			t.Fatalf("no device %s", name)
		}
		return nl.Device(i)
	}
	// top.b.i1.p: gate a (the port chain IN -> IN -> IN), channel vdd - top.b.mid
	p := dev("top.b.i1.p")
	if nl.NodeName(p.Gate) != "a" || nl.NodeName(p.A) != "vdd" || nl.NodeName(p.B) != "top.b.mid" {
		t.Errorf("top.b.i1.p: gate %s channel %s %s", nl.NodeName(p.Gate), nl.NodeName(p.A), nl.NodeName(p.B))
	}
	if n := dev("top.c.i2.n"); nl.NodeName(n.A) != "y" || nl.NodeName(n.B) != "gnd" {
		t.Errorf("top.c.i2.n: channel %s %s", nl.NodeName(n.A), nl.NodeName(n.B))
	}
	// strength= on an instance caps every device inside it.
	if s := dev("top.c.i1.p").Strength; s != switchsim.Pull {
		t.Errorf("top.c.i1.p strength %s, want pull (capped by the use)", s)
	}
	if s := dev("top.b.i1.p").Strength; s != switchsim.Strong {
		t.Errorf("top.b.i1.p strength %s, want strong", s)
	}
	if nl.NumDevices() != 8 {
		t.Errorf("%d devices, want 8", nl.NumDevices())
	}
}

// A cap never raises a strength: weak inside a pull-capped instance stays weak.
func TestStrengthCapKeepsWeaker(t *testing.T) {
	d := mustRead(t, "input a\ncell k A Y\n  nmos n A Y gnd strength=weak\n  pullup p Y\nend\nuse k u a y strength=strong\n")
	nl := d.Netlist
	for name, want := range map[string]switchsim.Strength{"u.n": switchsim.Weak, "u.p": switchsim.Pull} {
		i, _ := nl.LookupDevice(name)
		if got := nl.Device(i).Strength; got != want {
			t.Errorf("%s strength %s, want %s", name, got, want)
		}
	}
}

// Sizes, capacitances, charge classes and technology keys arrive in the
// netlist with their SI prefixes applied (switchsim/FORMATS.md: 10f is 10 fF,
// 0.18u is 0.18 um).
func TestValuesReachNetlist(t *testing.T) {
	d := mustRead(t, `design v "values"
tech generic vdd=1.2 vtn=0.3 vtp=-0.35 cnode=2f cdiff=0.3f
input g
tgate t g gb a b wn=0.5u wp=1u l=0.25u strength=pull
nmos n g a gnd
pulldown pd b strength=weak
node a cap=10f charge=large
node gb
`)
	nl := d.Netlist
	if nl.Name != "v" || nl.Desc != "values" || d.Name != "v" || d.Desc != "values" {
		t.Errorf("name %q desc %q", nl.Name, nl.Desc)
	}
	tech := nl.Tech
	if tech.Vdd != 1.2 || tech.Vtn != 0.3 || tech.Vtp != 0.35 || tech.Cnode != 2e-15 || tech.Cdiff != 0.3e-15 {
		t.Errorf("tech %+v", tech)
	}
	i, _ := nl.LookupDevice("t.p")
	if dv := nl.Device(i); dv.Kind != switchsim.PMOS || dv.W != 1e-6 || dv.L != 0.25e-6 || dv.Strength != switchsim.Pull {
		t.Errorf("t.p %+v", dv)
	}
	i, _ = nl.LookupDevice("t.n")
	if dv := nl.Device(i); dv.W != 0.5e-6 || nl.NodeName(dv.Gate) != "g" {
		t.Errorf("t.n %+v", dv)
	}
	i, _ = nl.LookupDevice("n") // default sizes come from the technology
	if dv := nl.Device(i); dv.W != tech.Wn || dv.L != tech.L || dv.Strength != switchsim.Strong {
		t.Errorf("n %+v", dv)
	}
	i, _ = nl.LookupDevice("pd")
	if dv := nl.Device(i); dv.Kind != switchsim.PullDown || dv.Strength != switchsim.Weak {
		t.Errorf("pd %+v", dv)
	}
	a, _ := nl.Lookup("a")
	if nl.NodeCap(a) != 10e-15 || nl.NodeCharge(a) != switchsim.Large {
		t.Errorf("a: cap %g charge %s", nl.NodeCap(a), nl.NodeCharge(a))
	}
	// gb gates t.p: cnode and medium; b only meets channels (t and pd), a
	// diffusion node: cdiff and small (switchsim §1).
	for _, c := range []struct {
		name   string
		cap    float64
		charge switchsim.Strength
	}{{"gb", 2e-15, switchsim.Medium}, {"b", 0.3e-15, switchsim.Small}} {
		n, _ := nl.Lookup(c.name)
		if nl.NodeCap(n) != c.cap || nl.NodeCharge(n) != c.charge {
			t.Errorf("%s: cap %g charge %s (want the defaults %g %s)", c.name, nl.NodeCap(n), nl.NodeCharge(n), c.cap, c.charge)
		}
	}
}

// Without a design line, the design is named after its file.
func TestDefaultName(t *testing.T) {
	if d := mustRead(t, "input a\npullup p a\n"); d.Name != "t" {
		t.Errorf("name %q, want t", d.Name)
	}
}

// Windows line ends and a byte-order mark read like plain lines (common
// practice for text files); columns still count from the line's first byte.
func TestCRLFAndBOM(t *testing.T) {
	d := mustRead(t, "\xEF\xBB\xBFdesign w \"crlf\"\r\ninput a\r\noutput y\r\nuse inv u a y\r\n")
	if d.Name != "w" || d.Desc != "crlf" || d.Netlist.NumDevices() != 2 {
		t.Errorf("name %q desc %q devices %d", d.Name, d.Desc, d.Netlist.NumDevices())
	}
	wantErrors(t, "input a\r\nnmos n a x\r\n", nil, "2:1: wrong number of terminals")
}
