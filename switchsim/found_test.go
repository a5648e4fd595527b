package switchsim_test

// Engine bugs found by the differential tests, each reduced to a minimal
// case and kept as a regression test. The expected values come from
// DEVELOPERS.md "The engine's rules, exactly" (quoted beside each check)
// and are what the reference solver (reference_test.go) computes.

import (
	"testing"

	sw "railyard/switchsim"
)

func foundCompile(t *testing.T, b *sw.Builder) *sw.Netlist {
	t.Helper()
	nl, err := b.Compile()
	if err != nil {
		t.Fatal(err)
	}
	return nl
}

func foundSet(t *testing.T, s *sw.Sim, name string, d sw.Drive) {
	t.Helper()
	n, ok := s.Netlist().Lookup(name)
	if !ok {
		t.Fatalf("no node %s", name)
	}
	if err := s.SetInput(n, d); err != nil {
		t.Fatal(err)
	}
}

func foundNode(s *sw.Sim, name string) sw.NodeState {
	n, _ := s.Netlist().Lookup(name)
	return s.Node(n)
}

// A released input driven again in the same Settle as an input declared
// before it is seeded as an internal node before its own drive is applied,
// then solved as a group: it reads as floating charge although it is driven.
func TestFoundInputDrivenAgainSolvedAsGroup(t *testing.T) {
	b := sw.NewBuilder()
	b.Input("a")
	b.Input("b")
	b.NMOS("n", "vdd", "a", "b", sw.DeviceOpts{}) // always on
	s := sw.NewSim(foundCompile(t, b), sw.Options{Mode: sw.Ideal})
	foundSet(t, s, "a", sw.Drive0)
	foundSet(t, s, "b", sw.DriveZ)
	s.Settle()
	foundSet(t, s, "a", sw.Drive1)
	foundSet(t, s, "b", sw.Drive0)
	r := s.Settle()
	// "Sources are the rails and every input that is driven (0, 1 or x, at
	// supply)"; a group is a set of non-source nodes, so b is never solved.
	if got := foundNode(s, "b"); got.Value != sw.V0 || got.Strength != sw.Supply || got.State != sw.State0 || got.Floating {
		t.Errorf("b driven 0 reads %+v, want 0 at supply, state 0, not floating", got)
	}
	// No non-source node exists, so no round has seeds: "The settle ends
	// after the first round with no seeds."
	if r.Rounds != 0 {
		t.Errorf("Rounds = %d, want 0: there is no group to solve", r.Rounds)
	}
}

// enabledRing is a NAND (enable en) and two inverters in a ring: three
// inverting stages, so it oscillates while en is 1 (common practice).
func enabledRing() *sw.Builder {
	b := sw.NewBuilder()
	b.Input("en")
	b.PMOS("p0", "en", "vdd", "r0", sw.DeviceOpts{})
	b.PMOS("p0b", "r2", "vdd", "r0", sw.DeviceOpts{})
	b.NMOS("m0", "en", "r0", "x0", sw.DeviceOpts{})
	b.NMOS("m0b", "r2", "x0", "gnd", sw.DeviceOpts{})
	b.PMOS("p1", "r0", "vdd", "r1", sw.DeviceOpts{})
	b.NMOS("m1", "r0", "r1", "gnd", sw.DeviceOpts{})
	b.PMOS("p2", "r1", "vdd", "r2", sw.DeviceOpts{})
	b.NMOS("m2", "r1", "r2", "gnd", sw.DeviceOpts{})
	return b
}

// When the round limit is passed, the round that sets the oscillating nodes
// to X gets no entry in Result.RoundEnd, yet Rounds counts past it: Round(i)
// then returns the wrong round for i after it and panics for i = Rounds-1,
// and the X changes it made are in no round.
func TestFoundOscillationRoundNotRecorded(t *testing.T) {
	s := sw.NewSim(foundCompile(t, enabledRing()), sw.Options{Mode: sw.Ideal})
	foundSet(t, s, "en", sw.Drive0)
	s.Settle()
	nl := s.Netlist()
	before := make([]sw.NodeState, nl.NumNodes())
	for n := range before {
		before[n] = s.Node(n)
	}
	foundSet(t, s, "en", sw.Drive1)
	r := s.Settle()
	if !r.Oscillated {
		t.Fatal("the enabled ring did not oscillate") // common practice: an odd ring oscillates
	}
	if len(r.RoundEnd) != r.Rounds {
		t.Errorf("Rounds = %d but RoundEnd has %d entries: Round(%d) cannot be read", r.Rounds, len(r.RoundEnd), r.Rounds-1)
	}
	// "every node whose value, strength or state changed is recorded for
	// round k": a node that ends the settle different must be in some round.
	recorded := map[int32]bool{}
	for _, n := range r.Changed {
		recorded[n] = true
	}
	for n := range before {
		if nl.NodeKind(n) != sw.Internal {
			continue // rails and driven inputs are sources, never solved
		}
		if a, b := s.Node(n), before[n]; (a.Value != b.Value || a.Strength != b.Strength || a.State != b.State) && !recorded[int32(n)] {
			t.Errorf("%s went from %v to %v but is in no round", nl.NodeName(n), stateString(before[n]), stateString(s.Node(n)))
		}
	}
}

// The oscillation rule sets to X "every node that changed within the last
// max(16, limit/8) rounds", but a node solved in this settle and not
// changed in it has last-change round 0, which passes the engine's test
// lastChange > round - window whenever round <= window: with a RoundLimit
// below 16 every node solved in the settle is set to X.
func TestFoundOscillationForcesUnchangedNode(t *testing.T) {
	b := sw.NewBuilder()
	b.Input("a")
	b.Input("b")
	b.PMOS("yp", "a", "vdd", "y", sw.DeviceOpts{}) // y = not a
	b.NMOS("yn", "a", "y", "gnd", sw.DeviceOpts{})
	b.NMOS("yk", "b", "y", "k", sw.DeviceOpts{}) // b joins y to the otherwise bare node k
	prev := "b"
	for _, z := range []string{"z1", "z2", "z3"} { // three rounds of work after b changes
		b.PMOS(z+"p", prev, "vdd", z, sw.DeviceOpts{})
		b.NMOS(z+"n", prev, z, "gnd", sw.DeviceOpts{})
		prev = z
	}
	// Race analysis off: the case is the forcing round's rule.
	s := sw.NewSim(foundCompile(t, b), sw.Options{Mode: sw.Ideal, RoundLimit: 2, Races: sw.RacesOff})
	foundSet(t, s, "a", sw.Drive1)
	foundSet(t, s, "b", sw.DriveX)
	if r := s.Settle(); r.Oscillated {
		t.Fatalf("the first settle passed the limit (%d rounds); the case is wrong", r.Rounds)
	}
	if got := foundNode(s, "y"); got.State != sw.State0 {
		t.Fatalf("y = %v, want 0 (common practice: an inverter of 1)", stateString(got))
	}
	foundSet(t, s, "b", sw.Drive1)
	r := s.Settle() // z1, z2, z3 change in rounds 1, 2, 3: the limit 2 is passed
	if !r.Oscillated {
		t.Fatalf("the limit was not passed (%d rounds); the case is wrong", r.Rounds)
	}
	// y's group is solved in round 1 (yk switched on) but y stays 0: it did
	// not change in this settle, so it must not be set to X.
	if got := foundNode(s, "y"); got.State != sw.State0 {
		t.Errorf("y = %v after the oscillation rule, want 0: y did not change in this settle", stateString(got))
	}
}

// When a settle stops at the second round limit, the devices gated by the
// nodes it set to X keep their old state for good: even after another
// Settle, Conduction(d) disagrees with the gate value ("nMOS: on for gate
// 1, off for 0, unknown for X"; "every device whose gate node changed ...
// takes its new state"), and their groups are never re-solved.
func TestFoundDeviceStateStaleAfterStop(t *testing.T) {
	b := sw.NewBuilder()
	b.NMOS("up", "vdd", "vdd", "n", sw.DeviceOpts{})                  // n = 1 at strong
	b.PMOS("pass", "gnd", "n", "m", sw.DeviceOpts{Strength: sw.Weak}) // always on, weak
	b.NMOS("down", "n", "m", "gnd", sw.DeviceOpts{})                  // m = 0 once n is 1
	b.PMOS("tap", "m", "t", "gnd", sw.DeviceOpts{})                   // one more round of work
	// Limit 2: rounds 1-2 solve, round 3 forces n m t to X, round 4 solves
	// the fan-out (n is 1 again), round 5 passes the second limit: n is set
	// to X and the settle stops.
	s := sw.NewSim(foundCompile(t, b), sw.Options{Mode: sw.Ideal, RoundLimit: 2}) // the first settle forces
	r := s.Settle()
	if !r.Oscillated {
		t.Fatalf("the limit was not passed (%d rounds); the case is wrong", r.Rounds)
	}
	// Nothing set: a Settle that does no round leaves every device as it
	// was, so by then each must agree with its gate.
	if r := s.Settle(); r.Rounds > 0 {
		return // the devices were brought up to date and the groups solved
	}
	nl := s.Netlist()
	for d := 0; d < nl.NumDevices(); d++ {
		dev := nl.Device(d)
		if dev.Gate < 0 {
			continue
		}
		want := sw.Unknown // DEVELOPERS.md "Devices"
		switch g := s.Node(dev.Gate).Value; {
		case g == sw.V1 && dev.Kind == sw.NMOS, g == sw.V0 && dev.Kind == sw.PMOS:
			want = sw.On
		case g != sw.VX:
			want = sw.Off
		}
		if got := s.Conduction(d); got != want {
			t.Errorf("device %s is %v but its gate %s is %v", dev.Name, got, nl.NodeName(dev.Gate), s.Node(dev.Gate).Value)
		}
	}
}

// "every node that changed in rounds L+1-W .. L, W = max(16, L/8), is set
// to X": the engine took the nodes whose last change is after round L+1-W,
// W-1 rounds, leaving out round L+1-W itself.
func TestFoundOscillationWindowOffByOne(t *testing.T) {
	b := enabledRing()
	// A chain from en whose last stage changes exactly in round L-W+1 = 5
	// (L = 20, W = 16): five inverters, each one round later.
	prev := "en"
	for i := 1; i <= 5; i++ {
		x := "c" + string(rune('0'+i))
		b.PMOS(x+"p", prev, "vdd", x, sw.DeviceOpts{})
		b.NMOS(x+"n", prev, x, "gnd", sw.DeviceOpts{})
		prev = x
	}
	// Race analysis off: the case is the forcing round's window.
	s := sw.NewSim(foundCompile(t, b), sw.Options{Mode: sw.Ideal, RoundLimit: 20, Races: sw.RacesOff})
	foundSet(t, s, "en", sw.Drive0)
	s.Settle()
	foundSet(t, s, "en", sw.Drive1)
	r := s.Settle()
	if !r.Oscillated {
		t.Fatal("the enabled ring did not oscillate")
	}
	if got := foundNode(s, "c5"); got.Value != sw.VX {
		t.Errorf("c5 changed in round 5, within the last 16 rounds before the limit 20, but is %v", stateString(got))
	}
}

// An input set to another drive and back before Settle is not changed, so
// the settle has no seeds and 0 rounds; the engine counted it as changed
// and did one round in which nothing changed.
func TestFoundInputSetAndRestored(t *testing.T) {
	b := sw.NewBuilder()
	b.Input("a")
	b.NMOS("n", "vdd", "a", "y", sw.DeviceOpts{})
	s := sw.NewSim(foundCompile(t, b), sw.Options{Mode: sw.Ideal})
	foundSet(t, s, "a", sw.Drive0)
	s.Settle()
	foundSet(t, s, "a", sw.Drive1)
	foundSet(t, s, "a", sw.Drive0)
	if r := s.Settle(); r.Rounds != 0 {
		t.Errorf("Rounds = %d with no input changed since the last Settle, want 0", r.Rounds)
	}
}
