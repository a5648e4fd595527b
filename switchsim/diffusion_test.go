package switchsim_test

// Structural defaults of a node's charge (switchsim §1): a diffusion node,
// one that only device channels touch, holds charge at class small with
// the technology's cdiff unless the design says otherwise; the same
// whatever the reader.

import (
	"bytes"
	"errors"
	"math"
	"strings"
	"testing"

	sw "railyard/switchsim"
	"railyard/switchsim/cardfile"
	"railyard/switchsim/netfile"
	"railyard/switchsim/vfile"
)

// A two-input NAND feeding an inverter, and a pass-device chain: the stack
// node m, and p between two pass devices, are diffusion nodes; the output,
// the inputs, and y (which gates the inverter) are not.
const diffusionSrc = `design diff
input a b c
output z q
pmos pa a vdd y
pmos pb b vdd y
nmos na a y m
nmos nb b m gnd
pmos pz y vdd z
nmos nz y z gnd
nmos t1 c z p
nmos t2 c p q
`

type nodeWant struct {
	name   string
	diff   bool
	charge sw.Strength
	cap    float64
}

func checkNodes(t *testing.T, what string, nl *sw.Netlist, wants []nodeWant) {
	t.Helper()
	for _, w := range wants {
		n, ok := nl.Lookup(w.name)
		if !ok {
			t.Errorf("%s: no node %s", what, w.name)
			continue
		}
		if got := nl.Diffusion(n); got != w.diff {
			t.Errorf("%s: %s diffusion %v, want %v", what, w.name, got, w.diff)
		}
		if got := nl.NodeCharge(n); got != w.charge {
			t.Errorf("%s: %s charge %s, want %s", what, w.name, got, w.charge)
		}
		if got := nl.NodeCap(n); got != w.cap {
			t.Errorf("%s: %s cap %g, want %g", what, w.name, got, w.cap)
		}
	}
}

func TestDiffusionDefaults(t *testing.T) {
	g := sw.Generic()
	if g.Cdiff != 0.5e-15 || g.Cnode != 5e-15 {
		t.Fatalf("generic cdiff %g cnode %g, want 0.5 fF and 5 fF", g.Cdiff, g.Cnode)
	}
	nl := swNet(t, diffusionSrc)
	checkNodes(t, "plain", nl, []nodeWant{
		{"m", true, sw.Small, g.Cdiff},
		{"p", true, sw.Small, g.Cdiff},
		{"y", false, sw.Medium, g.Cnode}, // gates pz and nz
		{"z", false, sw.Medium, g.Cnode}, // an output
		{"q", false, sw.Medium, g.Cnode},
		{"a", false, sw.Medium, g.Cnode}, // an input
	})
	// Each of cap= and charge= wins for its own value.
	nl = swNet(t, diffusionSrc+"node m charge=medium\nnode p cap=2f\n")
	checkNodes(t, "annotated", nl, []nodeWant{
		{"m", true, sw.Medium, g.Cdiff},
		{"p", true, sw.Small, 2e-15},
	})
	// The technology's cdiff is the design's own.
	nl = swNet(t, strings.Replace(diffusionSrc, "input", "tech generic cdiff=0.8f\ninput", 1))
	checkNodes(t, "tech", nl, []nodeWant{{"m", true, sw.Small, 0.8e-15}, {"y", false, sw.Medium, g.Cnode}})
}

// A corner that changes cdiff moves the diffusion nodes left at the
// default, and only them.
func TestDiffusionCorner(t *testing.T) {
	nl := swNet(t, diffusionSrc+"node p cap=2f\n")
	tech := nl.Tech
	tech.Cdiff = 1e-15
	c, err := nl.WithTech(tech)
	if err != nil {
		t.Fatal(err)
	}
	checkNodes(t, "corner", c, []nodeWant{
		{"m", true, sw.Small, 1e-15},
		{"p", true, sw.Small, 2e-15},
		{"y", false, sw.Medium, 5e-15},
	})
	checkNodes(t, "nominal", nl, []nodeWant{{"m", true, sw.Small, 0.5e-15}})
}

func TestDiffusionTechRange(t *testing.T) {
	for _, v := range []float64{0, -1e-15, 2} {
		tech := sw.Generic()
		tech.Cdiff = v
		var te *sw.TechError
		if err := tech.Validate(); !errors.As(err, &te) || te.Key != "cdiff" {
			t.Errorf("cdiff=%g: %v, want an error naming cdiff", v, err)
		}
	}
	if _, err := netfile.Read("t.sw", []byte(strings.Replace(diffusionSrc, "input", "tech generic cdiff=0\ninput", 1))); err == nil || !strings.Contains(err.Error(), "cdiff") {
		t.Errorf("cdiff=0 read: %v, want an error naming cdiff", err)
	}
}

// The netlist readers build through the same Builder, so a stack node of
// a card deck or a module gets the same defaults; a C card sets only the
// capacitance, a trireg only the class.
func TestDiffusionReaders(t *testing.T) {
	g := sw.Generic()
	deck := `* nand2
.subckt nand2 a b y vdd gnd
mpa y a vdd vdd pch w=1u l=0.18u
mpb y b vdd vdd pch w=1u l=0.18u
mna y a m gnd nch w=1u l=0.18u
mnb m b gnd gnd nch w=1u l=0.18u
mnc y b k gnd nch w=1u l=0.18u
mnd k a gnd gnd nch w=1u l=0.18u
ck k gnd 1f
.ends
`
	d, err := cardfile.Read("nand2.sp", []byte(deck), cardfile.Options{Inputs: []string{"a", "b"}})
	if err != nil {
		t.Fatal(err)
	}
	checkNodes(t, ".sp", d.Netlist, []nodeWant{
		{"m", true, sw.Small, g.Cdiff},
		{"k", true, sw.Small, 1e-15},
		{"y", false, sw.Medium, g.Cnode},
	})
	mod := `module nand2 (input a, input b, output y);
  supply1 vdd; supply0 gnd;
  wire m; trireg k;
  pmos (y, vdd, a); pmos (y, vdd, b);
  nmos (y, m, a); nmos (m, gnd, b);
  nmos (y, k, b); nmos (k, gnd, a);
endmodule
`
	v, err := vfile.Read("nand2.v", []byte(mod), vfile.Options{})
	if err != nil {
		t.Fatal(err)
	}
	checkNodes(t, ".v", v.Netlist, []nodeWant{
		{"m", true, sw.Small, g.Cdiff},
		{"k", true, sw.Medium, g.Cdiff}, // a trireg is medium, as IEEE 1364-2005 says
		{"y", false, sw.Medium, g.Cnode},
	})
}

// convert leaves the defaults out and keeps what the design gave, and the
// result reads back to the same classes and capacitances.
func TestDiffusionConvert(t *testing.T) {
	d, err := netfile.Read("t.sw", []byte(diffusionSrc+"node m charge=medium\n"))
	if err != nil {
		t.Fatal(err)
	}
	var buf bytes.Buffer
	if err := netfile.WriteConverted(&buf, d); err != nil {
		t.Fatal(err)
	}
	out := buf.String()
	if !strings.Contains(out, "node m charge=medium\n") || strings.Contains(out, "node p") {
		t.Errorf("converted:\n%s\nwant m's charge=medium and nothing for p", out)
	}
	d2, err := netfile.Read("c.sw", buf.Bytes())
	if err != nil {
		t.Fatal(err)
	}
	for n := 0; n < d.Netlist.NumNodes(); n++ {
		name := d.Netlist.NodeName(n)
		m, _ := d2.Netlist.Lookup(name)
		if d.Netlist.NodeCharge(n) != d2.Netlist.NodeCharge(m) || d.Netlist.NodeCap(n) != d2.Netlist.NodeCap(m) {
			t.Errorf("%s: %s %g read back as %s %g", name, d.Netlist.NodeCharge(n), d.Netlist.NodeCap(n), d2.Netlist.NodeCharge(m), d2.Netlist.NodeCap(m))
		}
	}
}

// Physical mode: a precharged node evaluating into a stack whose bottom
// device stays off shares its charge with the stack node (charge
// conservation, common practice; switchsim §4). At the defaults the stack
// node is a tenth of the dynamic node: the share would end at 5/5.5 x 1.8 V,
// but the nMOS stops charging m at its pass limit (about 1.14 V), so dyn
// keeps 1.8 - 0.1 x V(m) = 1.69 V, a 1 above VIH. With the stack node given
// a storage node's 5 fF both end at 0.9 V, inside the band, and the level is
// lost. Ideal mode: the dynamic node (medium) outranks the stack node
// (small) and keeps its 1.
func TestDiffusionChargeShare(t *testing.T) {
	src := `design domino
input pre a b
output dyn
pmos pp pre vdd dyn
nmos na a dyn m
nmos nb b m gnd
`
	for _, c := range []struct {
		extra string
		mode  sw.Mode
		want  sw.Value
	}{
		{"", sw.Physical, sw.V1},
		{"node m cap=5f\n", sw.Physical, sw.VX},
		{"", sw.Ideal, sw.V1},
	} {
		nl := swNet(t, src+c.extra)
		s := sw.NewSim(nl, sw.Options{Mode: c.mode})
		s.Settle()
		apply(t, s, "pre=1 a=1 b=1") // m discharged to 0
		apply(t, s, "a=0 b=0")
		apply(t, s, "pre=0") // precharge dyn
		apply(t, s, "pre=1")
		apply(t, s, "a=1") // evaluate: dyn shares with m, b stays off
		dyn, m := foundNode(s, "dyn"), foundNode(s, "m")
		if c.mode == sw.Physical && c.extra == "" && math.Abs(dyn.Volts+0.1*m.Volts-1.8) > 1e-3 {
			t.Errorf("dyn %.4f V, m %.4f V: 5 fF x dyn + 0.5 fF x m is not the 5 fF x 1.8 V it started with", dyn.Volts, m.Volts)
		}
		if dyn.Value != c.want {
			t.Errorf("%s %q: dyn = %s (%.3f V), want %s", c.mode, c.extra, stateString(dyn), dyn.Volts, c.want)
		}
	}
}
