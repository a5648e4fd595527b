package switchsim

import "math"

// solveGroup collects the group of seed (nodes joined by devices that are
// not off, bounded by sources), resolves it (DEVELOPERS.md "Resolving a
// group") and writes the results, recording the changes.
func (s *Sim) solveGroup(seed int32) {
	switch {
	case s.mode == Ideal && !s.slowIdeal && s.solveAlone(seed):
		return
	case s.mode == Physical && s.physAlone(seed): // the same for physical mode (physical_single.go)
		return
	}
	nl := s.nl
	g := &s.g
	// A node the group takes is marked gid; a source it lists too. A node
	// whose devices have been looked at is marked gid + 1, so that a device
	// between two of the group's nodes is listed once, from the first of
	// them looked at (the order in which the devices are first met).
	gid := s.stamp()
	done := s.stamp()
	mark := s.mark
	g.nodes, g.srcs, g.devs = g.nodes[:0], g.srcs[:0], g.devs[:0]
	g.hasUnknown = false
	g.srcHas = [3]bool{}
	g.nodes = append(g.nodes, seed)
	mark[seed].round = gid
	log, rec := s.undo.on, s.rec != nil
	for i := 0; i < len(g.nodes); i++ {
		n := g.nodes[i]
		mark[n].round = done
		// log before the solve that may change it; mark it solved in this settle
		if log && s.undo.nmark[n] != s.undo.id {
			s.saveNode(n)
		}
		if rec && mark[n].touch != s.settleID {
			s.touch(n)
		}
		for _, d := range nl.chanDev[nl.chanStart[n]:nl.chanStart[n+1]] {
			c := s.cond[d]
			if c == Off {
				continue
			}
			o := nl.other(d, n)
			if o != n && mark[o].round == done {
				continue // listed when o was looked at
			}
			g.devs = append(g.devs, d)
			if c == Unknown {
				g.hasUnknown = true
			}
			if s.source[o] {
				if mark[o].round != gid {
					mark[o].round = gid
					g.srcs = append(g.srcs, o)
					g.srcHas[s.val[o]] = true
				}
			} else if mark[o].round != gid && o != n {
				mark[o].round = gid
				g.nodes = append(g.nodes, o)
			}
		}
	}
	s.ana.visits += len(g.nodes)
	if s.mode == Ideal && !s.slowIdeal && !g.hasUnknown && len(g.srcs) > 0 && s.allStrong(g) {
		// resolveDriven and commit in one: ideal mode has no voltages to add
		v, state, mixed := drivenBy(g.srcHas)
		for _, n := range g.nodes {
			s.nflag[n] = nodeFlags(mixed, false, false)
			s.write(n, v, Strong, state, math.NaN())
		}
		return
	}
	s.resolve(g)
	if s.mode == Physical {
		s.physGroup(g)
	}
	s.commit(g)
}

// solveAlone solves seed's group in ideal mode where it is seed alone with
// no device of unknown state (an inverter's output, a closed latch's node:
// the commonest group), in one pass over seed's devices and without the
// group's lists; it reports false, having changed nothing, where the group
// is more (a device not off leads to another node) or a device is of
// unknown state. The result is resolveSingle's: the strongest of seed's charge
// and the sources reaching it through devices that are on wins, equal
// strengths combine.
func (s *Sim) solveAlone(seed int32) bool {
	nl := s.nl
	in := arrival{nl.nodeCharge[seed], s.val[seed], 1 << s.val[seed]}
	var has uint8 // the values of the boundary's sources, bit 1<<value (group.srcHas)
	for _, d := range nl.chanDev[nl.chanStart[seed]:nl.chanStart[seed+1]] {
		c := s.cond[d]
		if c == Off {
			continue
		}
		o := nl.other(d, seed)
		if o == seed {
			if c == Unknown {
				return false
			}
			continue // a device from the node to itself
		}
		if c == Unknown || !s.source[o] {
			return false
		}
		sv := s.val[o]
		has |= 1 << sv
		in.add(nl.pass(d, Supply), sv)
	}
	s.mark[seed].round = s.stamp()
	if s.undo.on && s.undo.nmark[seed] != s.undo.id {
		s.saveNode(seed)
	}
	if s.rec != nil && s.mark[seed].touch != s.settleID {
		s.touch(seed)
	}
	s.ana.visits++
	other := uint8(1<<V1 | 1<<VX) // the sources that contest a 0
	if in.v == V1 {
		other = 1<<V0 | 1<<VX
	}
	contested := in.v != VX && has&other != 0
	s.nflag[seed] = nodeFlags(in.arrived&3 == 3, contested, false)
	s.write(seed, in.v, in.best, in.state(contested), math.NaN())
	return true
}

// arrival is what reaches one node of a one-node group: the strongest
// strength, its value (combined where equal strengths meet) and the values
// that arrived at it (bit 1<<value; a 0 and a 1 are a fight).
type arrival struct {
	best    Strength
	v       Value
	arrived uint8
}

// add meets a signal of value sv arriving at strength st.
func (a *arrival) add(st Strength, sv Value) {
	switch {
	case st > a.best:
		a.best, a.v, a.arrived = st, sv, 1<<sv
	case st == a.best:
		a.arrived |= 1 << sv
		a.v = lub(a.v, sv)
	}
}

// state is the node's summary once everything has arrived.
func (a *arrival) state(contested bool) State {
	switch {
	case a.best.IsCharge():
		return StateZ
	case a.v == VX:
		return StateX
	case contested || a.best < Strong:
		return StateL + State(a.v)
	}
	return State0 + State(a.v)
}

// touch marks node n solved in this settle (outside case-analysis branches,
// which are undone): its last change and its analysis note start afresh.
func (s *Sim) touch(n int32) {
	s.mark[n].touch, s.mark[n].last = s.settleID, 0
	s.touched = append(s.touched, n)
	if s.note != nil && s.note[n].kind != noteNone {
		s.note[n] = nodeNote{}
	}
}

// resolve computes the ideal-mode result of g into g.nval, g.nstr, g.nstate.
func (s *Sim) resolve(g *group) {
	nl := s.nl
	k := len(g.nodes)
	g.nval, g.nstr, g.nstate = grow(g.nval, k), grow(g.nstr, k), grow(g.nstate, k)
	g.contested = grow(g.contested, k)
	if s.mode == Physical { // ideal mode has no voltages: commit reads none
		g.nvolts = grow(g.nvolts, k)
		for i := range g.nvolts {
			g.nvolts[i] = math.NaN()
		}
	}

	if !g.hasUnknown && !s.slowIdeal {
		switch {
		case k == 1:
			s.resolveSingle(g)
			return
		case len(g.srcs) > 0 && s.allStrong(g):
			s.resolveDriven(g)
			return
		}
	}

	// Sure pass: devices that are on. Strengths are settled level by level,
	// strongest first; a node takes the strongest signal that reaches it and
	// passes on only that (weaker signals are blocked, Bryant 1984). The
	// nodes reached at one level through devices at least that strong form a
	// component whose value is the combination of everything injected into it.
	stamp := s.stamp() // a node's mark is stamp once its level's component took it
	done := s.mark
	s.best, s.inj, s.arr = perNode(s.best, len(s.val)), perNode(s.inj, len(s.val)), perNode(s.arr, len(s.val))
	for i := range s.buckets {
		s.buckets[i] = s.buckets[i][:0]
	}
	for _, n := range g.nodes {
		s.best[n], s.inj[n], s.arr[n] = nl.nodeCharge[n], s.val[n], 1<<s.val[n]
		s.nflag[n] &^= nfShared
		s.buckets[s.best[n]] = append(s.buckets[s.best[n]], n)
	}
	// Sources inject through the group's own devices only: a rail touches
	// every group of the design, and scanning its devices for each group
	// would make a settle quadratic.
	for _, d := range g.devs {
		if s.cond[d] != On {
			continue
		}
		a, b := nl.devA[d], nl.devB[d]
		switch {
		case s.source[a] && !s.source[b]:
			s.relax(b, nl.pass(d, Supply), s.val[a], stamp)
		case s.source[b] && !s.source[a]:
			s.relax(a, nl.pass(d, Supply), s.val[b], stamp)
		}
	}
	for lvl := Supply; lvl >= Small; lvl-- {
		for bi := 0; bi < len(s.buckets[lvl]); bi++ {
			t := s.buckets[lvl][bi]
			if done[t].round == stamp || s.best[t] != lvl {
				continue
			}
			s.comp = append(s.comp[:0], t)
			done[t].round = stamp
			cv := s.inj[t]
			arrived := s.arr[t] // the values that arrived at this level; a 0 and a 1 are a fight, not an unknown
			for ci := 0; ci < len(s.comp); ci++ {
				m := s.comp[ci]
				for _, d := range nl.chanDev[nl.chanStart[m]:nl.chanStart[m+1]] {
					if s.cond[d] != On || nl.pass(d, lvl) < lvl {
						continue
					}
					o := nl.other(d, m)
					if s.source[o] || done[o].round == stamp {
						continue
					}
					done[o].round = stamp
					if s.best[o] == lvl {
						arrived |= s.arr[o]
						cv = lub(cv, s.inj[o])
					}
					s.comp = append(s.comp, o)
				}
			}
			shared := false
			if lvl.IsCharge() && len(s.comp) > 1 {
				for _, m := range s.comp {
					shared = shared || s.val[m] != cv
				}
			}
			mixed := arrived&3 == 3
			for _, m := range s.comp {
				s.best[m], s.inj[m] = lvl, cv
				s.nflag[m] = s.nflag[m]&nfContest | nodeFlags(mixed, false, shared)
			}
			for _, m := range s.comp {
				for _, d := range nl.chanDev[nl.chanStart[m]:nl.chanStart[m+1]] {
					if s.cond[d] != On || nl.pass(d, lvl) >= lvl {
						continue
					}
					o := nl.other(d, m)
					if !s.source[o] && done[o].round != stamp {
						s.relax(o, nl.pass(d, lvl), cv, stamp)
					}
				}
			}
		}
	}

	// Ternary pass (Bryant 1984): with devices of unknown state, compute for
	// each value the strongest signal that could reach each node through
	// devices on or unknown, blocked only by stronger sure signals. A sure
	// value stands only if every opposing potential is weaker.
	if g.hasUnknown {
		s.potential(g, V0)
		s.potential(g, V1)
	}
	for i, n := range g.nodes {
		v, st := s.inj[n], s.best[n]
		if g.hasUnknown {
			p0, p1 := s.pot[0][n], s.pot[1][n]
			switch {
			case v == V0 && p1 >= st, v == V1 && p0 >= st:
				v, st = VX, max(st, p0, p1)
			case v == VX:
				st = max(st, p0, p1)
			}
		}
		g.nval[i], g.nstr[i] = v, st
		contested := (v == V0 && (g.srcHas[V1] || g.srcHas[VX])) || (v == V1 && (g.srcHas[V0] || g.srcHas[VX]))
		g.contested[i] = contested
		s.nflag[n] = s.nflag[n]&^nfContest | nodeFlags(false, contested, false)
		switch {
		case st.IsCharge() || st == HighZ:
			g.nstate[i] = StateZ
		case v == VX:
			g.nstate[i] = StateX
		case contested || st < Strong:
			g.nstate[i] = StateL + State(v)
		default:
			g.nstate[i] = State0 + State(v)
		}
	}
}

// resolveSingle is resolve for the commonest group: one node, no device of
// unknown state (an inverter's output, a closed latch's node). The strongest
// of its own charge and the sources reaching it through devices that are on
// wins; equal strengths combine. No blocking or ternary pass is needed.
func (s *Sim) resolveSingle(g *group) {
	g.nval[0], g.nstr[0], g.nstate[0], g.contested[0] = s.single(g)
}

// single resolves g's one node (resolveSingle) and notes its fight,
// sharing and contest.
func (s *Sim) single(g *group) (Value, Strength, State, bool) {
	nl := s.nl
	n := g.nodes[0]
	in := arrival{nl.nodeCharge[n], s.val[n], 1 << s.val[n]}
	for _, d := range g.devs {
		if s.cond[d] != On {
			continue
		}
		src := nl.other(d, n)
		if !s.source[src] {
			continue // a device from the node to itself
		}
		in.add(nl.pass(d, Supply), s.val[src])
	}
	v := in.v
	contested := (v == V0 && (g.srcHas[V1] || g.srcHas[VX])) || (v == V1 && (g.srcHas[V0] || g.srcHas[VX]))
	s.nflag[n] = nodeFlags(in.arrived&3 == 3, contested, false)
	return v, in.best, in.state(contested), contested
}

// allStrong reports whether every device of g passes every driving signal
// at strong (devStrong), as resolveDriven needs.
func (s *Sim) allStrong(g *group) bool {
	for _, d := range g.devs {
		if s.nl.devFlag[d]&devStrong == 0 {
			return false
		}
	}
	return true
}

// resolveDriven is resolve for a group that a source reaches, whose
// devices are all on and pass every driving signal at strong: every
// node is reached at strong by every source of the boundary, so the
// whole group is one component at that level, with the combined value of
// the boundary (a fight where it holds a 0 and a 1). No node is contested:
// the node's value is the boundary's, or X.
func (s *Sim) resolveDriven(g *group) {
	v, state, mixed := drivenBy(g.srcHas)
	for i, n := range g.nodes {
		s.nflag[n] = nodeFlags(mixed, false, false)
		g.nval[i], g.nstr[i], g.nstate[i], g.contested[i] = v, Strong, state, false
	}
}

// drivenBy is the value and state of every node of a group resolveDriven
// takes, from the values its boundary holds, and whether that is a fight
// (a 0 and a 1).
func drivenBy(h [3]bool) (Value, State, bool) {
	switch {
	case h[VX] || (h[V0] && h[V1]):
		return VX, StateX, h[V0] && h[V1]
	case h[V0]:
		return V0, State0, false
	}
	return V1, State1, false
}

func (s *Sim) relax(o int32, st Strength, v Value, stamp uint32) {
	switch {
	case st > s.best[o]:
		s.best[o], s.inj[o], s.arr[o] = st, v, 1<<v
		s.buckets[st] = append(s.buckets[st], o)
	case st == s.best[o]:
		s.arr[o] |= 1 << v
		s.inj[o] = lub(s.inj[o], v)
	}
}

// potential fills s.pot[v] for the nodes of g: the strongest strength at
// which a signal of value v (or X) could reach each node, through devices
// on or unknown, passing on through a node only at or above that node's
// sure strength (s.best).
func (s *Sim) potential(g *group, v Value) {
	nl := s.nl
	s.pot[v] = perNode(s.pot[v], len(s.val)) // made on first use: most groups have no device of unknown state
	pot, pdone := s.pot[v], s.mark
	stamp := s.stamp()
	for i := range s.buckets {
		s.buckets[i] = s.buckets[i][:0]
	}
	for _, n := range g.nodes {
		pot[n] = HighZ
		if sv := s.val[n]; sv == v || sv == VX {
			pot[n] = nl.nodeCharge[n]
			s.buckets[pot[n]] = append(s.buckets[pot[n]], n)
		}
	}
	push := func(o int32, st Strength) {
		if st > pot[o] {
			pot[o] = st
			s.buckets[st] = append(s.buckets[st], o)
		}
	}
	for _, d := range g.devs { // devices not off; sources inject through them only
		a, b := nl.devA[d], nl.devB[d]
		if s.source[b] {
			a, b = b, a
		}
		if !s.source[a] || s.source[b] {
			continue
		}
		if sv := s.val[a]; sv == v || sv == VX {
			push(b, nl.pass(d, Supply))
		}
	}
	for lvl := Supply; lvl >= Small; lvl-- {
		for bi := 0; bi < len(s.buckets[lvl]); bi++ {
			t := s.buckets[lvl][bi]
			if pdone[t].round == stamp || pot[t] != lvl {
				continue
			}
			pdone[t].round = stamp
			if lvl < s.best[t] {
				continue // blocked by a stronger sure signal
			}
			for _, d := range nl.chanDev[nl.chanStart[t]:nl.chanStart[t+1]] {
				if s.cond[d] == Off {
					continue
				}
				o := nl.other(d, t)
				if !s.source[o] && pdone[o].round != stamp {
					push(o, nl.pass(d, lvl))
				}
			}
		}
	}
}

// commit writes g's results and records the nodes that changed.
func (s *Sim) commit(g *group) {
	for i, n := range g.nodes {
		if s.volts == nil { // ideal mode
			s.write(n, g.nval[i], g.nstr[i], g.nstate[i], math.NaN())
			continue
		}
		if s.write(n, g.nval[i], g.nstr[i], g.nstate[i], g.nvolts[i]) {
			delay := s.physDelay(g, i) // it notes the delay in the node's record too
			if rec := s.rec; rec != nil && rec.delays {
				rec.delay = append(rec.delay, delay)
			}
		}
	}
}

// write gives node n its state and, where that moved it, records the change
// (the delay is the caller's) and queues its fan-out; it reports whether
// it moved the node.
func (s *Sim) write(n int32, v Value, st Strength, state State, vo float64) bool {
	if v == VX {
		s.ana.sawX = true
	}
	moved := s.val[n] != v || s.str[n] != st || s.state[n] != state
	if s.volts != nil {
		moved = moved || voltsMoved(s.volts[n], vo)
		s.volts[n] = vo
	}
	s.val[n], s.str[n], s.state[n] = v, st, state
	rec := s.rec
	if rec == nil && s.flag(n, nfFight) && st >= s.nl.top {
		s.ana.contradicted = true // a fight no stronger signal can override: not a real state
	}
	if !moved {
		return false
	}
	if rec != nil {
		s.mark[n].last = s.roundNo
		rec.changed = append(rec.changed, n)
		rec.after = append(rec.after, NodeState{v, st, state, st.IsCharge(), vo})
	}
	s.gates = append(s.gates, n)
	return true
}

// voltsMoved reports a voltage change worth a round: more than a microvolt,
// or between known and unknown.
func voltsMoved(a, b float64) bool {
	if math.IsNaN(a) || math.IsNaN(b) {
		return math.IsNaN(a) != math.IsNaN(b)
	}
	return math.Abs(a-b) > 1e-6
}

func grow[T any](s []T, n int) []T {
	if cap(s) < n {
		return make([]T, n, 2*n)
	}
	return s[:n]
}
