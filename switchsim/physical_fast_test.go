package switchsim_test

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"railyard/designs"
	sw "railyard/switchsim"
	"railyard/switchsim/gen"
	"railyard/switchsim/load"
)

// fastPair runs one network through two Sims in physical mode, the general
// path alone (slow) and with the fast path (fast), and fails at the first
// difference. newPathPair makes one for another path: slow is then the Sim
// with that path turned off. The oracle is the general path itself (DEVELOPERS.md (physical mode) as
// DEVELOPERS.md words it, checked against the reference solver by
// diff_test.go): the fast path must give exactly what it gives.
type fastPair struct {
	t          *testing.T
	name       string
	nl         *sw.Netlist
	slow, fast *sw.Sim
	settles    int
	lastWarn   []sw.Warning // the fast Sim's warnings of the last settle
}

func newFastPair(t *testing.T, name string, nl *sw.Netlist) *fastPair {
	return newPathPair(t, name, nl, func(s *sw.Sim) { s.SetPhysFastPath(false) })
}

func newPathPair(t *testing.T, name string, nl *sw.Netlist, off func(*sw.Sim)) *fastPair {
	fp := &fastPair{t: t, name: name, nl: nl,
		slow: sw.NewSim(nl, sw.Options{Mode: sw.Physical}), fast: sw.NewSim(nl, sw.Options{Mode: sw.Physical})}
	off(fp.slow)
	return fp
}

func (fp *fastPair) set(n int, d sw.Drive) {
	if err := fp.slow.SetInput(n, d); err != nil {
		fp.t.Fatalf("%s: %v", fp.name, err)
	}
	fp.fast.SetInput(n, d)
}

// sameF is exact equality, NaN equal to NaN.
func sameF(a, b float64) bool { return a == b || (math.IsNaN(a) && math.IsNaN(b)) }

func sameNode(a, b sw.NodeState) bool {
	return a.Value == b.Value && a.Strength == b.Strength && a.State == b.State && a.Floating == b.Floating && sameF(a.Volts, b.Volts)
}

// explainText prints an explanation with its divider written out (%v of a
// nested pointer would print the address); floats print exactly (%v uses
// the shortest representation that reads back the same).
func explainText(e sw.Explanation) string {
	div, lost := "nil", "nil"
	if e.Divider != nil {
		div = fmt.Sprintf("%+v", *e.Divider)
	}
	if e.Lost != nil {
		lost = fmt.Sprintf("%+v", *e.Lost)
	}
	e.Divider, e.Lost = nil, nil
	return fmt.Sprintf("%+v divider %s lost %s", e, div, lost)
}

func (fp *fastPair) settle(what string) {
	t := fp.t
	fp.settles++
	rs := fp.slow.Settle()
	rf := fp.fast.Settle()
	fp.lastWarn = append(fp.lastWarn[:0], rf.Warnings...)
	at := fmt.Sprintf("%s, settle %d (%s)", fp.name, fp.settles, what)
	if rs.Rounds != rf.Rounds || rs.Oscillated != rf.Oscillated || len(rs.Changed) != len(rf.Changed) || len(rs.RoundEnd) != len(rf.RoundEnd) {
		t.Fatalf("%s: rounds %d/%d, oscillated %v/%v, %d/%d changes, %d/%d round ends", at,
			rs.Rounds, rf.Rounds, rs.Oscillated, rf.Oscillated, len(rs.Changed), len(rf.Changed), len(rs.RoundEnd), len(rf.RoundEnd))
	}
	for i := range rs.RoundEnd {
		if rs.RoundEnd[i] != rf.RoundEnd[i] {
			t.Fatalf("%s: round %d ends at %d / %d", at, i, rs.RoundEnd[i], rf.RoundEnd[i])
		}
	}
	for i := range rs.Changed {
		if rs.Changed[i] != rf.Changed[i] || !sameF(rs.Delay[i], rf.Delay[i]) || !sameNode(rs.After[i], rf.After[i]) {
			t.Fatalf("%s: change %d: node %s delay %g after %+v / node %s delay %g after %+v", at, i,
				fp.nl.NodeName(int(rs.Changed[i])), rs.Delay[i], rs.After[i], fp.nl.NodeName(int(rf.Changed[i])), rf.Delay[i], rf.After[i])
		}
	}
	if len(rs.Warnings) != len(rf.Warnings) {
		t.Fatalf("%s: %d / %d warnings:\n%+v\n%+v", at, len(rs.Warnings), len(rf.Warnings), rs.Warnings, rf.Warnings)
	}
	for i, w := range rs.Warnings {
		v := rf.Warnings[i]
		if w.Kind != v.Kind || w.Node != v.Node || w.Device != v.Device || w.Other != v.Other || !sameF(w.Volts, v.Volts) {
			t.Fatalf("%s: warning %d: %+v / %+v", at, i, w, v)
		}
	}
	for n := 0; n < fp.nl.NumNodes(); n++ {
		if a, b := fp.slow.Node(n), fp.fast.Node(n); !sameNode(a, b) {
			t.Fatalf("%s: node %s: %+v / %+v", at, fp.nl.NodeName(n), a, b)
		}
		// The explanation carries the physical records: degrading device,
		// divider, charge before sharing, delay.
		if a, b := explainText(fp.slow.Explain(n)), explainText(fp.fast.Explain(n)); a != b {
			t.Fatalf("%s: node %s explained:\n%s\n%s", at, fp.nl.NodeName(n), a, b)
		}
	}
}

// snapshot saves both Sims at the same point; restore returns both to it,
// each with its own path.
func (fp *fastPair) snapshot() (*sw.Snapshot, *sw.Snapshot) {
	return fp.slow.Snapshot(), fp.fast.Snapshot()
}

func (fp *fastPair) restore(a, b *sw.Snapshot) {
	fp.slow.Restore(a)
	fp.fast.Restore(b)
}

func TestPhysFastPathLinked(t *testing.T) {
	nl, err := gen.InverterChain(2).Compile()
	if err != nil {
		t.Fatal(err)
	}
	s := sw.NewSim(nl, sw.Options{})
	if !s.PhysFastPath() {
		t.Fatal("a new Sim's fast path is off: the switch should default to on")
	}
	s.SetPhysFastPath(false)
	if s.PhysFastPath() || !sw.NewSim(nl, sw.Options{}).PhysFastPath() {
		t.Fatal("the switch is not per Sim")
	}
}

// Random networks (switchsim/gen) under random drives, with a random
// technology now and then so that thresholds and limits move (a preset
// variant: thresholds near the rails make full and lost levels common).
func TestPhysFastPathRandom(t *testing.T) {
	randomPairs(t, rand.New(rand.NewPCG(17, 5)), 0, newFastPair)
}

// randomPairs runs random networks through the pairs mk makes. With
// vectors 0 each step drives a random third of the inputs afresh; with
// vectors > 0 each step applies one of that many drive vectors chosen once
// per network, so that the same states come back.
func randomPairs(t *testing.T, rng *rand.Rand, vectors int, mk func(*testing.T, string, *sw.Netlist) *fastPair) {
	drives := []sw.Drive{sw.Drive0, sw.Drive1, sw.Drive0, sw.Drive1, sw.DriveX, sw.DriveZ}
	nets := 300
	if testing.Short() {
		nets = 60
	}
	for net := 0; net < nets; net++ {
		spec := gen.Random(rng, 2+rng.IntN(12), 2+rng.IntN(22))
		b, err := spec.Builder()
		if err != nil {
			t.Fatal(err)
		}
		if net%3 == 1 {
			tc := b.Tech()
			tc.Vtn *= 0.5 + rng.Float64()
			tc.Vtp *= 0.5 + rng.Float64()
			tc.Gamma *= 1.5 * rng.Float64()
			if tc.Validate() == nil {
				b.SetTech(tc)
			}
		}
		nl, err := b.Compile()
		if err != nil {
			t.Fatal(err)
		}
		fp := mk(t, fmt.Sprintf("net %d\n%s", net, spec), nl)
		ins := nl.Inputs()
		pool := make([][]sw.Drive, vectors)
		for i := range pool {
			pool[i] = make([]sw.Drive, len(ins))
			for j := range pool[i] {
				pool[i][j] = drives[rng.IntN(len(drives))]
			}
		}
		var snaps [2]*sw.Snapshot
		steps := 10
		if vectors > 0 {
			steps = 24
		}
		for step := 0; step < steps; step++ {
			if vectors > 0 {
				vec := pool[rng.IntN(vectors)]
				for j, in := range ins {
					fp.set(in, vec[j])
				}
			} else {
				for _, in := range ins {
					if step == 0 || rng.IntN(3) == 0 {
						fp.set(in, drives[rng.IntN(len(drives))])
					}
				}
			}
			fp.settle("random drives")
			switch {
			case step == 3:
				snaps[0], snaps[1] = fp.snapshot()
			case step == 7:
				fp.restore(snaps[0], snaps[1])
			}
		}
	}
}

// The engine's benchmark networks (physical_bench_test.go), whose groups
// are mostly lone nodes: inverter outputs, selector outputs, latch nodes.
func TestPhysFastPathBenchNets(t *testing.T) { benchPairs(t, newFastPair) }

// benchPairs runs the benchmark networks through the pairs mk makes, each
// toggling its inputs as the benchmark does (and one at random now and then).
func benchPairs(t *testing.T, mk func(*testing.T, string, *sw.Netlist) *fastPair) {
	rng := rand.New(rand.NewPCG(2, 9))
	for _, bn := range physBenchNets() {
		if bn.name == "datapath200" || bn.name == "invchain1000" {
			continue // the smaller ones below cover the same cells
		}
		nl, err := bn.build().Compile()
		if err != nil {
			t.Fatal(err)
		}
		fp := mk(t, bn.name, nl)
		for i, n := range nl.Inputs() {
			d, ok := bn.setup[nl.NodeName(n)]
			if !ok {
				d = sw.Drive(i & 1)
			}
			fp.set(n, d)
		}
		fp.settle("setup")
		ins := nl.Inputs()
		for step := 0; step < 12; step++ {
			for _, name := range bn.flip {
				n, _ := nl.Lookup(name)
				fp.set(n, 1-fp.slow.InputDrive(n))
			}
			if step%4 == 3 { // and one input at random, to X now and then
				n := ins[rng.IntN(len(ins))]
				fp.set(n, []sw.Drive{sw.Drive0, sw.Drive1, sw.DriveX}[rng.IntN(3)])
			}
			fp.settle("step")
		}
	}
	// A datapath clocked as the benchmark clocks it, select and clock edge
	// together: race analysis's phase A brings the latches' vertex solves
	// back step after step (physical_vertex.go, and its memo).
	nl, err := gen.Sized(40).Compile()
	if err != nil {
		t.Fatal(err)
	}
	fp := mk(t, "datapath40 clocked", nl)
	for i, n := range nl.Inputs() {
		fp.set(n, sw.Drive(i&1))
	}
	for step := 0; step < 16; step++ {
		for _, name := range []string{"sel0", "clk", "clkb"} {
			n, _ := nl.Lookup(name)
			fp.set(n, 1-fp.slow.InputDrive(n))
		}
		if step == 9 {
			n, _ := nl.Lookup("sel1")
			fp.set(n, 1-fp.slow.InputDrive(n))
		}
		fp.settle("clock and select")
	}
	for name, b := range map[string]*sw.Builder{"datapath12": gen.Sized(12), "invchain40": gen.InverterChain(40)} {
		nl, err := b.Compile()
		if err != nil {
			t.Fatal(err)
		}
		fp := mk(t, name, nl)
		ins := nl.Inputs()
		for step := 0; step < 16; step++ {
			for _, n := range ins {
				if step == 0 || rng.IntN(2) == 0 {
					fp.set(n, sw.Drive(rng.IntN(2)))
				}
			}
			fp.settle("random drives")
		}
	}
}

// Every demo design (designs, read by netfile) through its own steps, then
// through random drives of its inputs.
func TestPhysFastPathDemos(t *testing.T) {
	rng := rand.New(rand.NewPCG(8, 1))
	list := designs.List()
	if len(list) == 0 {
		t.Fatal("no demo designs")
	}
	for _, e := range list {
		ld, err := load.Host(load.Options{}).Open("demo:"+e.Name, "")
		if err != nil {
			t.Fatalf("demo %s: %v", e.Name, err)
		}
		nl := ld.Design.Netlist
		fp := newFastPair(t, "demo:"+e.Name, nl)
		fp.settle("initial")
		if st := ld.Steps; st != nil {
			for _, row := range st.Rows {
				for i, n := range st.Apply {
					fp.set(n, row.Drives[i])
				}
				fp.settle(fmt.Sprintf("steps line %d", row.Line))
			}
		}
		drives := []sw.Drive{sw.Drive0, sw.Drive1, sw.Drive0, sw.Drive1, sw.DriveX, sw.DriveZ}
		for step := 0; step < 20; step++ {
			for _, n := range nl.Inputs() {
				if rng.IntN(3) == 0 {
					fp.set(n, drives[rng.IntN(len(drives))])
				}
			}
			fp.settle("random drives")
		}
	}
}

// A lone floating node that shared charge earlier in the same settle keeps
// its charge-sharing report (physCharge): a one-round pulse on the gate of
// the device between two stored nodes joins them, then leaves each alone.
// The pulse is x AND NOT x, the NOT one round late (unit delay, switchsim §5).
func TestPhysFastPathSharedPulse(t *testing.T) {
	b := sw.NewBuilder()
	for _, in := range []string{"x", "pre", "dis"} {
		b.Input(in)
	}
	o := sw.DeviceOpts{}
	b.PMOS("i1.p", "x", "vdd", "xb", o)
	b.NMOS("i1.n", "x", "xb", "gnd", o)
	b.PMOS("q.pa", "x", "vdd", "q", o) // q = NAND(x, xb)
	b.PMOS("q.pb", "xb", "vdd", "q", o)
	b.NMOS("q.na", "x", "q", "m", o)
	b.NMOS("q.nb", "xb", "m", "gnd", o)
	b.PMOS("p.p", "q", "vdd", "p", o) // p = NOT q: the pulse
	b.NMOS("p.n", "q", "p", "gnd", o)
	b.PMOS("pa", "pre", "vdd", "a", o) // a stored 1, b stored 0
	b.NMOS("db", "dis", "b", "gnd", o)
	b.NMOS("share", "p", "a", "b", o)
	b.Node("a", 30e-15, sw.HighZ)
	nl, err := b.Compile()
	if err != nil {
		t.Fatal(err)
	}
	look := func(name string) int {
		n, ok := nl.Lookup(name)
		if !ok {
			t.Fatalf("no node %s", name)
		}
		return n
	}
	x, pre, dis := look("x"), look("pre"), look("dis")
	fp := newFastPair(t, "pulse", nl)
	fp.set(x, sw.Drive0)
	fp.set(pre, sw.Drive0)
	fp.set(dis, sw.Drive1)
	fp.settle("charge a, discharge b")
	fp.set(pre, sw.Drive1)
	fp.set(dis, sw.Drive0)
	fp.settle("store")
	fp.set(x, sw.Drive1)
	fp.settle("pulse")
	// The premise (DEVELOPERS.md, physical mode): charges 1.8 V apart meet, so
	// b (0 V) takes some of a's (1.8 V). b floats alone after the pulse and
	// gates nothing, so no warning says so (quietSharing): its level does.
	if v := fp.fast.Node(look("b")).Volts; !(v > 0.1) {
		t.Fatalf("the pulse did not share b's charge: b at %v V", v)
	}
}

// The group memo (physical_memo.go) against solving every group afresh,
// the fast path on in both: on random networks whose drive vectors recur
// (so that groups come back to states they were solved in) and on the
// benchmark networks, whose toggles bring the same fights back each step.
func newMemoPair(t *testing.T, name string, nl *sw.Netlist) *fastPair {
	return newPathPair(t, name, nl, func(s *sw.Sim) { s.SetPhysMemo(false) })
}

func TestPhysMemoRandom(t *testing.T) {
	randomPairs(t, rand.New(rand.NewPCG(23, 4)), 3, newMemoPair)
}

func TestPhysMemoBenchNets(t *testing.T) { benchPairs(t, newMemoPair) }

// The lone-node solve (physAlone) against the group's path, physSingle
// and the rest on in both: on random networks, and on the benchmark
// networks, whose inverter outputs, pulls' nodes and selector leaves are
// lone nodes step after step.
func newAlonePathPair(t *testing.T, name string, nl *sw.Netlist) *fastPair {
	return newPathPair(t, name, nl, func(s *sw.Sim) { s.SetPhysAlone(false) })
}

func TestPhysAloneRandom(t *testing.T) {
	randomPairs(t, rand.New(rand.NewPCG(31, 7)), 0, newAlonePathPair)
}

func TestPhysAloneBenchNets(t *testing.T) { benchPairs(t, newAlonePathPair) }

// The step without an undo log (settlesAlone) against the logged step, in
// physical mode: on random networks (those without feedback loops take it
// wherever one input changed) and on the benchmark networks, whose
// inverter chain, selectors and ratioed chain change one input a step.
func newAlonePair(t *testing.T, name string, nl *sw.Netlist) *fastPair {
	return newPathPair(t, name, nl, func(s *sw.Sim) { s.SetPhysSettlesAlone(false) })
}

func TestPhysSettlesAloneRandom(t *testing.T) {
	randomPairs(t, rand.New(rand.NewPCG(29, 6)), 0, newAlonePair)
}

func TestPhysSettlesAloneBenchNets(t *testing.T) { benchPairs(t, newAlonePair) }
