package switchsim_test

// The reference solver: DEVELOPERS.md "The engine's rules, exactly",
// written down as plainly as possible and nothing more. No buckets, no
// incremental state: every round recomputes every device's state from the
// node values, rebuilds every group from scratch, and solves each group by
// naive fixpoint iteration (repeat until nothing changes). Race analysis
// and case analysis work on whole copies of the state, not an undo log.
// Ideal mode only; it shares no code with the engine.
//
// Where the text leaves a choice, the reading taken is marked READING.

import (
	"maps"
	"slices"

	sw "railyard/switchsim"
)

type refSim struct {
	nl    *sw.Netlist
	devs  []sw.Device
	limit int // the round limit of one pass

	val   []sw.Value
	str   []sw.Strength
	state []sw.State
	fight []bool          // X from a 0 and a 1 at equal strength in the sure pass
	drive []sw.Drive      // in force (inputs only)
	next  []sw.Drive      // set by SetInput, applied by the next Settle
	cond  []sw.Conduction // device states the last solved round used
	first bool            // the next Settle is the first
	// forced: nodes the oscillation rule set to X whose group has not been
	// solved since; their groups are not fixpoints of the rules, by design.
	forced map[int]bool
	// oscillated: some settle of this Sim passed the round limit; dropped
	// seeds may have left groups that are not fixpoints (see Settle).
	oscillated bool
	idle       []refIdleFinding // unseeded groups whose fresh solve differs (see Settle)

	races        sw.RaceMode
	splitMax     int // CaseSplits; < 0: case analysis off
	settleNo     int
	solvedAt     []int // node -> the settle that last solved it (outside case-analysis branches)
	oscAt        []int // node -> the settle that found it oscillating (0: never)
	branch       bool  // running a case-analysis branch
	contradicted bool  // the branch had a fight at the strongest strength
	adopted      bool  // case analysis gave nodes states the groups' solves do not (idle findings off)
}

// refIdleFinding records a group the rules did not re-solve but whose
// state is not a fixpoint of the resolution rules.
type refIdleFinding struct {
	round int
	node  int
	would sw.NodeState
}

func newRef(nl *sw.Netlist, limit int) *refSim {
	nn, nd := nl.NumNodes(), nl.NumDevices()
	r := &refSim{nl: nl, limit: limit, first: true, forced: map[int]bool{}}
	if r.limit <= 0 {
		r.limit = 2*nn + 2 // "Round limit L: 2 x nodes + 2"
	}
	for d := 0; d < nd; d++ {
		r.devs = append(r.devs, nl.Device(d))
	}
	r.val, r.str, r.state = make([]sw.Value, nn), make([]sw.Strength, nn), make([]sw.State, nn)
	r.fight, r.solvedAt, r.oscAt = make([]bool, nn), make([]int, nn), make([]int, nn)
	r.splitMax = 32 // "DefaultCaseSplits = 32"
	r.drive, r.next = make([]sw.Drive, nn), make([]sw.Drive, nn)
	for n := 0; n < nn; n++ {
		// "all nodes start at stored X; inputs start driven X"
		r.val[n], r.str[n], r.state[n] = sw.VX, nl.NodeCharge(n), sw.StateZ
		switch nl.NodeKind(n) {
		case sw.Power:
			r.val[n], r.str[n], r.state[n] = sw.V1, sw.Supply, sw.State1
		case sw.Ground:
			r.val[n], r.str[n], r.state[n] = sw.V0, sw.Supply, sw.State0
		case sw.Input:
			r.str[n], r.state[n] = sw.Supply, sw.StateX
			r.drive[n], r.next[n] = sw.DriveX, sw.DriveX
		}
	}
	r.cond = r.conductions()
	return r
}

func (r *refSim) SetInput(n int, d sw.Drive) { r.next[n] = d }

func (r *refSim) Node(n int) sw.NodeState {
	return sw.NodeState{Value: r.val[n], Strength: r.str[n], State: r.state[n], Floating: r.str[n].IsCharge()}
}

// isSource: "Sources are the rails and every input that is driven (0, 1 or x)."
func (r *refSim) isSource(n int) bool {
	switch r.nl.NodeKind(n) {
	case sw.Power, sw.Ground:
		return true
	case sw.Input:
		return r.drive[n] != sw.DriveZ
	}
	return false
}

// conductionOf: "nMOS: on for gate 1, off for 0, unknown for X. pMOS: on for
// 0, off for 1, unknown for X. Pulls are always on. A floating gate node
// uses its stored value."
func (r *refSim) conductionOf(d sw.Device) sw.Conduction {
	if d.Kind == sw.PullUp || d.Kind == sw.PullDown {
		return sw.On
	}
	g := r.val[d.Gate]
	switch {
	case g == sw.VX:
		return sw.Unknown
	case d.Kind == sw.NMOS && g == sw.V1, d.Kind == sw.PMOS && g == sw.V0:
		return sw.On
	}
	return sw.Off
}

func (r *refSim) conductions() []sw.Conduction {
	c := make([]sw.Conduction, len(r.devs))
	for i, d := range r.devs {
		c[i] = r.conductionOf(d)
	}
	return c
}

// refGroup is one group: "a maximal set of non-source nodes joined by
// devices that are on or unknown; the sources adjacent to the group
// through such devices are its boundary."
type refGroup struct {
	nodes    []int
	in       map[int]bool
	devs     []int // devices on or unknown with a terminal in the group
	boundary map[int]bool
	unknown  bool
}

func (r *refSim) groups(cond []sw.Conduction) []*refGroup {
	nn := r.nl.NumNodes()
	taken := make([]bool, nn)
	var gs []*refGroup
	for start := 0; start < nn; start++ {
		if r.isSource(start) || taken[start] {
			continue
		}
		g := &refGroup{in: map[int]bool{}, boundary: map[int]bool{}}
		devSeen := map[int]bool{}
		queue := []int{start}
		taken[start] = true
		for len(queue) > 0 { // breadth first through devices not off
			n := queue[0]
			queue = queue[1:]
			g.in[n] = true
			g.nodes = append(g.nodes, n)
			for _, di := range r.nl.ChannelDevices(n) {
				if cond[di] == sw.Off {
					continue
				}
				if !devSeen[di] {
					devSeen[di] = true
					g.devs = append(g.devs, di)
					g.unknown = g.unknown || cond[di] == sw.Unknown
				}
				m := r.nl.Other(di, n)
				switch {
				case r.isSource(m):
					g.boundary[m] = true
				case !taken[m]:
					taken[m] = true
					queue = append(queue, m)
				}
			}
		}
		gs = append(gs, g)
	}
	return gs
}

type refSig struct {
	v sw.Value
	s sw.Strength
}

func lubValue(a, b sw.Value) sw.Value {
	if a == b {
		return a
	}
	return sw.VX
}

// refOut is one node's result of a group solve.
type refOut struct {
	sw.NodeState
	fight bool
}

// solve resolves one group (ideal mode) from the present stored values and
// the given device states, returning each node's value, strength, state and
// whether its X is a fight.
func (r *refSim) solve(g *refGroup, cond []sw.Conduction) map[int]refOut {
	// 1. Sure signal over devices that are on. READING: "least fixpoint ...
	// computed level by level from supply down" is taken as its definition:
	// at each level L (supply first) the nodes not yet decided that some
	// signal of strength exactly L reaches are decided at L, their value
	// the combination of every value arriving at L; a signal arriving at L
	// comes from the node's own charge (if its class is L), a boundary
	// source through an on device with min(supply, cap) = L, a node decided
	// at a higher level through an on device whose min(strength, cap) = L
	// (these three arrive "directly"), or a node decided at L through an on
	// device with cap >= L. Weaker signals never pass a decided node.
	// READING of "X from a 0 and a 1 meeting at equal strength in the sure
	// pass" (a fight): the nodes decided at L and joined by on devices with
	// cap >= L are one meeting place; it is a fight when a 0 and a 1 arrived
	// directly at its nodes, whatever else (an X) arrived too.
	S := map[int]refSig{}
	fight := map[int]bool{}
	onDev := func(di, n int) (int, bool) { // the other terminal of an on device of n
		d := r.devs[di]
		if cond[di] != sw.On || (d.A != n && d.B != n) {
			return 0, false
		}
		if d.A == n {
			return d.B, true
		}
		return d.A, true
	}
	for L := sw.Supply; L >= sw.Small; L-- {
		direct := map[int][]sw.Value{}
		for _, n := range g.nodes {
			if _, done := S[n]; done {
				continue
			}
			if r.nl.NodeCharge(n) == L {
				direct[n] = append(direct[n], r.val[n])
			}
			for _, di := range g.devs {
				m, ok := onDev(di, n)
				if !ok {
					continue
				}
				cp := r.devs[di].Strength
				sm, decided := S[m]
				switch {
				case r.isSource(m) && min(sw.Supply, cp) == L:
					direct[n] = append(direct[n], r.val[m])
				case !r.isSource(m) && decided && min(sm.s, cp) == L:
					direct[n] = append(direct[n], sm.v)
				case (r.isSource(m) && min(sw.Supply, cp) > L) || (decided && min(sm.s, cp) > L):
					panic("reference: a signal stronger than the level reached an undecided node")
				}
			}
		}
		tent := map[int]sw.Value{} // nodes reached at L so far
		for n, vs := range direct {
			v := vs[0]
			for _, w := range vs[1:] {
				v = lubValue(v, w)
			}
			tent[n] = v
		}
		for changed := true; changed; {
			changed = false
			for _, n := range g.nodes {
				if _, done := S[n]; done {
					continue
				}
				v, have := tent[n]
				for _, di := range g.devs {
					m, ok := onDev(di, n)
					if !ok || r.devs[di].Strength < L {
						continue
					}
					if tv, ok := tent[m]; ok && !r.isSource(m) {
						if _, done := S[m]; done {
							continue
						}
						if have {
							v = lubValue(v, tv)
						} else {
							v, have = tv, true
						}
					}
				}
				if old, ok := tent[n]; have && (!ok || old != v) {
					tent[n] = v
					changed = true
				}
			}
		}
		// meeting places: components of tent by on devices with cap >= L
		comp := map[int]int{}
		for n := range tent {
			if _, ok := comp[n]; ok {
				continue
			}
			comp[n] = n
			queue := []int{n}
			for len(queue) > 0 {
				m := queue[0]
				queue = queue[1:]
				for _, di := range g.devs {
					o, ok := onDev(di, m)
					if !ok || r.devs[di].Strength < L {
						continue
					}
					if _, in := tent[o]; in {
						if _, seen := comp[o]; !seen {
							comp[o] = n
							queue = append(queue, o)
						}
					}
				}
			}
		}
		has := map[int][3]bool{}
		for n, vs := range direct {
			h := has[comp[n]]
			for _, v := range vs {
				h[v] = true
			}
			has[comp[n]] = h
		}
		for n, v := range tent {
			S[n] = refSig{v, L}
			h := has[comp[n]]
			fight[n] = h[sw.V0] && h[sw.V1]
		}
	}

	// 2. Potentials, only with a device of unknown state in the group.
	var P [2]map[int]sw.Strength
	if g.unknown {
		for v := sw.V0; v <= sw.V1; v++ {
			p := map[int]sw.Strength{}
			for _, n := range g.nodes {
				p[n] = sw.HighZ
				if r.val[n] == v || r.val[n] == sw.VX {
					p[n] = r.nl.NodeCharge(n)
				}
			}
			for changed := true; changed; {
				changed = false
				for _, n := range g.nodes {
					for _, di := range g.devs {
						d := r.devs[di]
						if d.A != n && d.B != n {
							continue
						}
						m := d.A
						if m == n {
							m = d.B
						}
						cand := sw.HighZ
						switch {
						case r.isSource(m):
							if r.val[m] == v || r.val[m] == sw.VX {
								cand = min(sw.Supply, d.Strength)
							}
						case p[m] >= S[m].s: // passes on through m only at or above S(m)
							cand = min(p[m], d.Strength)
						}
						if cand > p[n] {
							p[n] = cand
							changed = true
						}
					}
				}
			}
			P[v] = p
		}
	}

	out := map[int]refOut{}
	for _, n := range g.nodes {
		v, s := S[n].v, S[n].s
		// 3. Decision.
		if g.unknown {
			p0, p1 := P[0][n], P[1][n]
			if (v == sw.V0 && p1 >= s) || (v == sw.V1 && p0 >= s) || v == sw.VX {
				v, s = sw.VX, max(s, p0, p1)
			}
		}
		// 4. State.
		contested := false
		for src := range g.boundary {
			if sv := r.val[src]; sv == sw.VX || (sv != v && v != sw.VX) {
				contested = true
			}
		}
		var st sw.State
		switch {
		case s.IsCharge() || s == sw.HighZ:
			st = sw.StateZ
		case v == sw.VX:
			st = sw.StateX
		case s == sw.Pull || s == sw.Weak || contested:
			st = sw.StateL + sw.State(v)
		default:
			st = sw.State0 + sw.State(v)
		}
		out[n] = refOut{sw.NodeState{Value: v, Strength: s, State: st}, fight[n]}
	}
	return out
}

// refState is a whole copy of the simulated state.
type refState struct {
	val    []sw.Value
	str    []sw.Strength
	state  []sw.State
	fight  []bool
	drive  []sw.Drive
	cond   []sw.Conduction
	forced map[int]bool
}

func (r *refSim) save() refState {
	return refState{slices.Clone(r.val), slices.Clone(r.str), slices.Clone(r.state), slices.Clone(r.fight),
		slices.Clone(r.drive), slices.Clone(r.cond), maps.Clone(r.forced)}
}

func (r *refSim) load(st refState) {
	copy(r.val, st.val)
	copy(r.str, st.str)
	copy(r.state, st.state)
	copy(r.fight, st.fight)
	copy(r.drive, st.drive)
	copy(r.cond, st.cond)
	r.forced = maps.Clone(st.forced)
}

// refRun is what one run of rounds did.
type refRun struct {
	rounds  int
	changed [][]int                // per round, sorted
	after   []map[int]sw.NodeState // per round: each changed node's state as the round left it
	settled bool                   // ended with a round without seeds, no forcing round on the way
	forced  map[int]bool           // nodes a forcing round set to X
	visits  int                    // nodes of the seeded groups solved
}

type refWarning struct {
	kind sw.WarnKind
	node int
}

type refResult struct {
	Rounds     int
	Changed    [][]int                // per round (0-based), sorted
	After      []map[int]sw.NodeState // per round: each changed node's state as the round left it
	Oscillated bool
	Settled    bool
	Ran        bool
	Why        sw.Why
	A, B       refRun
	Splits     int
	Bounded    bool
	Decided    bool
	Warnings   []refWarning // race, glitch, oscillation
}

// applyDrives gives each input its drive: "Settle first applies changed
// inputs (their new values are in place before round 1)". It returns the
// inputs whose drive differs from the one they had. READING: an input is
// changed when its drive differs from the one in force.
func (r *refSim) applyDrives(to map[int]sw.Drive) []int {
	var changed []int
	for _, n := range r.nl.Inputs() {
		d, ok := to[n]
		if !ok {
			continue
		}
		if d != r.drive[n] {
			changed = append(changed, n)
		}
		r.drive[n] = d
		if d != sw.DriveZ {
			r.val[n], r.str[n], r.state[n] = d.Value(), sw.Supply, [...]sw.State{sw.State0, sw.State1, sw.StateX}[d]
			r.fight[n] = false
		} // released: keeps its value, now as charge, until its group is solved
	}
	return changed
}

// run runs rounds: the first with the seeds given, each later one seeded by
// the devices whose state changed. When round L + 1 would start with seeds
// left: with stop the run ends there (not settled); otherwise it is a
// forcing round, and the run ends at the forcing round 2L + 1.
func (r *refSim) run(seeds map[int]bool, stop bool) refRun {
	nn := r.nl.NumNodes()
	res := refRun{forced: map[int]bool{}}
	seed := func(n int) {
		if !r.isSource(n) {
			seeds[n] = true
		}
	}
	changedAt := map[int]int{} // node -> last round of this run it changed in
	limit, extra := r.limit, false
	window := max(16, r.limit/8)
	for round := 1; ; round++ {
		// "every device whose gate node changed in round k-1 (or is a changed
		// input) takes its new state": a device's state is its gate's
		// function, so recompute them all and seed those that moved.
		now := r.conductions()
		for di, d := range r.devs {
			if now[di] != r.cond[di] {
				seed(d.A)
				seed(d.B)
			}
		}
		r.cond = now
		if len(seeds) == 0 { // "The rounds settle after the first round with no seeds."
			res.settled = len(res.forced) == 0 && !extra
			return res
		}
		if round > limit {
			if stop { // "the rounds stop there and race analysis decides the step"
				return res
			}
			// "round L + 1 is a forcing round: every node that changed in
			// rounds L+1-W .. L of this run of rounds, W = max(16, L/8), is set
			// to X (state Z if its strength is a charge strength), the nodes
			// this actually moved are that round's changes, ... the groups
			// queued for the round are dropped and the forced nodes' fan-out is
			// queued." The fan-out is queued by the device rule at the top of
			// the next round.
			r.oscillated = true
			var ch []int
			after := map[int]sw.NodeState{}
			for n := 0; n < nn; n++ {
				if k, ok := changedAt[n]; ok && k >= round-window && !r.isSource(n) {
					st := sw.StateX
					if r.str[n].IsCharge() {
						st = sw.StateZ
					}
					moved := r.val[n] != sw.VX || r.state[n] != st
					r.val[n], r.state[n] = sw.VX, st
					r.forced[n], res.forced[n] = true, true
					r.oscAt[n] = r.settleNo
					if moved {
						ch = append(ch, n)
						after[n] = r.Node(n)
						changedAt[n] = round
					}
				}
			}
			res.rounds = round
			res.changed = append(res.changed, ch)
			res.after = append(res.after, after)
			clear(seeds)
			if extra { // "if round 2L + 1 is reached, it is a forcing round too and the run stops there"
				return res // the devices catch up at the start of the next run
			}
			extra = true
			limit += r.limit
			continue
		}
		res.rounds = round
		gs := r.groups(r.cond)
		results := make([]map[int]refOut, len(gs))
		for i, g := range gs {
			results[i] = r.solve(g, r.cond)
		}
		var ch []int
		after := map[int]sw.NodeState{}
		for i, g := range gs {
			seeded, forced := false, false
			for _, n := range g.nodes {
				seeded = seeded || seeds[n]
				forced = forced || r.forced[n]
			}
			if seeded {
				res.visits += len(g.nodes)
			}
			for _, n := range g.nodes {
				ns := results[i][n]
				moved := ns.Value != r.val[n] || ns.Strength != r.str[n] || ns.State != r.state[n]
				if !seeded {
					// The whole network is solved every round; the rules
					// re-solve only the seeded groups, so an unseeded group
					// must already be a fixpoint (or oscillation forced it).
					if moved && !forced && !r.oscillated && !r.adopted && !r.branch {
						r.idle = append(r.idle, refIdleFinding{round, n, ns.NodeState})
					}
					continue
				}
				delete(r.forced, n)
				if !r.branch {
					r.solvedAt[n] = r.settleNo
				}
				if r.branch && ns.fight && ns.Strength >= r.top() {
					r.contradicted = true
				}
				r.val[n], r.str[n], r.state[n], r.fight[n] = ns.Value, ns.Strength, ns.State, ns.fight
				if moved {
					ch = append(ch, n)
					after[n] = r.Node(n)
					changedAt[n] = round
				}
			}
		}
		slices.Sort(ch)
		res.changed = append(res.changed, ch)
		res.after = append(res.after, after)
		clear(seeds)
	}
}

// inputSeeds: "... and the groups next to changed inputs". READING: the
// non-source nodes joined to a changed input by a device not off before the
// change (a device it switched is covered by the device rule), and the input
// itself if it was released.
func (r *refSim) inputSeeds(changed []int, before []sw.Conduction) map[int]bool {
	seeds := map[int]bool{}
	seed := func(n int) {
		if !r.isSource(n) {
			seeds[n] = true
		}
	}
	for _, n := range changed {
		seed(n)
		for di, d := range r.devs {
			if before[di] != sw.Off && (d.A == n || d.B == n) {
				seed(d.A)
				seed(d.B)
			}
		}
	}
	return seeds
}

// Settle applies the inputs set since the last Settle and runs rounds, race
// analysis and case analysis as DEVELOPERS.md says.
func (r *refSim) Settle() refResult {
	nn := r.nl.NumNodes()
	r.settleNo++
	var res refResult
	first := r.first
	s0 := r.save() // "S0 is the state before the Settle"

	next := map[int]sw.Drive{}
	for _, n := range r.nl.Inputs() {
		next[n] = r.next[n]
	}
	changedIn := r.applyDrives(next)
	seeds := r.inputSeeds(changedIn, s0.cond)
	if first { // "The first Settle after NewSim solves every group"
		r.first = false
		for n := 0; n < nn; n++ {
			if !r.isSource(n) {
				seeds[n] = true
			}
		}
	}
	may := !first && len(changedIn) > 0 && r.races != sw.RacesOff
	unit := r.run(seeds, may)
	res.Rounds, res.Changed, res.After, res.Settled = unit.rounds, unit.changed, unit.after, unit.settled
	solved := map[int]bool{} // "the X non-source nodes solved in this Settle"
	for n := 0; n < nn; n++ {
		if r.solvedAt[n] == r.settleNo {
			solved[n] = true
		}
	}
	forced := maps.Clone(unit.forced)
	var unitEnd refState
	var aVal []sw.Value
	analysis := may && (len(changedIn) > 1 || !unit.settled || r.races == sw.RacesEveryStep)
	if analysis {
		res.Ran = true
		if len(changedIn) > 1 {
			res.Why |= sw.WhyInputs
		}
		if !unit.settled {
			res.Why |= sw.WhyUnsettled
		}
		if r.races == sw.RacesEveryStep {
			res.Why |= sw.WhyAsked
		}
		unitEnd = r.save()
		r.load(s0)
		// "Phase A. From S0, every changed input whose new drive is 0, 1 or x
		// is driven x (a changed input whose new drive is z is released)."
		toA := map[int]sw.Drive{}
		for _, n := range changedIn {
			toA[n] = sw.DriveX
			if next[n] == sw.DriveZ {
				toA[n] = sw.DriveZ
			}
		}
		before := slices.Clone(r.cond)
		inA := r.applyDrives(toA)
		res.A = r.run(r.inputSeeds(inA, before), false)
		aVal = slices.Clone(r.val)
		// "Phase B. From the end of phase A, every changed input takes its new drive."
		before = slices.Clone(r.cond)
		inB := r.applyDrives(next)
		res.B = r.run(r.inputSeeds(inB, before), false)
		maps.Copy(forced, res.A.forced)
		maps.Copy(forced, res.B.forced)
		for n := 0; n < nn; n++ {
			if r.solvedAt[n] == r.settleNo {
				solved[n] = true
			}
		}
	}
	preCase := r.save()
	fail := r.cases(&res)
	if analysis {
		var osc []int
		for n := 0; n < nn; n++ {
			if r.nl.NodeKind(n) != sw.Internal || !solved[n] || s0.val[n] == sw.VX {
				continue
			}
			final := r.val[n]
			// "A node nothing sees (it gates no device and is no output) is not reported"
			seen := len(r.nl.GatedDevices(n)) > 0 || slices.Contains(r.nl.Outputs(), n)
			switch {
			case !seen:
			case final == sw.VX && !r.tainted(n) && (!unit.settled || unitEnd.val[n] != sw.VX):
				kind := sw.WarnRace
				if fail[n] {
					kind = sw.WarnOscillation
					osc = append(osc, n) // noted after every node's taint is judged
				}
				res.Warnings = append(res.Warnings, refWarning{kind, n})
			case aVal[n] == sw.VX && final == s0.val[n]:
				dynamic := s0.state[n] == sw.StateZ || r.state[n] == sw.StateZ
				// "or gates a device whose channel touches a node that is dynamic
				// (state Z in S0 or at the end)"
				gatesDynamic := false
				for _, di := range r.nl.GatedDevices(n) {
					for _, m := range []int{r.devs[di].A, r.devs[di].B} {
						seenM := len(r.nl.GatedDevices(m)) > 0 || slices.Contains(r.nl.Outputs(), m)
						if !r.isSource(m) && seenM && (s0.state[m] == sw.StateZ || r.state[m] == sw.StateZ) {
							gatesDynamic = true
						}
					}
				}
				if dynamic || gatesDynamic || r.passGate(n) || slices.Contains(r.nl.Outputs(), n) {
					res.Warnings = append(res.Warnings, refWarning{sw.WarnGlitch, n})
				}
			}
		}
		for _, n := range osc {
			r.oscAt[n] = r.settleNo
		}
	}
	// "Every node forced that is X at the end of the Settle gets an oscillation warning."
	for n, f := range forced {
		if f && r.val[n] == sw.VX {
			res.Warnings = append(res.Warnings, refWarning{sw.WarnOscillation, n})
		}
	}
	for _, w := range res.Warnings {
		res.Oscillated = res.Oscillated || w.kind == sw.WarnOscillation
	}
	// "Decision round: if any node's final state differs from the one the
	// unit-delay rounds left it in, one more round is recorded"
	ref := preCase // without race analysis the rounds' end is the state before case analysis
	if analysis {
		ref = unitEnd
	}
	var ch []int
	after := map[int]sw.NodeState{}
	for n := 0; n < nn; n++ {
		if r.isSource(n) {
			continue
		}
		if ref.val[n] != r.val[n] || ref.str[n] != r.str[n] || ref.state[n] != r.state[n] {
			ch = append(ch, n)
			after[n] = r.Node(n)
		}
	}
	if len(ch) > 0 {
		res.Decided = true
		res.Rounds++
		res.Changed = append(res.Changed, ch)
		res.After = append(res.After, after)
	}
	return res
}

// tainted: "An X node is tainted when its X can come from an input driven
// x, a fight, a node found oscillating (forced, or an oscillation of the
// analysis, until it is solved again) ... The search goes backwards over X
// nodes: from a node to the other terminal of each device on its channel
// that is on or unknown, and from each such device of unknown state to its
// gate." Written as the least set closed under those steps.
func (r *refSim) tainted(n int) bool {
	nn := r.nl.NumNodes()
	x := func(m int) bool { return !r.isSource(m) && r.val[m] == sw.VX }
	t := make([]bool, nn)
	for m := 0; m < nn; m++ {
		t[m] = x(m) && (r.fight[m] || (r.oscAt[m] > 0 && r.oscAt[m] >= r.solvedAt[m]))
	}
	xsrc := func(m int) bool { return r.isSource(m) && r.val[m] == sw.VX }
	for changed := true; changed; {
		changed = false
		for m := 0; m < nn; m++ {
			if t[m] || !x(m) {
				continue
			}
			for _, di := range r.nl.ChannelDevices(m) {
				d := r.devs[di]
				c := r.cond[di]
				if c == sw.Off {
					continue
				}
				o := r.nl.Other(di, m)
				if xsrc(o) || (x(o) && t[o]) {
					t[m] = true
				}
				if c == sw.Unknown && d.Gate >= 0 && (xsrc(d.Gate) || (x(d.Gate) && t[d.Gate])) {
					t[m] = true
				}
			}
			changed = changed || t[m]
		}
	}
	return t[n]
}

// passGate: the node gates a pass device: "neither channel terminal is a
// rail and a terminal is an input, or another device joins the same two
// nodes, or each terminal is an output or gates a device".
func (r *refSim) passGate(n int) bool {
	rail := func(m int) bool { k := r.nl.NodeKind(m); return k == sw.Power || k == sw.Ground }
	signal := func(m int) bool {
		return r.nl.NodeKind(m) == sw.Input || slices.Contains(r.nl.Outputs(), m) || len(r.nl.GatedDevices(m)) > 0
	}
	for _, di := range r.nl.GatedDevices(n) {
		d := r.devs[di]
		if d.Gate < 0 || rail(d.A) || rail(d.B) || d.A == d.B {
			continue
		}
		if r.nl.NodeKind(d.A) == sw.Input || r.nl.NodeKind(d.B) == sw.Input || (signal(d.A) && signal(d.B)) {
			return true
		}
		for oi, o := range r.devs {
			if oi != di && ((o.A == d.A && o.B == d.B) || (o.A == d.B && o.B == d.A)) {
				return true
			}
		}
	}
	return false
}

// cases is case analysis on the present state; it returns the nodes
// changed in a split whose two branches both did not settle.
func (r *refSim) cases(res *refResult) map[int]bool {
	fail := map[int]bool{}
	if r.splitMax < 0 {
		return fail
	}
	nn := r.nl.NumNodes()
	budget := 64*nn + 4096 // "once the Settle has solved 64 x nodes + 4096 nodes ... since case analysis began"
	visits := 0
	for !res.Bounded {
		// "Candidates: the X non-source nodes solved in this Settle that gate at
		// least one device and are not tainted, in node order."
		var cands []int
		for n := 0; n < nn; n++ {
			if r.solvedAt[n] == r.settleNo && r.val[n] == sw.VX && !r.isSource(n) && len(r.nl.GatedDevices(n)) > 0 && !r.tainted(n) {
				cands = append(cands, n)
			}
		}
		if len(cands) == 0 {
			break
		}
		type resolved struct {
			st       sw.NodeState
			conflict bool
		}
		got := map[int]*resolved{}
		for _, c := range cands {
			if res.Splits >= r.splitMax || visits >= budget {
				res.Bounded = true
				break
			}
			res.Splits++
			present := r.save()
			var ends [2]refState
			var settled, bad [2]bool
			var moved [2]map[int]bool
			for v := sw.V0; v <= sw.V1; v++ {
				// "c's value becomes v (its strength stays; state Z for a charge
				// strength, L/H below strong, else 0/1), the devices c gates take
				// their new state and rounds run"
				r.val[c] = v
				switch st := r.str[c]; {
				case st.IsCharge() || st == sw.HighZ:
					r.state[c] = sw.StateZ
				case st < sw.Strong:
					r.state[c] = sw.StateL + sw.State(v)
				default:
					r.state[c] = sw.State0 + sw.State(v)
				}
				r.branch, r.contradicted = true, false
				run := r.run(map[int]bool{}, true)
				r.branch = false
				// "A branch is contradicted when it ends with c at the other value,
				// or when a node in it got X from a fight at the strongest strength
				// a device passes"
				bad[v] = r.contradicted || r.val[c] == 1-v
				visits += run.visits
				settled[v], ends[v] = run.settled, r.save()
				moved[v] = map[int]bool{}
				for n := 0; n < nn; n++ {
					if ends[v].val[n] != present.val[n] || ends[v].str[n] != present.str[n] || ends[v].state[n] != present.state[n] {
						moved[v][n] = true
					}
				}
				r.load(present) // "After each branch the state goes back to the present one."
			}
			record := func(n int, st sw.NodeState) {
				if g, ok := got[n]; !ok {
					got[n] = &resolved{st: st}
				} else if g.st.Value != st.Value {
					g.conflict = true
				} else {
					g.st = weakerRef(g.st, st)
				}
			}
			switch {
			case settled[0] && settled[1] && !bad[0] && !bad[1]:
				for n := 0; n < nn; n++ {
					v0, v1 := ends[0].val[n], ends[1].val[n]
					if present.val[n] != sw.VX || r.isSource(n) || v0 == sw.VX || v0 != v1 {
						continue
					}
					record(n, weakerRef(ends[0].stateOf(n), ends[1].stateOf(n)))
				}
			case (bad[0] && !bad[1] && settled[1]) || (bad[1] && !bad[0] && settled[0]):
				// "If exactly one branch is contradicted and the other settled, c
				// has the other branch's value in every real state, and every node
				// X in the present state that is 0 or 1 at the end of that branch is
				// resolved by c with the state it has there."
				w := 0
				if bad[0] {
					w = 1
				}
				for n := 0; n < nn; n++ {
					if v := ends[w].val[n]; present.val[n] == sw.VX && !r.isSource(n) && v != sw.VX {
						record(n, ends[w].stateOf(n))
					}
				}
			case !settled[0] && !settled[1]:
				for n := range moved[0] {
					fail[n] = true
				}
				for n := range moved[1] {
					fail[n] = true
				}
			}
		}
		any := false
		for n, g := range got {
			if g.conflict {
				continue
			}
			any = true
			r.val[n], r.str[n], r.state[n], r.fight[n] = g.st.Value, g.st.Strength, g.st.State, false
		}
		if !any {
			break
		}
		r.adopted = true
		// "the devices those nodes gate take their new state and rounds run
		// (limit L, no forcing), as in a branch"
		visits += r.run(map[int]bool{}, true).visits
	}
	return fail
}

// top: "the strongest strength a device passes": min(supply, cap) over devices.
func (r *refSim) top() sw.Strength {
	t := sw.HighZ
	for _, d := range r.devs {
		t = max(t, min(sw.Supply, d.Strength))
	}
	return t
}

func (st refState) stateOf(n int) sw.NodeState {
	return sw.NodeState{Value: st.val[n], Strength: st.str[n], State: st.state[n], Floating: st.str[n].IsCharge()}
}

// weakerRef: "the state of the branch where it is weaker (lower strength,
// then lower state letter ...; branch 0 on a tie)".
func weakerRef(a, b sw.NodeState) sw.NodeState {
	if b.Strength < a.Strength || (b.Strength == a.Strength && b.State < a.State) {
		return b
	}
	return a
}
