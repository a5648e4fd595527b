package switchsim_test

import (
	"math"
	"math/rand/v2"
	"testing"

	sw "railyard/switchsim"
	"railyard/switchsim/gen"
)

// Physical mode on random networks (switchsim/gen): whatever the network,
// every settle ends, and every estimate agrees with the value it decided
// (DEVELOPERS.md, physical mode): a full 0/1 sits at the rail, a driven or stored 1 at or
// above VIH, a 0 at or below VIL, every voltage within the rails, and every
// change carries a delay that is a non-negative number or unknown.
func TestPhysRandomInvariants(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 11))
	drives := []sw.Drive{sw.Drive0, sw.Drive1, sw.Drive0, sw.Drive1, sw.DriveX, sw.DriveZ}
	for net := 0; net < 400; net++ {
		spec := gen.Random(rng, 3+rng.IntN(14), 3+rng.IntN(24))
		nl, err := compileSpec(spec)
		if err != nil {
			t.Fatal(err)
		}
		tc := nl.Tech
		vil, vih, _ := tc.Thresholds()
		s := sw.NewSim(nl, sw.Options{Mode: sw.Physical})
		for step := 0; step < 8; step++ {
			for _, in := range nl.Inputs() {
				if step == 0 || rng.IntN(3) == 0 {
					s.SetInput(in, drives[rng.IntN(len(drives))])
				}
			}
			r := s.Settle()
			if len(r.Delay) != len(r.Changed) {
				t.Fatalf("net %d step %d: %d delays for %d changes", net, step, len(r.Delay), len(r.Changed))
			}
			for _, d := range r.Delay {
				if d < 0 || math.IsInf(d, 0) {
					t.Fatalf("net %d step %d: delay %g", net, step, d)
				}
			}
			for n := 0; n < nl.NumNodes(); n++ {
				x := s.Node(n)
				bad := ""
				switch {
				case !math.IsNaN(x.Volts) && (x.Volts < 0 || x.Volts > tc.Vdd):
					bad = "outside the rails"
				case x.State == sw.State0 && x.Volts != 0, x.State == sw.State1 && x.Volts != tc.Vdd:
					bad = "a full level off the rail"
				case x.Value == sw.V1 && !(x.Volts >= vih):
					bad = "a 1 below VIH"
				case x.Value == sw.V0 && !(x.Volts <= vil):
					bad = "a 0 above VIL"
				}
				if bad != "" {
					t.Fatalf("net %d step %d: %s = %+v: %s\n%s", net, step, nl.NodeName(n), x, bad, spec)
				}
			}
		}
	}
}
