package switchsim_test

// Differential tests: the engine against the reference solver of
// reference_test.go, which is written from DEVELOPERS.md alone. They must
// agree exactly after every settle: every node's value, strength, state
// and floating flag; the number of rounds; the set of nodes changed in
// each round; whether the settle oscillated.

import (
	"flag"
	"fmt"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"

	"railyard/designs"
	sw "railyard/switchsim"
	"railyard/switchsim/gen"
	"railyard/switchsim/load"
	"railyard/switchsim/steps"
)

var (
	diffN    = flag.Int("diff.n", 3000, "random networks in TestDiffRandom")
	diffSeed = flag.Uint64("diff.seed", 1, "seed of TestDiffRandom")
)

// vector is one drive per input, in Netlist.Inputs order.
type vector []sw.Drive

func vectorsString(vs []vector) string {
	var w strings.Builder
	for _, v := range vs {
		for _, d := range v {
			w.WriteString(d.String())
		}
		w.WriteByte(' ')
	}
	return strings.TrimSpace(w.String())
}

func randomDrive(rng *rand.Rand) sw.Drive {
	switch r := rng.IntN(20); {
	case r < 7:
		return sw.Drive0
	case r < 14:
		return sw.Drive1
	case r < 17:
		return sw.DriveX
	}
	return sw.DriveZ
}

func randomVectors(rng *rand.Rand, inputs, n int) []vector {
	vs := make([]vector, n)
	for i := range vs {
		vs[i] = make(vector, inputs)
		for j := range vs[i] {
			vs[i][j] = randomDrive(rng)
		}
		if i > 0 && rng.IntN(8) == 0 { // sometimes nothing changes
			copy(vs[i], vs[i-1])
		}
	}
	return vs
}

// mismatch is the first difference found in one run.
type mismatch struct {
	kind, msg string
}

// diffCfg is how both simulators are set up: the round limit (0: the
// default), when race analysis runs, and the case-analysis bound (0: the
// default).
type diffCfg struct {
	limit  int
	races  sw.RaceMode
	splits int
}

func (c diffCfg) String() string {
	return fmt.Sprintf("round limit %d, races %s, case splits %d", c.limit, c.races, c.splits)
}

// diffRun applies the vectors to both simulators, settling after each, and
// returns the first difference.
func diffRun(nl *sw.Netlist, vs []vector, cfg diffCfg) *mismatch {
	eng := sw.NewSim(nl, sw.Options{Mode: sw.Ideal, RoundLimit: cfg.limit, Races: cfg.races, CaseSplits: cfg.splits})
	ref := newRef(nl, cfg.limit)
	ref.races = cfg.races
	if cfg.splits != 0 {
		ref.splitMax = cfg.splits
	}
	ins := nl.Inputs()
	for step, v := range vs {
		for j, n := range ins {
			if err := eng.SetInput(n, v[j]); err != nil {
				return &mismatch{"api", fmt.Sprintf("SetInput(%s): %v", nl.NodeName(n), err)}
			}
			ref.SetInput(n, v[j])
		}
		er := eng.Settle()
		rr := ref.Settle()
		if m := compareSettle(nl, eng, er, ref, rr); m != nil {
			m.msg = fmt.Sprintf("after vector %d (%s): %s", step+1, vectorsString(vs[:step+1]), m.msg)
			return m
		}
	}
	return nil
}

func compareSettle(nl *sw.Netlist, eng *sw.Sim, er *sw.Result, ref *refSim, rr refResult) *mismatch {
	an := &er.Analysis
	switch {
	case er.Settled != rr.Settled:
		return &mismatch{"settled", fmt.Sprintf("Settled: engine %v, reference %v", er.Settled, rr.Settled)}
	case an.Ran != rr.Ran || an.Why != rr.Why:
		return &mismatch{"analysis", fmt.Sprintf("race analysis ran %v why %d: engine, reference ran %v why %d", an.Ran, an.Why, rr.Ran, rr.Why)}
	case an.Splits != rr.Splits || an.Bounded != rr.Bounded:
		return &mismatch{"cases", fmt.Sprintf("case analysis: engine %d splits (bounded %v), reference %d (bounded %v)", an.Splits, an.Bounded, rr.Splits, rr.Bounded)}
	case an.Decided != rr.Decided:
		return &mismatch{"decided", fmt.Sprintf("decision round: engine %v, reference %v", an.Decided, rr.Decided)}
	}
	for p, ph := range []*sw.Phase{&an.A, &an.B} {
		want := []refRun{rr.A, rr.B}[p]
		if ph.Rounds != want.rounds {
			return &mismatch{"phase", fmt.Sprintf("phase %c: engine %d rounds, reference %d (%s)", "AB"[p], ph.Rounds, want.rounds, roundsString(nl, want.changed))}
		}
		for i := 0; i < ph.Rounds; i++ {
			var got []int
			for _, n := range ph.Round(i) {
				got = append(got, int(n))
			}
			slices.Sort(got)
			if !slices.Equal(got, want.changed[i]) {
				return &mismatch{"phase", fmt.Sprintf("phase %c round %d changed: engine %s, reference %s", "AB"[p], i+1, names(nl, got), names(nl, want.changed[i]))}
			}
		}
	}
	if e, r := analysisWarnings(nl, er.Warnings), refWarnings(nl, rr.Warnings); e != r {
		return &mismatch{"warnings", fmt.Sprintf("race, glitch and oscillation warnings: engine %s, reference %s", e, r)}
	}
	if er.Oscillated != rr.Oscillated {
		return &mismatch{"oscillated", fmt.Sprintf("Oscillated: engine %v, reference %v", er.Oscillated, rr.Oscillated)}
	}
	if er.Rounds != rr.Rounds {
		return &mismatch{"rounds", fmt.Sprintf("Rounds: engine %d, reference %d (reference changes %s)", er.Rounds, rr.Rounds, roundsString(nl, rr.Changed))}
	}
	if len(er.RoundEnd) != er.Rounds {
		return &mismatch{"round-index", fmt.Sprintf("engine Rounds %d but %d round boundaries: Round(i) is wrong or panics for i near Rounds", er.Rounds, len(er.RoundEnd))}
	}
	for i := 0; i < er.Rounds; i++ {
		var got []int
		for _, n := range er.Round(i) {
			got = append(got, int(n))
		}
		slices.Sort(got)
		if !slices.Equal(got, rr.Changed[i]) {
			return &mismatch{"changed", fmt.Sprintf("round %d changed: engine %s, reference %s", i+1, names(nl, got), names(nl, rr.Changed[i]))}
		}
	}
	if len(er.After) != len(er.Changed) {
		return &mismatch{"after", fmt.Sprintf("engine After has %d entries for %d changes", len(er.After), len(er.Changed))}
	}
	for i := 0; i < er.Rounds; i++ {
		lo := 0
		if i > 0 {
			lo = int(er.RoundEnd[i-1])
		}
		for k := lo; k < int(er.RoundEnd[i]); k++ {
			n := int(er.Changed[k])
			if e, r := er.After[k], rr.After[i][n]; !sameState(e, r) {
				return &mismatch{"after", fmt.Sprintf("round %d left %s at: engine %s, reference %s", i+1, nl.NodeName(n), stateString(e), stateString(r))}
			}
		}
	}
	for n := 0; n < nl.NumNodes(); n++ {
		if e, r := eng.Node(n), ref.Node(n); !sameState(e, r) {
			return &mismatch{"node", fmt.Sprintf("node %s: engine %s, reference %s", nl.NodeName(n), stateString(e), stateString(r))}
		}
	}
	return nil
}

// analysisWarnings lists the warnings of race analysis (and forcing rounds)
// as sorted "kind node" words.
func analysisWarnings(nl *sw.Netlist, ws []sw.Warning) string {
	var out []string
	for _, w := range ws {
		switch w.Kind {
		case sw.WarnRace, sw.WarnGlitch, sw.WarnOscillation:
			out = append(out, string(w.Kind)+" "+nl.NodeName(w.Node))
		}
	}
	slices.Sort(out)
	return strings.Join(out, ", ")
}

func refWarnings(nl *sw.Netlist, ws []refWarning) string {
	var out []string
	for _, w := range ws {
		out = append(out, string(w.kind)+" "+nl.NodeName(w.node))
	}
	slices.Sort(out)
	return strings.Join(out, ", ")
}

// sameState compares what ideal mode defines (not Volts, NaN there).
func sameState(a, b sw.NodeState) bool {
	return a.Value == b.Value && a.Strength == b.Strength && a.State == b.State && a.Floating == b.Floating
}

func stateString(s sw.NodeState) string {
	f := ""
	if s.Floating {
		f = " floating"
	}
	return fmt.Sprintf("%s (%s %s%s)", s.State, s.Value, s.Strength, f)
}

func names(nl *sw.Netlist, ns []int) string {
	var out []string
	for _, n := range ns {
		out = append(out, nl.NodeName(n))
	}
	return "{" + strings.Join(out, " ") + "}"
}

func roundsString(nl *sw.Netlist, rounds [][]int) string {
	var out []string
	for _, r := range rounds {
		out = append(out, names(nl, r))
	}
	if len(out) > 12 {
		out = append(out[:6], append([]string{"..."}, out[len(out)-6:]...)...)
	}
	return strings.Join(out, " ")
}

func compileSpec(s *gen.Spec) (*sw.Netlist, error) {
	b, err := s.Builder()
	if err != nil {
		return nil, err
	}
	return b.Compile()
}

// dropUnused removes annotations of nodes no device names any more.
func dropUnused(s *gen.Spec) {
	used := map[string]bool{}
	for _, in := range s.Inputs {
		used[in] = true
	}
	for _, d := range s.Devices {
		used[d.Gate], used[d.A], used[d.B] = true, true, true
	}
	s.Nodes = slices.DeleteFunc(s.Nodes, func(n gen.NodeSpec) bool { return !used[n.Name] })
}

// failsAs returns a predicate for shrink: the run differs with this kind.
func failsAs(cfg diffCfg, kind string) func(*gen.Spec, []vector) *mismatch {
	return func(s *gen.Spec, vs []vector) *mismatch {
		nl, err := compileSpec(s)
		if err != nil {
			return nil
		}
		if m := diffRun(nl, vs, cfg); m != nil && m.kind == kind {
			return m
		}
		return nil
	}
}

// shrink removes devices, vectors and annotations while fails still holds,
// so a report shows a small case.
func shrink(s *gen.Spec, vs []vector, fails func(*gen.Spec, []vector) *mismatch) (*gen.Spec, []vector, *mismatch) {
	last := fails(s, vs)
	for progress := true; progress; {
		progress = false
		for i := 0; i < len(s.Devices); i++ {
			t := *s
			t.Devices = slices.Delete(slices.Clone(s.Devices), i, i+1)
			t.Nodes = slices.Clone(s.Nodes)
			dropUnused(&t)
			if m := fails(&t, vs); m != nil {
				s, last, progress = &t, m, true
				i--
			}
		}
		for i := 0; i < len(vs) && len(vs) > 1; i++ {
			w := slices.Delete(slices.Clone(vs), i, i+1)
			if m := fails(s, w); m != nil {
				vs, last, progress = w, m, true
				i--
			}
		}
		for i := range s.Nodes {
			if s.Nodes[i].Charge == sw.HighZ {
				continue
			}
			t := *s
			t.Nodes = slices.Clone(s.Nodes)
			t.Nodes[i].Charge = sw.HighZ
			if m := fails(&t, vs); m != nil {
				s, last, progress = &t, m, true
			}
		}
	}
	return s, vs, last
}

// walkVectors is a random walk over 0 1 x z changing one input a step
// (sometimes none): single-input steps, whose rounds race analysis decides
// only when they do not settle.
func walkVectors(rng *rand.Rand, inputs, n int) []vector {
	vs := randomVectors(rng, inputs, 1)
	for len(vs) < n {
		v := slices.Clone(vs[len(vs)-1])
		if inputs > 0 && rng.IntN(8) != 0 {
			v[rng.IntN(inputs)] = randomDrive(rng)
		}
		vs = append(vs, v)
	}
	return vs
}

// TestDiffRandom compares engine and reference on random small networks:
// 2-12 nodes, 1-16 devices, six vectors each (with x and z). Half the
// networks change every input at random each step (multi-input steps: race
// analysis), half walk one input at a time. One network in eight has a
// small round limit (forcing rounds and unsettled steps), one in eight
// race analysis on every step, one in sixteen race analysis off, one in
// eight a case-analysis bound of 1 to 3 splits.
func TestDiffRandom(t *testing.T) {
	rng := rand.New(rand.NewPCG(*diffSeed, 2))
	type failure struct {
		count int
		spec  *gen.Spec
		vs    []vector
		cfg   diffCfg
	}
	fails := map[string]*failure{}
	var idle []string
	for i := 0; i < *diffN; i++ {
		spec := gen.Random(rng, 2+rng.IntN(11), 1+rng.IntN(16))
		nl, err := compileSpec(spec)
		if err != nil {
			t.Fatalf("network %d does not compile: %v\n%s", i, err, spec)
		}
		var cfg diffCfg
		if rng.IntN(8) == 0 {
			cfg.limit = 1 + rng.IntN(12)
		}
		switch rng.IntN(16) {
		case 0, 1:
			cfg.races = sw.RacesEveryStep
		case 2:
			cfg.races = sw.RacesOff
		}
		if rng.IntN(8) == 0 {
			cfg.splits = 1 + rng.IntN(3)
		}
		vs := randomVectors(rng, len(nl.Inputs()), 6)
		if rng.IntN(2) == 0 {
			vs = walkVectors(rng, len(nl.Inputs()), 6)
		}
		m := diffRun(nl, vs, cfg)
		if m == nil {
			if f := idleFindings(nl, vs, cfg); f != nil && len(idle) < 2 {
				s, vs, f := shrink(spec, vs, func(s *gen.Spec, vs []vector) *mismatch {
					nl, err := compileSpec(s)
					if err != nil {
						return nil
					}
					return idleFindings(nl, vs, cfg)
				})
				idle = append(idle, fmt.Sprintf("%s\n%svectors %s: %s", cfg, s, vectorsString(vs), f.msg))
			}
			continue
		}
		f := fails[m.kind]
		if f == nil {
			f = &failure{spec: spec, vs: vs, cfg: cfg}
			fails[m.kind] = f
		}
		f.count++
		if len(spec.Devices) < len(f.spec.Devices) {
			f.spec, f.vs, f.cfg = spec, vs, cfg
		}
	}
	kinds := make([]string, 0, len(fails))
	for k := range fails {
		kinds = append(kinds, k)
	}
	slices.Sort(kinds)
	for _, k := range kinds {
		f := fails[k]
		s, vs, m := shrink(f.spec, f.vs, failsAs(f.cfg, k))
		nl, _ := compileSpec(s)
		t.Errorf("%d of %d networks differ (%s); smallest, shrunk (%s, inputs %v):\n%svectors: %s\n%s",
			f.count, *diffN, k, f.cfg, names(nl, nl.Inputs()), s, vectorsString(vs), m.msg)
	}
	for _, s := range idle {
		t.Logf("engine and reference agree, but a group the rules did not re-solve is not a fixpoint of them:\n%s", s)
	}
}

// idleFindings reruns the reference and reports unseeded groups whose
// fresh solve would change them (the rules assume it never happens).
func idleFindings(nl *sw.Netlist, vs []vector, cfg diffCfg) *mismatch {
	ref := newRef(nl, cfg.limit)
	ref.races = cfg.races
	if cfg.splits != 0 {
		ref.splitMax = cfg.splits
	}
	for step, v := range vs {
		for j, n := range nl.Inputs() {
			ref.SetInput(n, v[j])
		}
		ref.Settle()
		if len(ref.idle) > 0 {
			f := ref.idle[0]
			return &mismatch{"idle", fmt.Sprintf("vector %d, round %d, node %s: %s would become %s",
				step+1, f.round, nl.NodeName(f.node), stateString(ref.Node(f.node)), stateString(f.would))}
		}
	}
	return nil
}

// demoSequences returns the input sequences TestDiffDemos runs on a design:
// its steps file's rows (inputs it does not apply stay as they were),
// three random walks of 200 steps changing one or two inputs at a time
// over 0 1 x z, and for designs of at most four inputs every combination
// of 0 1 x z in turn, then every 0/1 combination in Gray-code order (one
// input changes per step).
func demoSequences(rng *rand.Rand, nl *sw.Netlist, st *steps.Steps) [][]vector {
	ins := nl.Inputs()
	k := len(ins)
	allX := make(vector, k)
	for i := range allX {
		allX[i] = sw.DriveX
	}
	var seqs [][]vector
	if st != nil {
		col := map[int]int{}
		for j, n := range ins {
			col[n] = j
		}
		seq := []vector{allX}
		for _, row := range st.Rows {
			v := slices.Clone(seq[len(seq)-1])
			for i, n := range st.Apply {
				v[col[n]] = row.Drives[i]
			}
			seq = append(seq, v)
		}
		seqs = append(seqs, seq)
	}
	for w := 0; w < 3 && k > 0; w++ {
		seq := []vector{allX}
		for i := 0; i < 200; i++ {
			v := slices.Clone(seq[len(seq)-1])
			for c := 0; c < 1+rng.IntN(2); c++ {
				v[rng.IntN(k)] = randomDrive(rng)
			}
			seq = append(seq, v)
		}
		seqs = append(seqs, seq)
	}
	if k > 0 && k <= 4 {
		seq := []vector{allX}
		for c := 0; c < 1<<(2*k); c++ {
			v := make(vector, k)
			for j := range v {
				v[j] = sw.Drive((c >> (2 * j)) & 3)
			}
			seq = append(seq, v)
		}
		for c := 0; c < 1<<k; c++ {
			g := c ^ (c >> 1)
			v := make(vector, k)
			for j := range v {
				v[j] = sw.Drive((g >> j) & 1)
			}
			seq = append(seq, v)
		}
		seqs = append(seqs, seq)
	}
	return seqs
}

// TestDiffDemos runs every demo design through engine and reference.
func TestDiffDemos(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 7))
	for _, e := range designs.List() {
		t.Run(e.Name, func(t *testing.T) {
			ld, err := load.Host(load.Options{}).Open("demo:"+e.Name, "")
			if err != nil {
				t.Fatal(err)
			}
			d, st := ld.Design, ld.Steps
			for i, seq := range demoSequences(rng, d.Netlist, st) {
				if m := diffRun(d.Netlist, seq, diffCfg{}); m != nil {
					t.Errorf("sequence %d (%s): %s", i, m.kind, m.msg)
				}
			}
		})
	}
}

// ringWithChain is an enabled three-stage ring (a NAND on en and two
// inverters) and a chain of c inverters from en whose stage i changes in
// round i of the settle that enables the ring.
func ringWithChain(c int) *gen.Spec {
	s := &gen.Spec{Inputs: []string{"en"}}
	add := func(name string, k sw.DeviceKind, g, a, b string) {
		s.Devices = append(s.Devices, gen.DeviceSpec{Name: name, Kind: k, Gate: g, A: a, B: b})
	}
	add("p0", sw.PMOS, "en", "vdd", "r0")
	add("p0b", sw.PMOS, "r2", "vdd", "r0")
	add("m0", sw.NMOS, "en", "r0", "x0")
	add("m0b", sw.NMOS, "r2", "x0", "gnd")
	add("p1", sw.PMOS, "r0", "vdd", "r1")
	add("m1", sw.NMOS, "r0", "r1", "gnd")
	add("p2", sw.PMOS, "r1", "vdd", "r2")
	add("m2", sw.NMOS, "r1", "r2", "gnd")
	prev := "en"
	for i := 1; i <= c; i++ {
		x := fmt.Sprintf("c%d", i)
		add(x+".p", sw.PMOS, prev, "vdd", x)
		add(x+".n", sw.NMOS, prev, x, "gnd")
		prev = x
	}
	return s
}

// TestDiffOscillationWindow aims at the forcing round's window: chains
// whose last stage stops changing near the window's edge, under round
// limits where W = max(16, L/8) is 16 and where it is L/8 (L >= 136). With
// race analysis off the unit-delay rounds force; with it, a chain longer
// than the limit makes phase A and phase B force (the enable and a second
// input change together).
func TestDiffOscillationWindow(t *testing.T) {
	rng := rand.New(rand.NewPCG(9, 9))
	limits := []int{17, 30, 136, 150, 170}
	for i := 0; i < *diffN/1000; i++ {
		limits = append(limits, 17+rng.IntN(250))
	}
	for _, limit := range limits {
		w := max(16, limit/8)
		c := max(1, limit-w-2+rng.IntN(6)) // the last stage changes near round L+1-W
		spec := ringWithChain(c)
		nl, err := compileSpec(spec)
		if err != nil {
			t.Fatal(err)
		}
		vs := []vector{{sw.Drive0}, {sw.Drive1}, {sw.Drive0}, {sw.Drive1}}
		if m := diffRun(nl, vs, diffCfg{limit: limit, races: sw.RacesOff}); m != nil {
			t.Fatalf("ring with a chain of %d, round limit %d (%s): %s", c, limit, m.kind, m.msg)
		}
	}
	for _, limit := range []int{17, 24, 40} {
		w := max(16, limit/8)
		c := limit + w - 3 + rng.IntN(6) // longer than the limit: the phase forces
		spec := ringWithChain(c)
		spec.Inputs = append(spec.Inputs, "b")
		spec.Devices = append(spec.Devices, gen.DeviceSpec{Name: "pb", Kind: sw.PMOS, Gate: "b", A: "vdd", B: "yb"},
			gen.DeviceSpec{Name: "nb", Kind: sw.NMOS, Gate: "b", A: "yb", B: "gnd"})
		nl, err := compileSpec(spec)
		if err != nil {
			t.Fatal(err)
		}
		vs := []vector{{sw.Drive0, sw.Drive0}, {sw.Drive1, sw.Drive1}, {sw.Drive0, sw.Drive0}}
		if m := diffRun(nl, vs, diffCfg{limit: limit}); m != nil {
			t.Fatalf("ring with a chain of %d, round limit %d, phases (%s): %s", c, limit, m.kind, m.msg)
		}
	}
}
