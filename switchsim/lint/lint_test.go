package lint_test

import (
	"strings"
	"testing"

	"railyard/switchsim/lint"
	"railyard/switchsim/load"
	"railyard/switchsim/netfile"
)

func read(t *testing.T, name, src string) *netfile.Design {
	t.Helper()
	d, err := netfile.Read(name, []byte(src))
	if err != nil {
		t.Fatal(err)
	}
	return d
}

func TestFindsEachSlip(t *testing.T) {
	d, err := load.Host(load.Options{}).Design("testdata/slips.sw")
	if err != nil {
		t.Fatal(err)
	}
	got := map[lint.Kind]string{} // kind -> what it names
	for _, f := range lint.Check(d.Netlist) {
		name := ""
		if f.Node >= 0 {
			name = d.Netlist.NodeName(f.Node)
		}
		if f.Kind == lint.ShortedChannel || f.Kind == lint.RailShort {
			name = d.Netlist.Device(f.Device).Name
		}
		got[f.Kind] += name + " "
	}
	// By construction of slips.sw (each line's comment says which slip it is).
	want := map[lint.Kind]string{
		lint.UnusedInput:    "spare ",
		lint.UndrivenGate:   "ghost ",
		lint.UndrivenNode:   "f1 f2 ",
		lint.ShortedChannel: "n2 ",
		lint.RailShort:      "pu ", // the chain starts at the power rail
	}
	for k, v := range want {
		if got[k] != v {
			t.Errorf("%s: got %q, want %q", k, got[k], v)
		}
	}
	for k := range got {
		if _, ok := want[k]; !ok {
			t.Errorf("unexpected finding kind %s (%q)", k, got[k])
		}
	}
}

func TestCleanSelector(t *testing.T) {
	// A transmission-gate selector with its select inverter: every node is
	// driven from an input or a rail, every input is used, nothing is tied
	// across the rails (common practice: the textbook 2:1 tgate selector).
	d := read(t, "opsel.sw", `design opsel
input sel a b
output y
use inv isel sel seln
tgate ta seln sel a y
tgate tb sel seln b y
`)
	if fs := lint.Check(d.Netlist); len(fs) != 0 {
		t.Errorf("a plain transmission-gate selector has findings: %+v", fs)
	}
}

func TestRailShortThroughAlwaysOnGates(t *testing.T) {
	// An nMOS gated by the power rail and a pMOS gated by ground are always
	// on (common practice); in series they join the rails. The same chain
	// with an input-gated device is not a short.
	d := read(t, "tie.sw", `design tie
input a
output y
nmos n1 vdd y gnd
pmos p1 gnd vdd y
nmos n2 a z gnd
pmos p2 gnd vdd z
`)
	var shorts []string
	for _, f := range lint.Check(d.Netlist) {
		if f.Kind == lint.RailShort {
			shorts = append(shorts, f.Message)
			if !f.Failing() {
				t.Error("a rail short must fail check (a static current whatever the inputs)")
			}
		}
	}
	if len(shorts) != 1 || !strings.Contains(shorts[0], "p1, n1") {
		t.Errorf("rail shorts %q, want one through p1, n1", shorts)
	}
}

func TestNoRailShortWhenAnInputBreaksTheChain(t *testing.T) {
	// The same pull-up and pull-down, but meeting at an input: the input is
	// a source, so each pull only loads it (common practice: a pulled
	// input), and no path joins the rails through internal nodes.
	d := read(t, "pulled.sw", `design pulled
input a
output y
pullup pu a
pulldown pd a
nmos n1 a y gnd
pullup py y
`)
	for _, f := range lint.Check(d.Netlist) {
		if f.Kind == lint.RailShort {
			t.Errorf("rail short through an input: %s", f.Message)
		}
	}
}

func TestFloatingOutputFailsAndSlipsDoNot(t *testing.T) {
	// y is an output that only an unused channel touches: nothing can drive
	// it, so it floats whatever the inputs do.
	d := read(t, "float.sw", `design float
input a spare
output y q
nmos n1 a y w
nmos n2 a q gnd
pullup pq q
`)
	fs := lint.Check(d.Netlist)
	var floating, unused bool
	for _, f := range fs {
		switch f.Kind {
		case lint.FloatingOutput:
			floating = d.Netlist.NodeName(f.Node) == "y"
		case lint.UnusedInput:
			unused = true
			if f.Failing() {
				t.Error("an unused input must not fail check on its own")
			}
		}
	}
	if !floating || !unused {
		t.Errorf("findings %+v: want a floating output y and an unused input", fs)
	}
	if !lint.AnyFailing(fs) {
		t.Error("an output that always floats must fail check")
	}
	clean := read(t, "clean.sw", "design clean\ninput a\noutput q\nnmos n2 a q gnd\npullup pq q\n")
	if fs := lint.Check(clean.Netlist); lint.AnyFailing(fs) || len(fs) != 0 {
		t.Errorf("a ratioed inverter has findings %+v", fs)
	}
}
