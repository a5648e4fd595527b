package switchsim_test

import (
	"fmt"
	"math/rand/v2"
	"testing"

	sw "railyard/switchsim"
	"railyard/switchsim/gen"
)

// idealPair runs one network through two Sims in ideal mode, the general
// resolve alone (slow) and with its fast paths (fast: one node, solved and
// written in one pass without the group's lists, solveAlone; a group every device of
// which is on and passes at strong, reached by a source; a one-input step
// of logic without feedback, which keeps no undo log, settlesAlone),
// and fails at the first difference. The oracle is the general path (the
// rules of DEVELOPERS.md "Resolving a group", checked against the
// reference solver by diff_test.go): the fast paths must give exactly what
// it gives, rounds, changes, warnings, analyses and explanations included.
type idealPair struct {
	t          *testing.T
	name       string
	nl         *sw.Netlist
	slow, fast *sw.Sim
	settles    int
}

func newIdealPair(t *testing.T, name string, nl *sw.Netlist, races sw.RaceMode) *idealPair {
	opt := sw.Options{Mode: sw.Ideal, Races: races}
	ip := &idealPair{t: t, name: name, nl: nl, slow: sw.NewSim(nl, opt), fast: sw.NewSim(nl, opt)}
	ip.slow.SetIdealFastPaths(false)
	return ip
}

func (ip *idealPair) set(n int, d sw.Drive) {
	if err := ip.slow.SetInput(n, d); err != nil {
		ip.t.Fatalf("%s: %v", ip.name, err)
	}
	ip.fast.SetInput(n, d)
}

func (ip *idealPair) settle(what string) {
	t := ip.t
	ip.settles++
	rs, rf := ip.slow.Settle(), ip.fast.Settle()
	at := fmt.Sprintf("%s, settle %d (%s)", ip.name, ip.settles, what)
	if a, b := fmt.Sprintf("%d %v %v %v %+v", rs.Rounds, rs.RoundEnd, rs.Settled, rs.Oscillated, rs.Analysis),
		fmt.Sprintf("%d %v %v %v %+v", rf.Rounds, rf.RoundEnd, rf.Settled, rf.Oscillated, rf.Analysis); a != b {
		t.Fatalf("%s: rounds and analysis\n%s\n%s", at, a, b)
	}
	if len(rs.Changed) != len(rf.Changed) {
		t.Fatalf("%s: %d / %d changes", at, len(rs.Changed), len(rf.Changed))
	}
	for i := range rs.Changed {
		if rs.Changed[i] != rf.Changed[i] || !sameF(rs.Delay[i], rf.Delay[i]) || !sameNode(rs.After[i], rf.After[i]) {
			t.Fatalf("%s: change %d: node %d after %+v / node %d after %+v", at, i, rs.Changed[i], rs.After[i], rf.Changed[i], rf.After[i])
		}
	}
	if a, b := fmt.Sprintf("%+v", rs.Warnings), fmt.Sprintf("%+v", rf.Warnings); a != b {
		t.Fatalf("%s: warnings\n%s\n%s", at, a, b)
	}
	for n := 0; n < ip.nl.NumNodes(); n++ {
		if a, b := ip.slow.Node(n), ip.fast.Node(n); !sameNode(a, b) {
			t.Fatalf("%s: node %s: %+v / %+v", at, ip.nl.NodeName(n), a, b)
		}
		if a, b := explainText(ip.slow.Explain(n)), explainText(ip.fast.Explain(n)); a != b {
			t.Fatalf("%s: node %s explained:\n%s\n%s", at, ip.nl.NodeName(n), a, b)
		}
	}
}

// Random networks (switchsim/gen: resistive devices, pulls, trans, caps of
// every strength) under random drives, with each kind of race analysis, and
// a snapshot restored on the way.
func TestIdealFastPathsRandom(t *testing.T) {
	rng := rand.New(rand.NewPCG(23, 9))
	drives := []sw.Drive{sw.Drive0, sw.Drive1, sw.Drive0, sw.Drive1, sw.DriveX, sw.DriveZ}
	nets := 600
	if testing.Short() {
		nets = 120
	}
	for net := 0; net < nets; net++ {
		spec := gen.Random(rng, 2+rng.IntN(12), 2+rng.IntN(22))
		nl, err := spec.Builder()
		if err != nil {
			t.Fatal(err)
		}
		c, err := nl.Compile()
		if err != nil {
			t.Fatal(err)
		}
		ip := newIdealPair(t, fmt.Sprintf("net %d\n%s", net, spec), c, sw.RaceMode(net%3))
		var snaps [2]*sw.Snapshot
		for step := 0; step < 10; step++ {
			for _, in := range c.Inputs() {
				if step == 0 || rng.IntN(3) == 0 {
					ip.set(in, drives[rng.IntN(len(drives))])
				}
			}
			ip.settle("random drives")
			switch step {
			case 3:
				snaps[0], snaps[1] = ip.slow.Snapshot(), ip.fast.Snapshot()
			case 7:
				ip.slow.Restore(snaps[0])
				ip.fast.Restore(snaps[1])
			}
		}
	}
}

// The benchmarks' networks, small: their groups are the shapes the fast
// paths take (a mux tree's chains of transmission gates, a flip-flop's
// latches, inverters), with several inputs changed together so that race
// analysis runs.
func TestIdealFastPathsBenchNets(t *testing.T) {
	for _, c := range []struct {
		name string
		b    *sw.Builder
	}{
		{"mux tree 2^4", gen.MuxTree(4)},
		{"flip-flop chain 5", gen.FlipFlopChainPreset(5)},
		{"inverter chain 9", gen.InverterChain(9)},
	} {
		nl, err := c.b.Compile()
		if err != nil {
			t.Fatal(err)
		}
		rng := rand.New(rand.NewPCG(3, 1))
		for _, races := range []sw.RaceMode{sw.RacesWhenNeeded, sw.RacesOff} {
			ip := newIdealPair(t, c.name, nl, races)
			for step := 0; step < 40; step++ {
				for _, in := range nl.Inputs() {
					if step == 0 || rng.IntN(2) == 0 {
						ip.set(in, []sw.Drive{sw.Drive0, sw.Drive1, sw.DriveX}[rng.IntN(3)])
					}
				}
				ip.settle("random drives")
			}
		}
	}
}
