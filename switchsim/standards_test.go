package switchsim_test

// External checks: facts from published standards and common practice,
// each with its source beside the value. None of the expected values is
// taken from the engine.

import (
	"fmt"
	"strings"
	"testing"

	sw "railyard/switchsim"
	"railyard/switchsim/gen"
)

// stdSim builds b and returns an ideal-mode Sim, settled once.
func stdSim(t *testing.T, b *sw.Builder) *sw.Sim {
	t.Helper()
	s := sw.NewSim(foundCompile(t, b), sw.Options{Mode: sw.Ideal})
	s.Settle()
	return s
}

// apply sets "name=drive ..." and settles.
func apply(t *testing.T, s *sw.Sim, assign string) *sw.Result {
	t.Helper()
	for _, f := range strings.Fields(assign) {
		name, d, _ := strings.Cut(f, "=")
		dr, ok := sw.ParseDrive(d)
		if !ok {
			t.Fatalf("bad drive %q", f)
		}
		foundSet(t, s, name, dr)
	}
	return s.Settle()
}

func wantNode(t *testing.T, s *sw.Sim, name string, v sw.Value, st sw.Strength, state sw.State, why string) {
	t.Helper()
	got := foundNode(s, name)
	if got.Value != v || got.Strength != st || got.State != state {
		t.Errorf("%s = %s, want %s (%s %s): %s", name, stateString(got), state, v, st, why)
	}
}

// The strength ladder: IEEE 1364-2005 §7.9, strength levels supply 7,
// strong 6, pull 5, large 4, weak 3, medium 2, small 1, highz 0 (the
// table of strength names and levels; section number from memory).
func TestStdStrengthLadder(t *testing.T) {
	ladder := []struct {
		s     sw.Strength
		name  string
		level int
	}{
		{sw.Supply, "supply", 7}, // IEEE 1364-2005 §7.9
		{sw.Strong, "strong", 6}, // IEEE 1364-2005 §7.9
		{sw.Pull, "pull", 5},     // IEEE 1364-2005 §7.9
		{sw.Large, "large", 4},   // IEEE 1364-2005 §7.9
		{sw.Weak, "weak", 3},     // IEEE 1364-2005 §7.9
		{sw.Medium, "medium", 2}, // IEEE 1364-2005 §7.9
		{sw.Small, "small", 1},   // IEEE 1364-2005 §7.9
		{sw.HighZ, "highz", 0},   // IEEE 1364-2005 §7.9
	}
	for _, l := range ladder {
		if got := l.s.String(); got != l.name {
			t.Errorf("strength %d named %q, want %q", l.level, got, l.name)
		}
		if got := l.s.IEEE(); got != l.level {
			t.Errorf("%s has level %d, want %d", l.name, got, l.level)
		}
		if p, ok := sw.ParseStrength(strings.ToUpper(l.name)); !ok || p != l.s {
			t.Errorf("ParseStrength(%q) = %v, %v", strings.ToUpper(l.name), p, ok)
		}
	}
	// IEEE 1364-2005 §7.9: large, medium and small are the charge storage
	// strengths (trireg); the others are driving strengths.
	for _, l := range ladder {
		want := l.name == "large" || l.name == "medium" || l.name == "small"
		if l.s.IsCharge() != want {
			t.Errorf("%s: IsCharge %v, want %v", l.name, l.s.IsCharge(), want)
		}
	}
}

// twoDrivers makes node y driven by vdd through an nMOS of cap up (gate
// input gu) and by gnd through an nMOS of cap down (gate input gd).
func twoDrivers(up, down sw.Strength) *sw.Builder {
	b := sw.NewBuilder()
	b.Input("gu")
	b.Input("gd")
	b.NMOS("nu", "gu", "vdd", "y", sw.DeviceOpts{Strength: up})
	b.NMOS("nd", "gd", "y", "gnd", sw.DeviceOpts{Strength: down})
	return b
}

// Combination of signals, IEEE 1364-2005 §7 (combined signals of
// unambiguous strength): the stronger wins; equal strengths with different
// values give X at that strength.
func TestStdCombination(t *testing.T) {
	// Stronger wins (IEEE 1364-2005 §7): strong 1 against pull 0 is a 1 at
	// strong. The state H is the project's rule for a contested node
	// (DEVELOPERS.md "State": contested gives L/H).
	s := stdSim(t, twoDrivers(sw.Strong, sw.Pull))
	apply(t, s, "gu=1 gd=1")
	wantNode(t, s, "y", sw.V1, sw.Strong, sw.StateH, "IEEE 1364-2005 §7: the stronger signal wins")
	s = stdSim(t, twoDrivers(sw.Weak, sw.Pull))
	apply(t, s, "gu=1 gd=1")
	wantNode(t, s, "y", sw.V0, sw.Pull, sw.StateL, "IEEE 1364-2005 §7: the stronger signal wins")
	// Equal strengths, different values: X at that strength (IEEE 1364-2005 §7).
	for _, st := range []sw.Strength{sw.Strong, sw.Pull, sw.Weak} {
		s = stdSim(t, twoDrivers(st, st))
		apply(t, s, "gu=1 gd=1")
		wantNode(t, s, "y", sw.VX, st, sw.StateX, "IEEE 1364-2005 §7: equal strengths, different values give X")
	}
	// Equal strengths, equal values stay (IEEE 1364-2005 §7).
	b := sw.NewBuilder()
	b.Input("a")
	b.NMOS("n1", "vdd", "a", "y", sw.DeviceOpts{Strength: sw.Pull})
	b.Pull("pu", "y", true, sw.Pull)
	s = stdSim(t, b)
	apply(t, s, "a=1")
	wantNode(t, s, "y", sw.V1, sw.Pull, sw.StateH, "IEEE 1364-2005 §7: equal values combine to that value")
	// Pull-ups and pull-downs default to pull strength (IEEE 1364-2005 §7:
	// the pullup and pulldown sources drive pull strength by default).
	b = sw.NewBuilder()
	b.Pull("pd", "y", false, sw.HighZ)
	wantNode(t, stdSim(t, b), "y", sw.V0, sw.Pull, sw.StateL, "IEEE 1364-2005 §7: pulldown defaults to pull strength")
}

// Strength reduction by nonresistive devices, IEEE 1364-2005 §7: an nmos,
// pmos or cmos switch passes its input's strength, except that supply
// becomes strong.
func TestStdSupplyThroughSwitchBecomesStrong(t *testing.T) {
	b := sw.NewBuilder()
	b.Input("a")
	b.NMOS("n", "vdd", "a", "y", sw.DeviceOpts{})     // a nonresistive switch, always on
	b.PMOS("p", "gnd", "a", "yp", sw.DeviceOpts{})    // the same for a pMOS
	b.TGate("t", "vdd", "gnd", "a", "yt", 0, 0, 0, 0) // and a transmission gate (cmos switch)
	s := stdSim(t, b)
	for _, c := range []struct {
		in string
		v  sw.Value
		st sw.State
	}{{"a=1", sw.V1, sw.State1}, {"a=0", sw.V0, sw.State0}} {
		apply(t, s, c.in)
		for _, y := range []string{"y", "yp", "yt"} {
			wantNode(t, s, y, c.v, sw.Strong, c.st, "IEEE 1364-2005 §7: supply through a nonresistive device is strong")
		}
	}
	// The rails and a driven input are supply themselves (IEEE 1364-2005
	// §7: supply0/supply1 nets have supply strength; switchsim §2 drives
	// inputs at supply).
	wantNode(t, s, "vdd", sw.V1, sw.Supply, sw.State1, "IEEE 1364-2005 §7: supply1")
	wantNode(t, s, "gnd", sw.V0, sw.Supply, sw.State0, "IEEE 1364-2005 §7: supply0")
}

// Trireg charge, IEEE 1364-2005 §7 (trireg net strength) and §6 (trireg
// nets): a trireg that loses its drivers keeps its value at its charge
// strength, medium unless declared small or large; when triregs share
// charge the larger charge strength wins, and equal charge strengths with
// different values give X.
func TestStdTriregCharge(t *testing.T) {
	b := sw.NewBuilder()
	b.Input("d")
	b.Input("g")
	b.NMOS("n", "g", "d", "y", sw.DeviceOpts{})
	b.Output("y") // observed: not a diffusion node, whose default class is small (switchsim §1)
	s := stdSim(t, b)
	apply(t, s, "d=1 g=1")
	wantNode(t, s, "y", sw.V1, sw.Strong, sw.State1, "common practice: an on nMOS passes its input")
	apply(t, s, "g=0")
	wantNode(t, s, "y", sw.V1, sw.Medium, sw.StateZ, "IEEE 1364-2005 §7: trireg charge strength defaults to medium")
	if !foundNode(s, "y").Floating {
		t.Error("y holds charge but is not Floating")
	}

	// Charge sharing: a node holding 1 at large and one holding 0 at small,
	// then joined with no driver: both take the large node's 1, at large.
	share := func(ca, cb sw.Strength) *sw.Sim {
		b := sw.NewBuilder()
		b.Input("w")
		b.Input("j")
		b.Input("da")
		b.Input("db")
		b.NMOS("wa", "w", "da", "a", sw.DeviceOpts{}) // write a and b ...
		b.NMOS("wb", "w", "db", "b", sw.DeviceOpts{})
		b.NMOS("join", "j", "a", "b", sw.DeviceOpts{}) // ... then join them
		b.Node("a", 0, ca)
		b.Node("b", 0, cb)
		s := stdSim(t, b)
		apply(t, s, "w=1 j=0 da=1 db=0")
		apply(t, s, "w=0")
		apply(t, s, "j=1")
		return s
	}
	s = share(sw.Large, sw.Small)
	wantNode(t, s, "b", sw.V1, sw.Large, sw.StateZ, "IEEE 1364-2005 §7: the larger charge strength wins")
	wantNode(t, s, "a", sw.V1, sw.Large, sw.StateZ, "IEEE 1364-2005 §7: the larger charge strength wins")
	s = share(sw.Medium, sw.Medium)
	wantNode(t, s, "a", sw.VX, sw.Medium, sw.StateZ, "IEEE 1364-2005 §7: equal charge strengths, different values give X")
	wantNode(t, s, "b", sw.VX, sw.Medium, sw.StateZ, "IEEE 1364-2005 §7: equal charge strengths, different values give X")
	// Any driver beats any charge (IEEE 1364-2005 §7: a trireg's charge
	// strength applies only when no driver drives it; Bryant 1984 ranks all
	// charge below all driving strengths).
	b = sw.NewBuilder()
	b.Input("d")
	b.Input("g")
	b.NMOS("n", "g", "d", "y", sw.DeviceOpts{})
	b.Pull("weakdown", "y", false, sw.Weak)
	b.Node("y", 0, sw.Large)
	s = stdSim(t, b)
	apply(t, s, "d=1 g=1")
	apply(t, s, "g=0")
	wantNode(t, s, "y", sw.V0, sw.Weak, sw.StateL, "IEEE 1364-2005 §7: a weak driver beats large charge")
}

// Bryant 1984's ternary rule for devices of unknown state: a node keeps a
// definite value only if its sure signal is stronger than every opposite
// signal that could reach it through unknown devices.
func TestStdBryantTernary(t *testing.T) {
	mk := func(potential sw.Strength) *sw.Sim {
		b := sw.NewBuilder()
		b.Input("g")
		b.NMOS("sure", "vdd", "vdd", "y", sw.DeviceOpts{})                   // a sure 1 at strong
		b.NMOS("maybe", "g", "y", "gnd", sw.DeviceOpts{Strength: potential}) // a 0 through an unknown device
		s := stdSim(t, b)
		apply(t, s, "g=x")
		return s
	}
	// A sure signal beats a weaker potential opposite (Bryant 1984). The
	// state H is DEVELOPERS.md's contested rule (gnd is on the boundary).
	wantNode(t, mk(sw.Pull), "y", sw.V1, sw.Strong, sw.StateH, "Bryant 1984: the sure signal beats a weaker potential")
	wantNode(t, mk(sw.Weak), "y", sw.V1, sw.Strong, sw.StateH, "Bryant 1984: the sure signal beats a weaker potential")
	// An equal (or stronger) potential opposite gives X (Bryant 1984).
	wantNode(t, mk(sw.Strong), "y", sw.VX, sw.Strong, sw.StateX, "Bryant 1984: an equal potential opposite gives X")
	wantNode(t, mk(sw.Supply), "y", sw.VX, sw.Supply, sw.StateX, "Bryant 1984: a stronger potential opposite gives X")
	// A potential of the same value changes nothing (Bryant 1984: only an
	// opposing signal can make the node X).
	b := sw.NewBuilder()
	b.Input("g")
	b.NMOS("sure", "vdd", "vdd", "y", sw.DeviceOpts{})
	b.NMOS("maybe", "g", "y", "vdd", sw.DeviceOpts{})
	s := stdSim(t, b)
	apply(t, s, "g=x")
	wantNode(t, s, "y", sw.V1, sw.Strong, sw.State1, "Bryant 1984: a potential of the same value is no conflict")
	// A floating node behind an unknown device may or may not be reached:
	// X (Bryant 1984).
	b = sw.NewBuilder()
	b.Input("d")
	b.Input("g")
	b.NMOS("n", "g", "d", "y", sw.DeviceOpts{})
	s = stdSim(t, b)
	apply(t, s, "d=0 g=1")
	apply(t, s, "g=0 d=1")
	apply(t, s, "g=x")
	wantNode(t, s, "y", sw.VX, sw.Strong, sw.StateX, "Bryant 1984: stored 0 and a possible strong 1 give X")
}

// Switches, common practice: an nMOS conducts for gate 1, a pMOS for gate
// 0, and a transmission gate passes either value when on.
func TestStdSwitches(t *testing.T) {
	b := sw.NewBuilder()
	b.Input("d")
	b.Input("g")
	b.Input("gb")
	b.NMOS("n", "g", "d", "yn", sw.DeviceOpts{})
	b.PMOS("p", "g", "d", "yp", sw.DeviceOpts{})
	b.TGate("t", "g", "gb", "d", "yt", 0, 0, 0, 0)
	s := stdSim(t, b)
	for _, d := range []string{"0", "1"} {
		v := sw.V0
		st := sw.State0
		if d == "1" {
			v, st = sw.V1, sw.State1
		}
		apply(t, s, "g=1 gb=0 d="+d)
		wantNode(t, s, "yn", v, sw.Strong, st, "common practice: an nMOS conducts for gate 1")
		wantNode(t, s, "yt", v, sw.Strong, st, "common practice: a transmission gate passes 0 and 1")
		if !foundNode(s, "yp").Floating {
			t.Errorf("yp = %s with gate 1, want floating: common practice, a pMOS is off for gate 1", stateString(foundNode(s, "yp")))
		}
		apply(t, s, "g=0 gb=1")
		apply(t, s, "d="+map[string]string{"0": "1", "1": "0"}[d]) // change d while the nMOS is off
		wantNode(t, s, "yp", 1-v, sw.Strong, 1-st, "common practice: a pMOS conducts for gate 0")
		if got := foundNode(s, "yn"); got.Value != v || !got.Floating {
			t.Errorf("yn = %s with gate 0, want the old %s held as charge: common practice, an nMOS is off for gate 0", stateString(got), v)
		}
		if got := foundNode(s, "yt"); got.Value != v || !got.Floating {
			t.Errorf("yt = %s with the gate off, want the old %s held: common practice", stateString(got), v)
		}
	}
}

// cmos builds the named gate from library-free devices: inverter y = not a,
// NAND2 y = not (a and b), the textbook series/parallel networks (common practice).
func TestStdInverterAndNand(t *testing.T) {
	b := sw.NewBuilder()
	b.Input("a")
	b.Input("b")
	b.PMOS("ip", "a", "vdd", "inv", sw.DeviceOpts{})
	b.NMOS("in", "a", "inv", "gnd", sw.DeviceOpts{})
	b.PMOS("pa", "a", "vdd", "nand", sw.DeviceOpts{}) // pull-up: two pMOS in parallel
	b.PMOS("pb", "b", "vdd", "nand", sw.DeviceOpts{})
	b.NMOS("na", "a", "nand", "mid", sw.DeviceOpts{}) // pull-down: two nMOS in series
	b.NMOS("nb", "b", "mid", "gnd", sw.DeviceOpts{})
	s := stdSim(t, b)
	// Truth tables (common practice): NOT and NAND.
	for _, c := range []struct {
		a, b      string
		inv, nand sw.State
	}{
		{"0", "0", sw.State1, sw.State1},
		{"0", "1", sw.State1, sw.State1},
		{"1", "0", sw.State0, sw.State1},
		{"1", "1", sw.State0, sw.State0},
	} {
		apply(t, s, "a="+c.a+" b="+c.b)
		for _, y := range []struct {
			name string
			want sw.State
		}{{"inv", c.inv}, {"nand", c.nand}} {
			if got := foundNode(s, y.name).State; got != y.want {
				t.Errorf("a=%s b=%s: %s = %s, want %s (common practice: truth table)", c.a, c.b, y.name, got, y.want)
			}
		}
	}
	// With an input at X the output is X where the other input does not
	// decide it (common practice: X propagates unless masked).
	apply(t, s, "a=x b=0")
	if got := foundNode(s, "nand").State; got != sw.State1 {
		t.Errorf("nand(x, 0) = %s, want 1: a 0 input decides a NAND (common practice)", got)
	}
	apply(t, s, "b=1")
	if got := foundNode(s, "nand").State; got != sw.StateX {
		t.Errorf("nand(x, 1) = %s, want X (common practice)", got)
	}
}

// oddRing returns a ring of n inverting stages, the first a NAND gated by
// en so that the ring can be held still (common practice: a ring
// oscillator with an enable).
func oddRing(n int) *sw.Builder {
	b := sw.NewBuilder()
	b.Input("en")
	last := fmt.Sprintf("r%d", n-1)
	b.PMOS("p0", "en", "vdd", "r0", sw.DeviceOpts{})
	b.PMOS("p0b", last, "vdd", "r0", sw.DeviceOpts{})
	b.NMOS("m0", "en", "r0", "x0", sw.DeviceOpts{})
	b.NMOS("m0b", last, "x0", "gnd", sw.DeviceOpts{})
	for i := 1; i < n; i++ {
		in, out := fmt.Sprintf("r%d", i-1), fmt.Sprintf("r%d", i)
		b.PMOS("p"+out, in, "vdd", out, sw.DeviceOpts{})
		b.NMOS("m"+out, in, out, "gnd", sw.DeviceOpts{})
	}
	return b
}

// A gated ring of an odd number of inverting stages oscillates when enabled
// and holds still when not (common practice); an even ring is stable.
func TestStdRingOscillates(t *testing.T) {
	for _, n := range []int{3, 5, 7} {
		s := stdSim(t, oddRing(n))
		if r := apply(t, s, "en=0"); r.Oscillated {
			t.Errorf("ring of %d disabled: oscillated (common practice: the NAND holds it)", n)
		}
		if got := foundNode(s, "r0").State; got != sw.State1 {
			t.Errorf("ring of %d disabled: r0 = %s, want 1 (common practice: NAND with a 0 input)", n, got)
		}
		if r := apply(t, s, "en=1"); !r.Oscillated {
			t.Errorf("ring of %d enabled: did not oscillate in %d rounds (common practice: an odd ring oscillates)", n, r.Rounds)
		}
		if got := foundNode(s, "r0").Value; got != sw.VX {
			t.Errorf("ring of %d enabled: r0 = %s, want X after oscillating (DEVELOPERS.md: oscillating nodes become X)", n, got)
		}
	}
	// An even ring (a NAND and three inverters: four inverting stages) is
	// stable once enabled (common practice: an even ring latches).
	s := stdSim(t, oddRing(4))
	apply(t, s, "en=0")
	if r := apply(t, s, "en=1"); r.Oscillated {
		t.Errorf("ring of 4 enabled oscillated in %d rounds (common practice: an even ring is bistable)", r.Rounds)
	}
}

// A static latch, two cross-coupled inverters (the feedback one weak, a
// keeper) with a write transmission gate, holds what was written after the
// gate closes, driven and not floating (common practice).
func TestStdStaticLatchHolds(t *testing.T) {
	b := sw.NewBuilder()
	b.Input("d")
	b.Input("wr")
	b.Input("wrb")
	b.TGate("write", "wr", "wrb", "d", "s", 0, 0, 0, 0)
	b.PMOS("fp", "s", "vdd", "sb", sw.DeviceOpts{}) // forward inverter
	b.NMOS("fn", "s", "sb", "gnd", sw.DeviceOpts{})
	b.PMOS("kp", "sb", "vdd", "s", sw.DeviceOpts{Strength: sw.Weak}) // weak keeper
	b.NMOS("kn", "sb", "s", "gnd", sw.DeviceOpts{Strength: sw.Weak})
	s := stdSim(t, b)
	for _, c := range []struct {
		d        string
		v        sw.Value
		sb       sw.State
		hold, wr sw.State
	}{
		{"1", sw.V1, sw.State0, sw.StateH, sw.State1},
		{"0", sw.V0, sw.State1, sw.StateL, sw.State0},
		{"1", sw.V1, sw.State0, sw.StateH, sw.State1},
	} {
		apply(t, s, "wr=1 wrb=0 d="+c.d)
		if got := foundNode(s, "s").State; got != c.wr {
			t.Errorf("writing %s: s = %s, want %s (common practice: the write gate overpowers the keeper)", c.d, got, c.wr)
		}
		apply(t, s, "wr=0 wrb=1")
		apply(t, s, "d=x") // the data input moves while the gate is closed
		got := foundNode(s, "s")
		if got.Value != c.v || got.Floating {
			t.Errorf("after writing %s and closing: s = %s, want %s held by the keeper, not floating (common practice)", c.d, stateString(got), c.v)
		}
		if got.State != c.hold { // switchsim §2: driven only at weak strength is L/H
			t.Errorf("after writing %s and closing: s = %s, want %s (the keeper is weak)", c.d, got.State, c.hold)
		}
		if got := foundNode(s, "sb").State; got != c.sb {
			t.Errorf("after writing %s: sb = %s, want %s (common practice: the forward inverter)", c.d, got, c.sb)
		}
	}
}

// The six states use the letters of IEEE 1164 std_logic: 0 and 1 forcing,
// L and H weak 0 and 1, Z high impedance, X unknown.
func TestStdIEEE1164Letters(t *testing.T) {
	letters := []struct {
		s      sw.State
		letter string
	}{
		{sw.State0, "0"}, // IEEE 1164: '0' forcing 0
		{sw.State1, "1"}, // IEEE 1164: '1' forcing 1
		{sw.StateL, "L"}, // IEEE 1164: 'L' weak 0
		{sw.StateH, "H"}, // IEEE 1164: 'H' weak 1
		{sw.StateZ, "Z"}, // IEEE 1164: 'Z' high impedance
		{sw.StateX, "X"}, // IEEE 1164: 'X' forcing unknown
	}
	for _, l := range letters {
		if got := l.s.String(); got != l.letter {
			t.Errorf("state %d prints %q, want %q", l.s, got, l.letter)
		}
		for _, in := range []string{l.letter, strings.ToLower(l.letter)} {
			if p, ok := sw.ParseState(in); !ok || p != l.s {
				t.Errorf("ParseState(%q) = %v, %v", in, p, ok)
			}
		}
	}
	// The letters' meaning holds in simulation: L is a weak 0, H a weak 1
	// (IEEE 1164), here from a pull-down and a pull-up alone.
	b := sw.NewBuilder()
	b.Pull("pd", "lo", false, sw.HighZ)
	b.Pull("pu", "hi", true, sw.HighZ)
	s := stdSim(t, b)
	wantNode(t, s, "lo", sw.V0, sw.Pull, sw.StateL, "IEEE 1164: L is a weak 0")
	wantNode(t, s, "hi", sw.V1, sw.Pull, sw.StateH, "IEEE 1164: H is a weak 1")
}

// The generators build what they say (common practice for each circuit):
// the mux tree selects d[sel], the flip-flop chain shifts on the rising
// clock edge, the inverter chain inverts n times.
func TestStdGenerators(t *testing.T) {
	var s *sw.Sim
	for _, k := range []int{1, 2, 3} {
		s := stdSim(t, gen.MuxTree(k))
		n := 1 << k
		var data []string
		for i := 0; i < n; i++ {
			data = append(data, fmt.Sprintf("d%d=%d", i, (i*5+1)%3%2)) // an irregular pattern
		}
		apply(t, s, strings.Join(data, " "))
		for sel := 0; sel < n; sel++ {
			var sels []string
			for l := 0; l < k; l++ {
				sels = append(sels, fmt.Sprintf("s%d=%d", l, sel>>l&1))
			}
			apply(t, s, strings.Join(sels, " "))
			want := sw.Value((sel*5 + 1) % 3 % 2)
			if got := foundNode(s, "y"); got.Value != want || got.Strength != sw.Strong {
				t.Errorf("mux %d:1, select %d: y = %s, want d%d = %s at strong (common practice)", n, sel, stateString(got), sel, want)
			}
		}
	}

	// The chain's clock and its complement are two inputs changed together,
	// and its feedback is transmission gates: under clock skew a slave's
	// feedback gate and its input gate conduct at once and the old value
	// fights the new one at equal strength, so race analysis calls every
	// edge a race. The generator is checked as built, for simultaneous
	// edges, with race analysis off.
	s = sw.NewSim(foundCompile(t, gen.FlipFlopChain(3)), sw.Options{Mode: sw.Ideal, Races: sw.RacesOff})
	s.Settle()
	bits := []string{"1", "0", "1", "1", "0"}
	var shifted []sw.Value
	for _, bit := range bits {
		apply(t, s, "clk=0 clkb=1 d="+bit) // master takes d
		apply(t, s, "clk=1 clkb=0")        // rising edge: the slave takes the master
		shifted = append([]sw.Value{sw.Value(bit[0] - '0')}, shifted...)
		for i := 0; i < 3 && i < len(shifted); i++ {
			if got := foundNode(s, fmt.Sprintf("q%d", i)); got.Value != shifted[i] || got.State > sw.State1 {
				t.Errorf("after %d clocks q%d = %s, want %s (common practice: a shift register)", len(shifted), i, stateString(got), shifted[i])
			}
		}
	}
	s = sw.NewSim(foundCompile(t, gen.FlipFlopChainPreset(6)), sw.Options{Mode: sw.Ideal, Races: sw.RacesOff})
	s.Settle()
	apply(t, s, "clk=1 clkb=0 pre=1 d=0")
	apply(t, s, "pre=0")
	for i := 0; i < 6; i++ {
		if got := foundNode(s, fmt.Sprintf("q%d", i)); got.Value != sw.Value(i%2) {
			t.Errorf("preset: q%d = %s, want %d", i, stateString(got), i%2)
		}
	}

	s = stdSim(t, gen.InverterChain(5))
	apply(t, s, "in=1")
	for i := 1; i <= 5; i++ {
		want := sw.State(i%2 ^ 1) // x1 = 0, x2 = 1, ...
		if got := foundNode(s, fmt.Sprintf("x%d", i)).State; got != want {
			t.Errorf("inverter chain: x%d = %s, want %s (common practice)", i, got, want)
		}
	}

	for _, n := range []int{21, 100, 200, 333} {
		nl := foundCompile(t, gen.Sized(n))
		if nl.NumNodes() != n {
			t.Errorf("Sized(%d) has %d nodes", n, nl.NumNodes())
		}
	}
}
