package switchsim_test

// The reference solver: DEVELOPERS.md "The engine's rules, exactly",
// written down as plainly as possible and nothing more. No buckets, no
// incremental state: every round recomputes every device's state from the
// node values, rebuilds every group from scratch, and solves each group by
// naive fixpoint iteration (repeat until nothing changes). Ideal mode only.
//
// Where the text leaves a choice, the reading taken is marked READING.

import (
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
}

// refIdleFinding records a group the rules did not re-solve but whose
// state is not a fixpoint of the resolution rules.
type refIdleFinding struct {
	round int
	node  int
	would sw.NodeState
}

type refResult struct {
	Rounds     int
	Changed    [][]int                // per round (0-based), sorted
	After      []map[int]sw.NodeState // per round: each changed node's state as the round left it
	Oscillated bool
}

func newRef(nl *sw.Netlist, limit int) *refSim {
	nn, nd := nl.NumNodes(), nl.NumDevices()
	r := &refSim{nl: nl, limit: limit, first: true, forced: map[int]bool{}}
	if r.limit <= 0 {
		r.limit = 2*nn + 64 // "Round limit: 2 x nodes + 64"
	}
	for d := 0; d < nd; d++ {
		r.devs = append(r.devs, nl.Device(d))
	}
	r.val, r.str, r.state = make([]sw.Value, nn), make([]sw.Strength, nn), make([]sw.State, nn)
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

// solve resolves one group (ideal mode) from the present stored values and
// the given device states, returning each node's value, strength, state.
func (r *refSim) solve(g *refGroup, cond []sw.Conduction) map[int]sw.NodeState {
	// 1. Sure signal over devices that are on. READING: "least fixpoint ...
	// computed level by level from supply down" is taken as its definition:
	// at each level L (supply first) the nodes not yet decided that some
	// signal of strength exactly L reaches are decided at L, their value
	// the combination of every value arriving at L; a signal arriving at L
	// comes from the node's own charge (if its class is L), a boundary
	// source through an on device with min(supply, cap) = L, a node decided
	// at a higher level through an on device whose min(strength, cap) = L,
	// or a node decided at L through an on device with cap >= L. Weaker
	// signals never pass a decided node.
	S := map[int]refSig{}
	for L := sw.Supply; L >= sw.Small; L-- {
		tent := map[int]sw.Value{} // nodes reached at L so far
		for changed := true; changed; {
			changed = false
			for _, n := range g.nodes {
				if _, done := S[n]; done {
					continue
				}
				var got []sw.Value
				if r.nl.NodeCharge(n) == L {
					got = append(got, r.val[n])
				}
				for _, di := range g.devs {
					d := r.devs[di]
					if cond[di] != sw.On || (d.A != n && d.B != n) {
						continue
					}
					m := d.A
					if m == n {
						m = d.B
					}
					var arr refSig
					switch sm, decided := S[m]; {
					case r.isSource(m):
						arr = refSig{r.val[m], min(sw.Supply, d.Strength)}
					case decided:
						arr = refSig{sm.v, min(sm.s, d.Strength)}
					default:
						tv, ok := tent[m]
						if !ok {
							continue
						}
						arr = refSig{tv, min(L, d.Strength)}
					}
					if arr.s > L {
						panic("reference: a signal stronger than the level reached an undecided node")
					}
					if arr.s == L {
						got = append(got, arr.v)
					}
				}
				if len(got) == 0 {
					continue
				}
				v := got[0]
				for _, w := range got[1:] {
					v = lubValue(v, w)
				}
				if old, ok := tent[n]; !ok || old != v {
					tent[n] = v
					changed = true
				}
			}
		}
		for n, v := range tent {
			S[n] = refSig{v, L}
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

	out := map[int]sw.NodeState{}
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
		out[n] = sw.NodeState{Value: v, Strength: s, State: st}
	}
	return out
}

// Settle applies the inputs set since the last Settle and runs rounds.
func (r *refSim) Settle() refResult {
	nn := r.nl.NumNodes()
	var res refResult
	old := r.cond

	// "Settle first applies changed inputs (their new values are in place
	// before round 1)." READING: an input is changed when its drive differs
	// from the one in force.
	var changedIn []int
	for _, n := range r.nl.Inputs() {
		if r.next[n] != r.drive[n] {
			changedIn = append(changedIn, n)
		}
		r.drive[n] = r.next[n]
		if d := r.drive[n]; d != sw.DriveZ {
			r.val[n], r.str[n], r.state[n] = d.Value(), sw.Supply, [...]sw.State{sw.State0, sw.State1, sw.StateX}[d]
		} // released: keeps its value, now as charge, until its group is solved
	}

	seeds := map[int]bool{}
	seed := func(n int) {
		if !r.isSource(n) {
			seeds[n] = true
		}
	}
	if r.first { // "The first Settle after NewSim solves every group"
		r.first = false
		for n := 0; n < nn; n++ {
			seed(n)
		}
	}
	// "... and the groups next to changed inputs": READING: the non-source
	// nodes joined to a changed input by a device not off before the
	// change (a device it switched is covered by the device rule below),
	// and the input itself if it was released.
	for _, n := range changedIn {
		seed(n)
		for di, d := range r.devs {
			if old[di] != sw.Off && (d.A == n || d.B == n) {
				seed(d.A)
				seed(d.B)
			}
		}
	}

	changedAt := map[int]int{} // node -> last round of this settle it changed in
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
		if len(seeds) == 0 { // "The settle ends after the first round with no seeds."
			break
		}
		if round > limit {
			// "When round L + 1 would start, it becomes a forcing round
			// instead: every node that changed in rounds L+1-W .. L, W =
			// max(16, L/8), is set to X (state Z if its strength is a charge
			// strength), the nodes this actually moved are that round's
			// changes, ... the groups queued for the round are dropped and the
			// forced nodes' fan-out is queued." (These were READINGs of an
			// earlier, vaguer text; DEVELOPERS.md now says so.) The fan-out is
			// queued by the device rule at the top of the next round.
			res.Oscillated, r.oscillated = true, true
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
					r.forced[n] = true
					if moved {
						ch = append(ch, n)
						after[n] = r.Node(n)
						changedAt[n] = round
					}
				}
			}
			res.Rounds = round
			res.Changed = append(res.Changed, ch)
			res.After = append(res.After, after)
			clear(seeds)
			if extra { // "if round 2L + 1 is reached, it is a forcing round too and the settle stops there"
				break // the devices catch up at the start of the next Settle
			}
			extra = true
			limit += r.limit
			continue
		}
		res.Rounds = round
		gs := r.groups(r.cond)
		results := make([]map[int]sw.NodeState, len(gs))
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
			for _, n := range g.nodes {
				ns := results[i][n]
				moved := ns.Value != r.val[n] || ns.Strength != r.str[n] || ns.State != r.state[n]
				if !seeded {
					// The whole network is solved every round; the rules
					// re-solve only the seeded groups, so an unseeded group
					// must already be a fixpoint (or oscillation forced it).
					if moved && !forced && !r.oscillated {
						r.idle = append(r.idle, refIdleFinding{round, n, ns})
					}
					continue
				}
				delete(r.forced, n)
				r.val[n], r.str[n], r.state[n] = ns.Value, ns.Strength, ns.State
				if moved {
					ch = append(ch, n)
					after[n] = r.Node(n)
					changedAt[n] = round
				}
			}
		}
		slices.Sort(ch)
		res.Changed = append(res.Changed, ch)
		res.After = append(res.After, after)
		clear(seeds)
	}
	return res
}
