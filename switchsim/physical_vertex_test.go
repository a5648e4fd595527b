package switchsim_test

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	sw "railyard/switchsim"
	"railyard/switchsim/gen"
)

// An unknown input stands for either value (IEEE 1164's X; the ternary
// method of Eichelberger 1965 and Bryant 1984 rests on it): a node that a
// settle with some inputs at X gives a value must have that value in the
// settle of every assignment of 0 and 1 to those inputs that gives it one
// (an X there says less, which contradicts nothing). Physical mode's
// vertex solve (physical_vertex.go) decides nodes the ternary rule leaves
// X; this checks, on random networks from the unknown start (one settle
// each, so no history differs), that it decides none wrongly.
//
// The nodes the ternary rule itself decides are left out: physical mode
// solves them with the devices of unknown state off, and a fight those
// devices would join can turn them round (found by this test: a node held
// at 0 by a strong pMOS chain that a pull-strength pMOS of unknown gate
// overpowers at the device level). That is the ternary rule's optimism in
// physical mode, not the vertex solve's, and is left for its own change.
func TestPhysUnknownInputsAreSound(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 17))
	checked, decided := 0, 0
	for net := 0; net < 2000; net++ {
		spec := gen.Random(rng, 3+rng.IntN(12), 3+rng.IntN(20))
		nl, err := compileSpec(spec)
		if err != nil {
			t.Fatal(err)
		}
		ins := nl.Inputs()
		drive := make([]sw.Drive, len(ins))
		var xs []int // positions in ins of the inputs at X
		for i := range ins {
			drive[i] = []sw.Drive{sw.Drive0, sw.Drive1, sw.DriveX}[rng.IntN(3)]
			if drive[i] == sw.DriveX && len(xs) < 4 {
				xs = append(xs, i)
			} else if drive[i] == sw.DriveX {
				drive[i] = sw.Drive0
			}
		}
		if len(xs) == 0 {
			continue
		}
		settle := func(d []sw.Drive) *sw.Sim {
			s := sw.NewSim(nl, sw.Options{Mode: sw.Physical})
			for i, n := range ins {
				s.SetInput(n, d[i])
			}
			s.Settle()
			return s
		}
		sx := settle(drive)
		for a := 0; a < 1<<len(xs); a++ {
			d := append([]sw.Drive(nil), drive...)
			for j, i := range xs {
				d[i] = sw.Drive(a >> j & 1)
			}
			s := settle(d)
			for n := 0; n < nl.NumNodes(); n++ {
				if nl.NodeKind(n) != sw.Internal {
					continue
				}
				want := sx.Node(n).Value
				if want == sw.VX || !sx.VertexDecided(n) {
					continue
				}
				got := s.Node(n).Value
				if got == sw.VX {
					continue // less known there (an oscillation forced to X, a level in the band): no contradiction
				}
				checked++
				if got != want {
					t.Fatalf("net %d: %s is %s with inputs %v, but %s with %v\n%s", net, nl.NodeName(n), want, drive, got, d, spec)
				}
			}
		}
		for n := 0; n < nl.NumNodes(); n++ {
			if nl.NodeKind(n) == sw.Internal && sx.VertexDecided(n) {
				decided++
			}
		}
	}
	if checked < 100 {
		t.Fatalf("only %d node values checked: the networks exercise nothing", checked)
	}
	t.Logf("%d values checked, %d nodes decided by the vertex solve with X inputs", checked, decided)
}

// fightUnknown builds y pulled to 0 by a wide nMOS whose gate a is driven,
// and to 1 by k long pMOS whose gate en is an input: with en at X, the
// ternary rule sees a strong 1 that may reach y against its strong 0.
func fightUnknown(t *testing.T, k int) *sw.Netlist {
	t.Helper()
	b := sw.NewBuilder()
	b.Input("a")
	b.Input("en")
	b.Output("y")
	if err := b.NMOS("pd", "a", "y", "gnd", sw.DeviceOpts{W: 2e-6, L: 0.18e-6}); err != nil {
		t.Fatal(err)
	}
	for i := 0; i < k; i++ {
		if err := b.PMOS("pu"+string(rune('a'+i)), "en", "vdd", "y", sw.DeviceOpts{W: 0.36e-6, L: 3.6e-6}); err != nil {
			t.Fatal(err)
		}
	}
	nl, err := b.Compile()
	if err != nil {
		t.Fatal(err)
	}
	return nl
}

// The vertex solve decides a fight the ternary rule cannot: k long pMOS
// (k' W/L = 60 uA/V^2 x 0.1 each, saturated: 6e-6/2 x 1.35^2 = 5.5 uA
// apiece) against an nMOS of 1.9 mA/V^2 in its linear region hold y near
// 0 V whether they conduct or not (level-1 equations, Shichman and Hodges
// 1968), so y is 0 with en unknown, at the level of its worst assignment,
// all of them on: exactly the level it has with en at 0. Ideal mode keeps
// the ternary X, and beyond maxVertexDevices (6) devices of unknown state
// so does physical mode.
func TestVertexDecidesAFightOfUnknownDevices(t *testing.T) {
	for _, k := range []int{1, 6, 7} {
		nl := fightUnknown(t, k)
		at := func(mode sw.Mode, en sw.Drive) (*sw.Sim, sw.NodeState) {
			s := sw.NewSim(nl, sw.Options{Mode: mode})
			foundSet(t, s, "a", sw.Drive1)
			foundSet(t, s, "en", en)
			s.Settle()
			return s, foundNode(s, "y")
		}
		s, y := at(sw.Physical, sw.DriveX)
		yn, _ := nl.Lookup("y")
		if k > 6 {
			if y.Value != sw.VX || s.VertexDecided(yn) {
				t.Errorf("k=%d: y = %s, decided by the vertex solve %v; want the ternary X beyond 6 devices", k, stateString(y), s.VertexDecided(yn))
			}
			continue
		}
		e := s.Explain(yn)
		if want := "decided at every assignment of the " + map[int]string{1: "1 device", 6: "6 devices"}[k] + " of unknown state"; !e.Analysis.Vertex || !strings.HasPrefix(s.AnalysisText(e), want) {
			t.Errorf("k=%d: y explained %+v %q, want %q...", k, e.Analysis, s.AnalysisText(e), want)
		}
		_, on := at(sw.Physical, sw.Drive0)
		if y.Value != sw.V0 || !s.VertexDecided(yn) || y.Volts != on.Volts {
			t.Errorf("k=%d: y = %s (decided by the vertex solve %v), want 0 at %.4f V, its level with every pMOS on", k, stateString(y), s.VertexDecided(yn), on.Volts)
		}
		// By hand: k saturated pMOS, k kp/2 (W/L) (vdd - Vtp)^2, against the
		// nMOS in its linear region, kn (W/L) ((vdd - Vtn) V - V^2/2); no
		// body effect, both sources at their rails.
		tc := nl.Tech
		ip := float64(k) * tc.Kp / 2 * (0.36 / 3.6) * (tc.Vdd - tc.Vtp) * (tc.Vdd - tc.Vtp)
		bn, od := tc.Kn*2/0.18, tc.Vdd-tc.Vtn
		want := od - math.Sqrt(od*od-2*ip/bn) // the root of bn (od V - V^2/2) = ip below od
		if math.Abs(y.Volts-want) > 1e-4 {
			t.Errorf("k=%d: y at %.5f V, the level-1 equations give %.5f V", k, y.Volts, want)
		}
		if _, yi := at(sw.Ideal, sw.DriveX); yi.Value != sw.VX {
			t.Errorf("k=%d: ideal y = %s, want X (strengths alone: a fight of equals)", k, stateString(yi))
		}
	}
}

// And stays out where the assignments disagree: a pull-up holds y at 1
// against an nMOS of unknown gate that beats it when on, so y is X, as
// the ternary rule says.
func TestVertexLeavesADisagreementUnknown(t *testing.T) {
	b := sw.NewBuilder()
	b.Input("en")
	b.Output("y")
	b.Pull("up", "y", true, sw.Pull)
	b.NMOS("pd", "en", "y", "gnd", sw.DeviceOpts{W: 1e-6, L: 0.18e-6})
	nl, err := b.Compile()
	if err != nil {
		t.Fatal(err)
	}
	s := sw.NewSim(nl, sw.Options{Mode: sw.Physical})
	foundSet(t, s, "en", sw.DriveX)
	s.Settle()
	yn, _ := nl.Lookup("y")
	if y := foundNode(s, "y"); y.Value != sw.VX || s.VertexDecided(yn) {
		t.Errorf("y = %s, decided by the vertex solve %v; want X", stateString(y), s.VertexDecided(yn))
	}
}

// A flip-flop of the shape many cell libraries draw (testdata/dff_rise_tgsl.sw:
// transmission-gate slave input, clocked-inverter feedback, the clock
// buffered twice inside the cell) keeps the edge-triggered function in
// physical mode on every single-input step from every state it reaches
// (the gallery's check). Between the two clock buffers' outputs the
// master's inverter drives m through the slave's transmission gate against
// the slave's feedback of unknown state (the slave is unwritten at the
// start): the ternary rule makes m X and the master loop rings; the
// devices keep m where the inverter holds it. Ideal mode, with strengths
// alone, still calls the first rising edge a race.
func TestVertexFlipFlopWithTransmissionGateSlave(t *testing.T) {
	nl := readGallery(t, "testdata/dff_rise_tgsl.sw")
	states, steps := checkGallery(t, nl, galleryModels["dff_rise"], sw.Physical)
	if states < 8 {
		t.Errorf("%d states reached in %d steps", states, steps)
	}
	s := sw.NewSim(nl, sw.Options{Mode: sw.Ideal})
	foundSet(t, s, "CK", sw.Drive0)
	foundSet(t, s, "D", sw.Drive0)
	s.Settle()
	foundSet(t, s, "CK", sw.Drive1)
	r := s.Settle()
	if q := foundNode(s, "Q"); q.Value != sw.VX || len(warned(s, r, sw.WarnRace)) == 0 {
		t.Errorf("ideal: the first rising edge gives Q = %s with races %v; want X from a race", stateString(q), warned(s, r, sw.WarnRace))
	}
}
