package switchsim_test

// Race analysis, case analysis, failed writes and shorts, checked against
// facts from outside the project (the source is named beside each check).

import (
	"math"
	"os"
	"strings"
	"testing"

	sw "railyard/switchsim"
	"railyard/switchsim/load"
	"railyard/switchsim/netfile"
)

// swNet compiles a design written in the .sw format.
func swNet(t testing.TB, src string) *sw.Netlist {
	t.Helper()
	d, err := netfile.Read("test.sw", []byte(src))
	if err != nil {
		t.Fatal(err)
	}
	return d.Netlist
}

func demoNet(t testing.TB, name string) *sw.Netlist {
	t.Helper()
	d, err := load.Host(load.Options{}).Design("demo:" + name)
	if err != nil {
		t.Fatal(err)
	}
	return d.Netlist
}

var bothModes = []sw.Mode{sw.Ideal, sw.Physical}

// warned returns the nodes that got a warning of kind, by name.
func warned(s *sw.Sim, r *sw.Result, kind sw.WarnKind) []string {
	var out []string
	for _, w := range r.Warnings {
		if w.Kind == kind {
			out = append(out, s.Netlist().NodeName(w.Node))
		}
	}
	return out
}

func has(list []string, name string) bool {
	for _, x := range list {
		if x == name {
			return true
		}
	}
	return false
}

// The static latch's hold race (issue: clk and d lowered together from
// clk=1 d=1): the stored value depends on which change arrives first, so
// the storage node is X with a race warning, decided in at most 2 x nodes
// + 4 rounds, and nothing is called an oscillation (Eichelberger 1965: a
// ternary X after phase B is a race under some assignment of delays).
func TestRaceStaticLatchHold(t *testing.T) {
	nl := demoNet(t, "static_latch")
	for _, mode := range bothModes {
		s := sw.NewSim(nl, sw.Options{Mode: mode})
		s.Settle()
		apply(t, s, "clk=1 d=1")
		r := apply(t, s, "clk=0 d=0")
		if got := warned(s, r, sw.WarnRace); !has(got, "s") {
			t.Errorf("%s: race warnings on %v, want one on the storage node s", mode, got)
		}
		if got := warned(s, r, sw.WarnOscillation); len(got) > 0 || r.Oscillated {
			t.Errorf("%s: oscillation on %v: the latch does not oscillate", mode, got)
		}
		if max := 2*nl.NumNodes() + 4; r.Rounds > max {
			t.Errorf("%s: %d rounds, want at most 2 x %d nodes + 4 = %d", mode, r.Rounds, nl.NumNodes(), max)
		}
		an := r.Analysis
		if !an.Ran || an.Why&sw.WhyInputs == 0 || !an.Decided || an.A.Rounds == 0 || an.B.Rounds == 0 {
			t.Errorf("%s: analysis %+v: want it run for two inputs, with both phases and a decision round", mode, an)
		}
		if got := foundNode(s, "s"); got.Value != sw.VX {
			t.Errorf("%s: s = %s, want X: its value depends on the order", mode, stateString(got))
		}
		n, _ := nl.Lookup("s")
		e := s.Explain(n)
		if e.Analysis.Kind != sw.WarnRace || len(e.Analysis.Inputs) != 2 {
			t.Errorf("%s: explanation of s: %+v", mode, e.Analysis)
		}
		if txt := s.AnalysisText(e); !strings.Contains(txt, "phase A (clk and d at X) made it X") || !strings.Contains(txt, "phase B") {
			t.Errorf("%s: explanation text %q does not say which phase made s X", mode, txt)
		}
		for _, w := range r.Warnings {
			if w.Kind == sw.WarnRace && w.Node == n {
				if msg := s.Message(w); !strings.Contains(msg, "clk and d changed together") || !strings.Contains(msg, "depends on their order") {
					t.Errorf("%s: race message %q", mode, msg)
				}
			}
		}
		// The same change one input at a time is no race: the latch closes,
		// then d moves (common practice: d may change while the latch holds).
		s = sw.NewSim(nl, sw.Options{Mode: mode})
		s.Settle()
		apply(t, s, "clk=1 d=1")
		apply(t, s, "clk=0")
		r = apply(t, s, "d=0")
		if got := warned(s, r, sw.WarnRace); len(got) > 0 || foundNode(s, "s").Value != sw.V1 {
			t.Errorf("%s: clk then d: races %v, s = %s; want no race and s holding 1", mode, got, stateString(foundNode(s, "s")))
		}
	}
}

// The SR latch of cross-coupled NOR gates with S and R falling together
// from 1 1: the textbook critical race (Brzozowski and Seger 1995), a race
// on both outputs. From S=1 R=0 the same fall is a plain hold.
func TestRaceSRLatchCritical(t *testing.T) {
	nl := swNet(t, `input s r
output q qb
use nor2 g1 r qb q
use nor2 g2 s q qb
`)
	for _, mode := range bothModes {
		s := sw.NewSim(nl, sw.Options{Mode: mode})
		s.Settle()
		apply(t, s, "s=1 r=1")
		r := apply(t, s, "s=0 r=0")
		got := warned(s, r, sw.WarnRace)
		if !has(got, "q") || !has(got, "qb") {
			t.Errorf("%s: races on %v, want q and qb (Brzozowski and Seger 1995, the critical race)", mode, got)
		}
		if r.Oscillated {
			t.Errorf("%s: called an oscillation; the latch settles one way or the other", mode)
		}
		apply(t, s, "s=1 r=0")
		r = apply(t, s, "s=0")
		if got := warned(s, r, sw.WarnRace); len(got) > 0 || foundNode(s, "q").Value != sw.V1 {
			t.Errorf("%s: set then hold: races %v, q = %s; want q holding 1", mode, got, stateString(foundNode(s, "q")))
		}
	}
}

// A gated ring of three inverting stages still oscillates; a ring of two
// holds (common practice: an odd ring has no stable state, an even one is
// a latch). The ring of three is found by race analysis, as an
// oscillation, in a bounded number of rounds.
func TestRaceRingsOddAndEven(t *testing.T) {
	odd := swNet(t, `input en
use nand2 g0 en r2 r0
use inv i1 r0 r1
use inv i2 r1 r2
`)
	even := swNet(t, `input en
use nand2 g0 en r1 r0
use inv i1 r0 r1
`)
	for _, mode := range bothModes {
		s := sw.NewSim(odd, sw.Options{Mode: mode})
		s.Settle()
		apply(t, s, "en=0")
		r := apply(t, s, "en=1")
		got := warned(s, r, sw.WarnOscillation)
		if !r.Oscillated || !has(got, "r0") || !has(got, "r1") || !has(got, "r2") {
			t.Errorf("%s: odd ring: oscillation on %v (Oscillated %v), want r0 r1 r2 (common practice)", mode, got, r.Oscillated)
		}
		if r.Settled || r.Analysis.Why&sw.WhyUnsettled == 0 {
			t.Errorf("%s: odd ring: Settled %v, why %v: the unit-delay rounds do not settle", mode, r.Settled, r.Analysis.Why)
		}
		if r.Rounds > sw.DefaultRoundLimit(odd)+1 {
			t.Errorf("%s: odd ring: %d rounds", mode, r.Rounds)
		}
		s = sw.NewSim(even, sw.Options{Mode: mode})
		s.Settle()
		apply(t, s, "en=0")
		r = apply(t, s, "en=1")
		if r.Oscillated || len(warned(s, r, sw.WarnRace)) > 0 || foundNode(s, "r0").Value != sw.V1 || foundNode(s, "r1").Value != sw.V0 {
			t.Errorf("%s: even ring: oscillated %v, r0 %s r1 %s: want it holding r0=1 r1=0 (common practice)", mode, r.Oscillated,
				stateString(foundNode(s, "r0")), stateString(foundNode(s, "r1")))
		}
	}
}

// The static-1 hazard of a two-level AND-OR selector (here NAND-NAND):
// y = s a + not(s) b with a = b = 1 may pulse to 0 while s changes
// (Eichelberger 1965), a glitch on the output; a transmission-gate selector
// with both data inputs 1 has none (common practice: one gate or the other
// always passes a 1, and the output keeps its charge between).
func TestGlitchSelectors(t *testing.T) {
	andor := swNet(t, `input s a b
output y
use inv is s sb
use nand2 n1 a s x1
use nand2 n2 b sb x2
use nand2 n3 x1 x2 y
`)
	tg := swNet(t, `input s a b
output y
use inv is s sb
tgate ta s sb a y
tgate tb sb s b y
`)
	for _, mode := range bothModes {
		for _, c := range []struct {
			nl     *sw.Netlist
			name   string
			glitch bool
		}{{andor, "AND-OR", true}, {tg, "transmission-gate", false}} {
			s := sw.NewSim(c.nl, sw.Options{Mode: mode, Races: sw.RacesEveryStep})
			s.Settle()
			apply(t, s, "s=0 a=1 b=1")
			r := apply(t, s, "s=1")
			if got := has(warned(s, r, sw.WarnGlitch), "y"); got != c.glitch {
				t.Errorf("%s: %s selector, s 0 -> 1 with a = b = 1: glitch on y %v, want %v", mode, c.name, got, c.glitch)
			}
			if foundNode(s, "y").Value != sw.V1 {
				t.Errorf("%s: %s selector: y = %s, want 1", mode, c.name, stateString(foundNode(s, "y")))
			}
			// With the data inputs different, the output changes: a transition, no glitch.
			apply(t, s, "b=0")
			if r := apply(t, s, "s=0"); len(warned(s, r, sw.WarnGlitch)) > 0 {
				t.Errorf("%s: %s selector: a change of y called a glitch", mode, c.name)
			}
		}
		// Without asking, a single-input step that settles is not analysed.
		s := sw.NewSim(andor, sw.Options{Mode: mode})
		s.Settle()
		apply(t, s, "s=0 a=1 b=1")
		if r := apply(t, s, "s=1"); r.Analysis.Ran {
			t.Errorf("%s: race analysis ran on a settled single-input step without being asked", mode)
		}
	}
}

// A master-slave flip-flop clocked with its data held steady has no race
// on any clock edge, in any state it can reach (common practice: that is
// what the master-slave arrangement is for). The reachable states are found
// by a breadth-first search over single-input steps, d moving only while
// clk is low (so the master holds d through the high phase and d is steady
// at both edges); every clock edge is analysed (race analysis on every step).
func TestRaceMasterSlaveNoRace(t *testing.T) {
	nl := demoNet(t, "flipflop")
	clk, _ := nl.Lookup("clk")
	for _, mode := range bothModes {
		s := sw.NewSim(nl, sw.Options{Mode: mode, Races: sw.RacesEveryStep})
		for _, n := range nl.Inputs() {
			s.SetInput(n, sw.Drive0)
		}
		s.Settle()
		seen := map[string]bool{}
		key := func() string {
			var b strings.Builder
			for n := 0; n < nl.NumNodes(); n++ {
				b.WriteString(s.Node(n).State.String())
			}
			return b.String()
		}
		queue := []*sw.Snapshot{s.Snapshot()}
		seen[key()] = true
		edges := 0
		for len(queue) > 0 {
			snap := queue[0]
			queue = queue[1:]
			for _, n := range nl.Inputs() {
				s.Restore(snap)
				if n != clk && s.InputDrive(clk) == sw.Drive1 {
					continue // d changes only while clk is low: held steady around both edges
				}
				s.SetInput(n, 1-s.InputDrive(n))
				r := s.Settle()
				if n == clk {
					edges++
					if got := warned(s, r, sw.WarnRace); len(got) > 0 {
						t.Errorf("%s: a clock edge with d steady races on %v", mode, got)
					}
				}
				if r.Oscillated {
					t.Errorf("%s: oscillation", mode)
				}
				if k := key(); !seen[k] {
					seen[k] = true
					queue = append(queue, s.Snapshot())
				}
			}
		}
		if edges < 4 {
			t.Errorf("%s: only %d clock edges from %d states", mode, edges, len(seen))
		}
	}
}

// A write that loses to the keeper of a feedback loop is a write-fail
// naming both sides and, in physical mode, the margin against the loop's
// switching threshold VM = (Vtn + r (vdd - |Vtp|)) / (1 + r),
// r = sqrt(kp wp / (kn wn)) (the square-law inverter's VM, a textbook
// closed form; the loop's inverter has the technology's default sizes).
func TestWriteFailStrongKeeper(t *testing.T) {
	nl := demoNet(t, "strong_keeper")
	s := sw.NewSim(nl, sw.Options{Mode: sw.Physical})
	s.Settle()
	apply(t, s, "clk=1 d=0")
	r := apply(t, s, "d=1") // write a 1 over the held 0
	var w *sw.Warning
	for i := range r.Warnings {
		if r.Warnings[i].Kind == sw.WarnWriteFail {
			w = &r.Warnings[i]
		}
	}
	if w == nil {
		t.Fatalf("no write-fail in %+v", r.Warnings)
	}
	if nl.NodeName(w.Node) != "s" || !strings.HasPrefix(nl.Device(w.Device).Name, "pass.") || nl.Device(w.Other).Name != "keep.n" {
		t.Errorf("write-fail on %s, write %s, keeper %s; want s, pass.n or pass.p, keep.n",
			nl.NodeName(w.Node), nl.Device(w.Device).Name, nl.Device(w.Other).Name)
	}
	tc := nl.Tech
	ratio := math.Sqrt(tc.Kp * tc.Wp / (tc.Kn * tc.Wn))
	vm := (tc.Vtn + ratio*(tc.Vdd-tc.Vtp)) / (1 + ratio)
	if v := foundNode(s, "s").Volts; math.Abs(w.Margin-(v-vm)) > 1e-9 || w.Margin >= 0 {
		t.Errorf("margin %.4f V, want s's %.4f V less VM %.4f V, negative (the write missed)", w.Margin, v, vm)
	}
	if msg := s.Message(*w); !strings.Contains(msg, "below the loop's switching threshold") || !strings.Contains(msg, "keep.n") {
		t.Errorf("message %q", msg)
	}
	// Ideal mode weighs the strengths: the weak keeper loses, the write succeeds.
	s = sw.NewSim(nl, sw.Options{Mode: sw.Ideal})
	s.Settle()
	apply(t, s, "clk=1 d=0")
	if r := apply(t, s, "d=1"); len(warned(s, r, sw.WarnWriteFail)) > 0 {
		t.Errorf("ideal mode: write-fail although the weak keeper loses")
	}
	// The well-sized latch passes in both modes.
	for _, mode := range bothModes {
		s := sw.NewSim(demoNet(t, "static_latch"), sw.Options{Mode: mode})
		s.Settle()
		apply(t, s, "clk=1 d=0")
		if r := apply(t, s, "d=1"); len(warned(s, r, sw.WarnWriteFail)) > 0 {
			t.Errorf("%s: static_latch: write-fail on a write that wins", mode)
		}
	}
}

// In ideal mode the strengths decide: a keeper marked strong against a
// write through pull-strength devices fails, and says which is stronger.
// Ratioed logic fights by design and is no failed write: a weak pull-up
// against a pull-down network without feedback (common practice:
// pseudo-nMOS), nor the same pull-ups in a latch of pseudo-nMOS NOR gates,
// where the pull-up is always on (no write path).
func TestWriteFailIdealAndRatioed(t *testing.T) {
	strongKeeper := swNet(t, `input clk d rst
output q
use inv ci clk clkb
tgate pass clk clkb d s strength=pull
use inv fwd s sb
use inv keep sb s
use inv out sb q
nmos clear rst s gnd strength=supply
`)
	for _, mode := range bothModes {
		s := sw.NewSim(strongKeeper, sw.Options{Mode: mode})
		s.Settle()
		apply(t, s, "rst=1 clk=0 d=0")
		apply(t, s, "rst=0")
		r := apply(t, s, "clk=1 d=1")
		if mode == sw.Ideal {
			if got := warned(s, r, sw.WarnWriteFail); !has(got, "s") {
				t.Errorf("ideal: write-fail on %v, want s (a pull write against a strong keeper)", got)
			}
			for _, w := range r.Warnings {
				if w.Kind == sw.WarnWriteFail && !strings.Contains(s.Message(w), "the write path is pull, the keeper strong") {
					t.Errorf("ideal message %q", s.Message(w))
				}
			}
		}
	}
	ratioed := swNet(t, `input a
output y
pullup load y strength=weak
nmos pd a y gnd
`)
	pseudoLatch := swNet(t, `input s r
output q qb
pullup lq q strength=weak
nmos r1 r q gnd
nmos r2 qb q gnd
pullup lqb qb strength=weak
nmos s1 s qb gnd
nmos s2 q qb gnd
`)
	for _, mode := range bothModes {
		s := sw.NewSim(ratioed, sw.Options{Mode: mode})
		s.Settle()
		r := apply(t, s, "a=1")
		if len(warned(s, r, sw.WarnWriteFail)) > 0 || foundNode(s, "y").Value != sw.V0 {
			t.Errorf("%s: ratioed inverter: write-fail %v, y %s", mode, warned(s, r, sw.WarnWriteFail), stateString(foundNode(s, "y")))
		}
		if !has(warned(s, r, sw.WarnContention), "y") {
			t.Errorf("%s: ratioed inverter: no contention on y (it fights by design)", mode)
		}
		s = sw.NewSim(pseudoLatch, sw.Options{Mode: mode})
		s.Settle()
		for _, step := range []string{"s=1 r=0", "s=0", "r=1", "r=0"} {
			if r := apply(t, s, step); len(warned(s, r, sw.WarnWriteFail)) > 0 {
				t.Errorf("%s: pseudo-nMOS latch, %s: write-fail on %v", mode, step, warned(s, r, sw.WarnWriteFail))
			}
		}
	}
}

// A device on (or unknown) between two sources of different values is a
// short (common practice: a path from supply to ground), found when its
// gate or a terminal input changes; off, or between equal values, it is not.
func TestShort(t *testing.T) {
	nl := swNet(t, `input s a b
nmos shorted s vdd gnd
nmos link vdd a b
`)
	for _, mode := range bothModes {
		s := sw.NewSim(nl, sw.Options{Mode: mode})
		shorts := func(r *sw.Result) []string {
			var out []string
			for _, w := range r.Warnings {
				if w.Kind == sw.WarnShort {
					out = append(out, nl.Device(w.Device).Name+" "+nl.NodeName(w.Node)+" "+nl.NodeName(w.Other))
				}
			}
			return out
		}
		r := apply(t, s, "s=0 a=0 b=0")
		if got := shorts(r); len(got) > 0 {
			t.Errorf("%s: s=0, a=b: shorts %v", mode, got)
		}
		r = apply(t, s, "s=1")
		if got := shorts(r); len(got) != 1 || got[0] != "shorted vdd gnd" {
			t.Errorf("%s: s=1: shorts %v, want shorted between vdd and gnd", mode, got)
		} else if msg := s.Message(r.Warnings[0]); !strings.Contains(msg, "shorted is on between vdd (1) and gnd (0)") {
			t.Errorf("%s: message %q", mode, msg)
		}
		r = apply(t, s, "s=0 b=1")
		if got := shorts(r); len(got) != 1 || got[0] != "link a b" {
			t.Errorf("%s: a=0 b=1 through link: shorts %v, want link between a and b", mode, got)
		}
		r = apply(t, s, "a=1")
		if got := shorts(r); len(got) > 0 {
			t.Errorf("%s: a=b=1: shorts %v", mode, got)
		}
		r = apply(t, s, "s=x")
		if got := shorts(r); len(got) != 1 || !strings.Contains(s.Message(r.Warnings[0]), "unknown state") {
			t.Errorf("%s: s=x: shorts %v: a device of unknown state between the rails may short them", mode, got)
		}
	}
}

// Case analysis: the full adder whose XOR and XNOR are restored by a
// cross-coupled pair reads X on SUM and COUT from the unknown start
// without it in ideal mode (every restorer is gated by an X node it would
// resolve), and the full adder's truth table with it (common practice); the
// explanation names the node split on (Bryant and Seger's case splitting).
// Physical mode reads the truth table without case analysis: the
// restorers' devices are few enough to solve the groups at every on/off
// assignment of them (physical_vertex.go), and the sum and carry come out
// the same at each.
func TestCaseAnalysisAdder(t *testing.T) {
	nl := readGallery(t, "testdata/fa_xcouple.sw")
	for _, mode := range bothModes {
		for v := 0; v < 8; v++ {
			a, b, c := v>>2&1, v>>1&1, v&1
			in := map[string]int{"A": a, "B": b, "CI": c}
			for _, splits := range []int{-1, 0} {
				s := sw.NewSim(nl, sw.Options{Mode: mode, CaseSplits: splits})
				for name, x := range in {
					foundSet(t, s, name, sw.Drive(x))
				}
				r := s.Settle()
				sum, cout := foundNode(s, "SUM"), foundNode(s, "COUT")
				wantS, wantC := sw.Value(a^b^c), sw.Value(a&b|a&c|b&c)
				if mode == sw.Physical {
					if sum.Value != wantS || cout.Value != wantC {
						t.Errorf("%s %d%d%d splits %d: SUM %s COUT %s, want %s %s (the full adder)", mode, a, b, c, splits, stateString(sum), stateString(cout), wantS, wantC)
					}
					continue
				}
				if splits < 0 {
					if sum.Value != sw.VX && cout.Value != sw.VX {
						t.Errorf("%s %d%d%d: SUM %s COUT %s without case analysis; the case is meant to read X", mode, a, b, c, stateString(sum), stateString(cout))
					}
					continue
				}
				if sum.Value != wantS || cout.Value != wantC {
					t.Errorf("%s %d%d%d: SUM %s COUT %s, want %s %s (the full adder)", mode, a, b, c, stateString(sum), stateString(cout), wantS, wantC)
				}
				if r.Analysis.Splits == 0 || !r.Analysis.Decided {
					t.Errorf("%s %d%d%d: %d splits, decided %v", mode, a, b, c, r.Analysis.Splits, r.Analysis.Decided)
				}
				n, _ := nl.Lookup("SUM")
				if e := s.Explain(n); !e.Analysis.Case || !strings.HasPrefix(s.AnalysisText(e), "resolved by case analysis on ") {
					t.Errorf("%s %d%d%d: SUM explained %+v %q", mode, a, b, c, e.Analysis, s.AnalysisText(e))
				}
			}
		}
	}
}

// What the branches of a split do not agree on stays X: a latch never
// written has two stable states (common practice), and case analysis
// leaves it X, as it does not make an uninitialised X into a race.
func TestCaseAnalysisLeavesUnwrittenLatch(t *testing.T) {
	nl := demoNet(t, "static_latch")
	for _, mode := range bothModes {
		s := sw.NewSim(nl, sw.Options{Mode: mode})
		s.Settle()
		r := apply(t, s, "clk=0 d=0")
		if got := foundNode(s, "s"); got.Value != sw.VX {
			t.Errorf("%s: the latch never written reads %s", mode, stateString(got))
		}
		if r.Analysis.Splits == 0 {
			t.Errorf("%s: no split on the unwritten latch's X", mode)
		}
		if len(warned(s, r, sw.WarnRace)) > 0 {
			t.Errorf("%s: an uninitialised X called a race", mode)
		}
	}
}

// Issue 19: a clock edge whose unit-delay rounds do not settle is decided by
// race analysis, in bounded rounds, never called an oscillation by the
// rounds alone. The flip-flop shape of the issue with the stack nodes
// given the storage nodes' charge class (charge=medium, against their
// structural default small, switchsim §1): in ideal
// mode the stack node between a clocked inverter's enable and data devices
// keeps charge of the other value at the storage node's class, the
// unit-delay rounds of a clock edge never settle, and the analysis calls it
// what the switch-level model says it is, a race (the charge may share
// under clock skew), not an oscillation, in bounded rounds. Physical mode
// weighs the extracted capacitances and gives Q.
func TestRaceUnannotatedStackNodes(t *testing.T) {
	src := strings.Replace(mustRead(t, "testdata/gallery/dff_rise_tinv.sw"), "output Q\n",
		"output Q\nnode a_137_47_ a_174_13_ a_211_47_ a_248_13_ a_285_47_ a_322_13_ a_359_47_ a_396_13_ cap=0.4f charge=medium\n", 1)
	nl := swNet(t, src)
	s := sw.NewSim(nl, sw.Options{Mode: sw.Ideal})
	s.Settle()
	apply(t, s, "CLK=0 D=0")
	apply(t, s, "CLK=1")
	apply(t, s, "CLK=0")
	apply(t, s, "D=1")
	r := apply(t, s, "CLK=1")
	if r.Settled || r.Analysis.Why != sw.WhyUnsettled || r.Oscillated || len(warned(s, r, sw.WarnRace)) == 0 || r.Rounds > sw.DefaultRoundLimit(nl)+1 {
		t.Errorf("ideal: settled %v, why %v, oscillated %v, races %v, %d rounds", r.Settled, r.Analysis.Why, r.Oscillated, warned(s, r, sw.WarnRace), r.Rounds)
	}
	// Without race analysis the same edge ends in forcing rounds that call
	// the latch nodes oscillating (what issue 19 saw).
	old := sw.NewSim(nl, sw.Options{Mode: sw.Ideal, Races: sw.RacesOff})
	old.Settle()
	for _, step := range []string{"CLK=0 D=0", "CLK=1", "CLK=0", "D=1"} {
		apply(t, old, step)
	}
	if r := apply(t, old, "CLK=1"); !r.Oscillated {
		t.Errorf("without race analysis the edge was expected to end in forcing rounds")
	}
	s = sw.NewSim(nl, sw.Options{Mode: sw.Physical})
	s.Settle()
	for _, step := range []string{"CLK=0 D=0", "CLK=1", "CLK=0", "D=1", "CLK=1"} {
		r = apply(t, s, step)
	}
	if q := foundNode(s, "Q"); q.Value != sw.V1 || r.Oscillated {
		t.Errorf("physical: Q = %s, oscillated %v; want 1", stateString(q), r.Oscillated)
	}
}

func mustRead(t *testing.T, path string) string {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return string(b)
}

// The latch and flip-flop demos' own steps change d only while the clock
// is steady: no race, no oscillation, no failed write on any of them.
func TestRaceDemoSteps(t *testing.T) {
	for _, c := range []struct {
		demo string
		none []sw.WarnKind // kinds no step may show
	}{
		{"static_latch", []sw.WarnKind{sw.WarnRace, sw.WarnOscillation, sw.WarnWriteFail}},
		{"flipflop", []sw.WarnKind{sw.WarnRace, sw.WarnOscillation}},
	} {
		ld, err := load.Host(load.Options{}).Open("demo:"+c.demo, "")
		if err != nil {
			t.Fatal(err)
		}
		d, st := ld.Design, ld.Steps
		for _, mode := range bothModes {
			s := sw.NewSim(d.Netlist, sw.Options{Mode: mode})
			s.Settle()
			for _, row := range st.Rows {
				for i, n := range st.Apply {
					s.SetInput(n, row.Drives[i])
				}
				for _, w := range s.Settle().Warnings {
					for _, k := range c.none {
						if w.Kind == k {
							t.Errorf("%s %s line %d: %s", c.demo, mode, row.Line, s.Message(w))
						}
					}
				}
			}
		}
	}
}

// A warm settle allocates nothing, with race analysis and case analysis
// running in it too (the undo log and every scratch slice are reused).
func TestRaceAllocFree(t *testing.T) {
	nl := demoNet(t, "static_latch")
	clk, _ := nl.Lookup("clk")
	d, _ := nl.Lookup("d")
	for _, mode := range bothModes {
		s := sw.NewSim(nl, sw.Options{Mode: mode})
		s.Settle()
		i := 1 // clk and d go to 1 together (a write), then to 0 together (the hold race)
		step := func() {
			v := sw.Drive(i % 2)
			s.SetInput(clk, v)
			s.SetInput(d, v)
			r := s.Settle()
			if v == sw.Drive0 && (!r.Analysis.Ran || r.Analysis.Splits == 0 || len(r.Warnings) == 0) {
				t.Fatalf("%s: the step did not exercise the analyses: %+v", mode, r.Analysis)
			}
			i++
		}
		for k := 0; k < 8; k++ {
			step()
		}
		if a := testing.AllocsPerRun(40, step); a != 0 {
			t.Errorf("%s: %v allocations per warm settle with race and case analysis", mode, a)
		}
	}
}

// The structure found at compile time: a latch's storage node and its
// keeper close a loop, its output does not; a transmission gate is a pass
// device, a series stack's devices are not (common practice for what these
// circuits are).
func TestStructure(t *testing.T) {
	nl := demoNet(t, "static_latch")
	for name, want := range map[string]bool{"s": true, "s_b": true, "q": false, "clk_b": false} {
		n, _ := nl.Lookup(name)
		if nl.InFeedbackLoop(n) != want {
			t.Errorf("%s in a feedback loop: %v, want %v", name, !want, want)
		}
	}
	for name, want := range map[string]bool{"keep.n": true, "keep.p": true, "fwd.n": true, "out.n": false, "pass.n": false} {
		d, _ := nl.LookupDevice(name)
		if nl.ClosesLoop(d) != want {
			t.Errorf("%s closes the loop: %v, want %v", name, !want, want)
		}
	}
	nand := swNet(t, "input a b\noutput y\nuse nand2 g a b y\ntgate t a ab y z\nuse inv i a ab\n")
	for name, want := range map[string]bool{"t.n": true, "t.p": true, "g.na": false, "g.nb": false, "g.pa": false} {
		d, _ := nand.LookupDevice(name)
		if nand.PassDevice(d) != want {
			t.Errorf("%s a pass device: %v, want %v", name, !want, want)
		}
	}
}

// RacesGlitches (switchsim §5): on a single-input step phase A runs alone
// before the rounds. Eichelberger 1965's static-1 hazard: a NAND-NAND
// (AND-OR) selector y = a s + b s_b with a = b = 1 keeps y at 1 when s
// changes alone, but s_b lags s, so y may pulse: a glitch warning on the
// output. The transmission-gate selector with both data 1 has none (common
// practice). The rounds still decide the step: every node ends as under
// RacesWhenNeeded, which reports nothing on these single-input steps.
func TestRacesGlitchesSingleInput(t *testing.T) {
	andor := swNet(t, `design andor
input s a b
output y
use inv si s sb
use nand2 g1 a s p
use nand2 g2 b sb q
use nand2 g3 p q y
`)
	tgsel := swNet(t, `design tgsel
input s a b
output y
use inv si s sb
tgate ta sb s a y
tgate tb s sb b y
`)
	for _, mode := range bothModes {
		for _, c := range []struct {
			nl   *sw.Netlist
			want bool
		}{{andor, true}, {tgsel, false}} {
			g := sw.NewSim(c.nl, sw.Options{Mode: mode, Races: sw.RacesGlitches})
			w := sw.NewSim(c.nl, sw.Options{Mode: mode})
			for _, s := range []*sw.Sim{g, w} {
				s.Settle()
				apply(t, s, "s=0 a=1 b=1")
			}
			for _, step := range []string{"s=1", "s=0"} {
				rg, rw := apply(t, g, step), apply(t, w, step)
				got := warned(g, rg, sw.WarnGlitch)
				if fired := len(got) == 1 && got[0] == "y"; fired != c.want {
					t.Errorf("%s %s %s: glitches %v, want y: %v", mode, c.nl.Name, step, got, c.want)
				}
				if !rg.Analysis.Alone || rg.Analysis.Ran || rg.Analysis.WentX == 0 {
					t.Errorf("%s %s %s: analysis %+v, want phase A alone", mode, c.nl.Name, step, rg.Analysis)
				}
				if len(warned(w, rw, sw.WarnGlitch)) != 0 || rw.Analysis.Alone {
					t.Errorf("%s %s %s: RacesWhenNeeded reported a glitch or ran phase A", mode, c.nl.Name, step)
				}
				for n := 0; n < c.nl.NumNodes(); n++ {
					if a, b := g.Node(n), w.Node(n); a.Value != b.Value || a.State != b.State {
						t.Errorf("%s %s %s: %s is %s with glitches, %s without", mode, c.nl.Name, step, c.nl.NodeName(n), stateString(a), stateString(b))
					}
				}
				if len(got) > 0 && c.want {
					if msg := g.Message(rg.Warnings[0]); !strings.Contains(msg, "when the rounds settled") {
						t.Errorf("glitch message %q", msg)
					}
				}
			}
		}
	}
}
