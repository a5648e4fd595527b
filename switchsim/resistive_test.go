package switchsim_test

// Resistive devices: the strength reduction table of IEEE 1364-2005 §7.12
// (table values from memory of the standard's strength reduction rules:
// supply drive -> pull drive, strong drive -> pull drive, pull drive ->
// weak drive, weak drive -> medium capacitor, large capacitor -> medium
// capacitor, medium capacitor -> small capacitor, small capacitor -> small
// capacitor, high impedance -> high impedance). Every row is checked on
// the table itself and, where a node can carry that strength, through the
// engine: a source of the row's strength at node a, a resistive link to
// node b, and b's resolved strength.

import (
	"math"
	"testing"

	sw "railyard/switchsim"
)

var reductionRows = []struct {
	in, out sw.Strength
	row     string
}{
	{sw.Supply, sw.Pull, "supply drive -> pull drive"},     // IEEE 1364-2005 §7.12
	{sw.Strong, sw.Pull, "strong drive -> pull drive"},     // IEEE 1364-2005 §7.12
	{sw.Pull, sw.Weak, "pull drive -> weak drive"},         // IEEE 1364-2005 §7.12
	{sw.Large, sw.Medium, "large capacitor -> medium"},     // IEEE 1364-2005 §7.12
	{sw.Weak, sw.Medium, "weak drive -> medium capacitor"}, // IEEE 1364-2005 §7.12
	{sw.Medium, sw.Small, "medium capacitor -> small"},     // IEEE 1364-2005 §7.12
	{sw.Small, sw.Small, "small capacitor -> small"},       // IEEE 1364-2005 §7.12
	{sw.HighZ, sw.HighZ, "high impedance -> high impedance"},
}

func TestResistiveReductionTable(t *testing.T) {
	for _, r := range reductionRows {
		if got := sw.ResistiveReduction(r.in); got != r.out {
			t.Errorf("%s: got %s", r.row, got)
		}
	}
}

// reductionNet builds: node a driven at the given strength (value 1), a
// resistive link a-b (or a plain one), b a small-charge node written 0
// through its own switch and then released. Charge rows write a at the
// row's charge class and release it too.
func reductionNet(t *testing.T, src sw.Strength, resistive bool) *sw.Sim {
	t.Helper()
	b := sw.NewBuilder()
	for _, in := range []string{"ina", "ena", "inb", "enb"} {
		if err := b.Input(in); err != nil {
			t.Fatal(err)
		}
	}
	must := func(err error) {
		t.Helper()
		if err != nil {
			t.Fatal(err)
		}
	}
	must(b.Node("b", 0, sw.Small))
	must(b.NMOS("wb", "enb", "inb", "b", sw.DeviceOpts{}))
	switch {
	case src == sw.Supply:
		must(b.Tran("link", "ina", "b", sw.DeviceOpts{Resistive: resistive}))
	case src.IsCharge():
		must(b.Node("a", 0, src))
		must(b.NMOS("wa", "ena", "ina", "a", sw.DeviceOpts{}))
		must(b.Tran("link", "a", "b", sw.DeviceOpts{Resistive: resistive}))
	default: // strong through an nMOS from vdd; pull and weak from a pull-up
		if src == sw.Strong {
			must(b.NMOS("drv", "ena", "vdd", "a", sw.DeviceOpts{}))
		} else {
			must(b.PullWith("drv", "a", true, sw.DeviceOpts{Strength: src}))
		}
		must(b.Tran("link", "a", "b", sw.DeviceOpts{Resistive: resistive}))
	}
	// Race analysis off: the charge rows release both writes at once, which
	// race analysis rightly calls a race (opened first, a's switch lets
	// inb's 0 through the link onto a); the rows are about the strength a
	// charge keeps through the link, taken with simultaneous releases.
	s := sw.NewSim(foundCompile(t, b), sw.Options{Mode: sw.Ideal, Races: sw.RacesOff})
	// Write a=1 and b=0 while both are driven strongly, then release.
	apply(t, s, "ina=1 ena=1 inb=0 enb=1")
	if src.IsCharge() {
		apply(t, s, "ena=0 enb=0")
	} else {
		apply(t, s, "enb=0")
	}
	return s
}

func TestResistiveReductionThroughEngine(t *testing.T) {
	for _, r := range reductionRows {
		if r.in == sw.HighZ {
			continue // no node carries highz: every node stores charge (switchsim §1)
		}
		s := reductionNet(t, r.in, true)
		got := foundNode(s, "b")
		want := r.out
		if want == sw.Small {
			// b's own small charge (a stored 0) meets a's 1 reduced to small:
			// equal strengths, different values, so X at small.
			if got.Strength != sw.Small || got.Value != sw.VX {
				t.Errorf("%s: b = %s, want X at small", r.row, stateString(got))
			}
			continue
		}
		if got.Strength != want || got.Value != sw.V1 {
			t.Errorf("%s: b = %s, want 1 at %s", r.row, stateString(got), want)
		}
		// The same network with a non-resistive link passes the strength
		// unchanged but for supply, which becomes strong (IEEE 1364-2005 §7.12).
		plain := foundNode(reductionNet(t, r.in, false), "b")
		wantPlain := min(r.in, sw.Strong)
		if plain.Strength != wantPlain {
			t.Errorf("%s, non-resistive: b = %s, want %s", r.row, stateString(plain), wantPlain)
		}
	}
}

// A cap on a resistive device applies after the reduction: a weak-capped
// resistor passes a supply signal at weak, not below it.
func TestResistiveCapAfterReduction(t *testing.T) {
	b := sw.NewBuilder()
	if err := b.Input("a"); err != nil {
		t.Fatal(err)
	}
	if err := b.Tran("r", "a", "y", sw.DeviceOpts{Resistive: true, Strength: sw.Weak}); err != nil {
		t.Fatal(err)
	}
	s := stdSim(t, b)
	apply(t, s, "a=1")
	wantNode(t, s, "y", sw.V1, sw.Weak, sw.StateH, "min(reduce(supply) = pull, cap weak) = weak")
}

// Physical mode: two resistors in series between the rails divide the
// supply by Ohm's law, V = vdd R2 / (R1 + R2); in ideal mode the two pulls
// are equal strength and fight to X.
func TestResistorDivider(t *testing.T) {
	b := sw.NewBuilder()
	if err := b.PullWith("r1", "mid", true, sw.DeviceOpts{Ohms: 10e3}); err != nil {
		t.Fatal(err)
	}
	if err := b.PullWith("r2", "mid", false, sw.DeviceOpts{Ohms: 30e3}); err != nil {
		t.Fatal(err)
	}
	nl := foundCompile(t, b)
	s := sw.NewSim(nl, sw.Options{})
	s.Settle()
	got := foundNode(s, "mid")
	want := nl.Tech.Vdd * 30e3 / (10e3 + 30e3) // Ohm's law
	if math.Abs(got.Volts-want) > 1e-3 || got.Value != sw.V1 {
		t.Errorf("mid = %s at %.4f V, want 1 at %.4f V (divider)", stateString(got), got.Volts, want)
	}
	si := sw.NewSim(nl, sw.Options{Mode: sw.Ideal})
	si.Settle()
	if got := foundNode(si, "mid"); got.Value != sw.VX {
		t.Errorf("ideal mid = %s, want X (equal pulls fight)", stateString(got))
	}
}

// A tran joins two nodes always; Device reports the new fields.
func TestTranDevice(t *testing.T) {
	b := sw.NewBuilder()
	b.Input("a")
	if err := b.Tran("t", "a", "y", sw.DeviceOpts{}); err != nil {
		t.Fatal(err)
	}
	if err := b.Tran("r", "y", "z", sw.DeviceOpts{Resistive: true, Ohms: 5e3}); err != nil {
		t.Fatal(err)
	}
	if err := b.Tran("bad", "y", "", sw.DeviceOpts{}); err == nil {
		t.Error("a tran with one terminal was accepted")
	}
	if err := b.Tran("neg", "y", "z", sw.DeviceOpts{Ohms: -1}); err == nil {
		t.Error("a negative resistance was accepted")
	}
	s := stdSim(t, b)
	apply(t, s, "a=0")
	wantNode(t, s, "y", sw.V0, sw.Strong, sw.State0, "tran: supply -> strong (IEEE 1364-2005 §7.12)")
	wantNode(t, s, "z", sw.V0, sw.Pull, sw.StateL, "then rtran: strong -> pull (IEEE 1364-2005 §7.12)")
	nl := s.Netlist()
	d, _ := nl.LookupDevice("r")
	if dv := nl.Device(d); dv.Kind != sw.Tran || !dv.Resistive || dv.Ohms != 5e3 || dv.Strength != sw.Pull {
		t.Errorf("device r = %+v", dv)
	}
}
