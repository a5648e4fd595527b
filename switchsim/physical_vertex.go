package switchsim

import "math"

// Devices of unknown state in physical mode (switchsim §4 and §5). Bryant's
// ternary rule makes a node X when a device of unknown state could bring it
// a signal as strong as the one holding it. Strengths cannot tell a write
// that overpowers a keeper from a path that loses to the node's own driver;
// the voltages can. The commonest case is a clock edge: for the moment both
// clock phases are unknown (race analysis's phase A, or the rounds between
// a clock and its buffered complement), a transmission gate joins a
// latch's input to the other latch's clocked-inverter feedback, and an
// inverter driving the input directly faces a stack of series devices
// through a pass device. Ternary says X; the devices say the inverter wins.
//
// So a group in which the ternary pass left a node X and that has at most
// maxVertexDevices devices of unknown state is solved once for every
// assignment of them: each device on (its gate at the full level, as a
// device of unknown gate voltage is solved everywhere) or off, a vertex of
// the box of their conductances. Each assignment is solved as the group
// would be were those devices known: split into the parts the on devices
// join, each resolved and estimated as its own group. A node voltage of a
// network of devices whose currents grow with their gate drive moves
// monotonically with each device's conductance (common practice for
// resistive networks, from memory), so over the box its extremes lie at
// vertices: a node with the same value at every vertex has that value
// whatever the unknown devices do, between the extremes (first order, at
// DC); the others stay X. The node keeps the weakest strength and the
// worst state and level it has at any vertex. Ideal mode keeps the ternary
// rule: with strengths alone a fight of equals has no winner.

// maxVertexDevices bounds the devices of unknown state a group is solved
// at every assignment of (2^6 = 64 solves; at 8, a datapath's clock edges
// took 20 times ideal mode, its selector-and-latch groups having 8); a
// larger group keeps the ternary result.
const maxVertexDevices = 6

// vertexState is the scratch of the vertex solve, allocated on first use.
type vertexState struct {
	unk   []int32  // the group's devices of unknown state
	pos   []int32  // node -> its index in the group being solved
	mark  []uint32 // node -> gen when taken by a part of this vertex
	dmark []uint32 // device -> gen when listed in a part of this vertex
	gen   uint32
	queue []int32     // vertexDrivable's walk
	sub   group       // one part of one vertex, solved as a group
	acc   []vertexAcc // per node of the group: what the vertices agree on
	tern  []vertexAcc // per node of the group: the ternary solve's result
	info0 []physRec   // per node of the group: its record before the solve
	mark0 []uint32    // and its charge-sharing stamp (shareMark)
	flag0 []uint8     // per node of the group: fight, contest, shared before
	fv0   []fightStart
	// the vertex solves' memo (physical_memo.go): node -> the slot of the
	// group seeded there in physMemo.slots, -1 none (made on first use); the
	// key of the group being solved, and the slot to record its solve into
	slot     []int32
	key      []uint64
	memoSlot int32
	// done is set when the group just solved was solved at its vertices:
	// physDelay reads each node's delay from its record.
	done bool
}

// vertexAcc is a node's result over the vertices solved so far.
type vertexAcc struct {
	val       Value
	str       Strength
	state     State
	volts     float64
	contest   bool
	flags     uint8  // fight, contest and shared (solveFlags)
	shareMark uint32 // the ternary solve's charge-sharing stamp
	floats    bool   // at some vertex the node floats (or has no voltage): its charge decides
	info      physRec
	fightV    fightStart
}

// stateRank orders states from the cleanest: a full level, a weak or
// degraded one, stored charge, unknown.
func stateRank(st State) int {
	switch st {
	case State0, State1:
		return 0
	case StateL, StateH:
		return 1
	case StateZ:
		return 2
	}
	return 3
}

// worse reports whether result b of value v is worse than a: a worse state,
// or the same state at a level nearer the band.
func worse(v Value, a, b *vertexAcc) bool {
	ra, rb := stateRank(a.state), stateRank(b.state)
	if ra != rb {
		return rb > ra
	}
	if math.IsNaN(b.volts) || math.IsNaN(a.volts) {
		return math.IsNaN(b.volts) && !math.IsNaN(a.volts)
	}
	if v == V1 {
		return b.volts < a.volts
	}
	return b.volts > a.volts
}

// vertexWanted reports whether g is to be solved at its vertices: the
// ternary pass left a node of it X and it has at most maxVertexDevices
// devices of unknown state. It then keeps what the solve may change of the
// state before it, where every vertex starts from.
func (s *Sim) vertexWanted(g *group) bool {
	if s.mode != Physical || !g.hasUnknown {
		return false
	}
	anyX := false
	for i := range g.nodes {
		anyX = anyX || g.nval[i] == VX
	}
	if !anyX {
		return false
	}
	v := &s.phys.vert
	v.unk = v.unk[:0]
	for _, d := range g.devs {
		if s.cond[d] == Unknown {
			if len(v.unk) == maxVertexDevices {
				return false
			}
			v.unk = append(v.unk, d)
		}
	}
	nl := s.nl
	if v.pos == nil {
		v.pos = make([]int32, nl.NumNodes())
		v.mark, v.dmark = make([]uint32, nl.NumNodes()), make([]uint32, nl.NumDevices())
	}
	p := &s.phys
	k := len(g.nodes)
	v.info0, v.flag0, v.fv0, v.mark0 = grow(v.info0, k), grow(v.flag0, k), grow(v.fv0, k), grow(v.mark0, k)
	for i, n := range g.nodes {
		v.pos[n] = int32(i)
		v.info0[i], v.fv0[i], v.mark0[i] = p.info[n], p.fightV[n], p.shareMark[n]
		v.flag0[i] = s.solveFlags(n)
	}
	return true
}

// solveFlags are the node flags a solve sets (Sim.nflag).
const solveFlags = nfFight | nfContest | nfShared

func (s *Sim) solveFlags(n int32) uint8 { return s.nflag[n] & solveFlags }

func (s *Sim) setSolveFlags(n int32, f uint8) { s.nflag[n] = s.nflag[n]&^solveFlags | f }

// physVertices refines g's ternary solve (just made, vertexWanted having
// said yes): it solves g at every vertex of its devices of unknown state,
// and a node the ternary solve left X that has one value at every vertex
// takes the vertices' result. Every other node keeps the ternary one.
func (s *Sim) physVertices(g *group) {
	v := &s.phys.vert
	p := &s.phys
	k := len(g.nodes)
	// The ternary result, with its delays while its parts are at hand.
	v.tern = grow(v.tern, k)
	for i, n := range g.nodes {
		s.physDelay(g, i)
		v.tern[i] = vertexAcc{val: g.nval[i], str: g.nstr[i], state: g.nstate[i], volts: g.nvolts[i],
			contest: g.contested[i], info: p.info[n], fightV: p.fightV[n], flags: s.solveFlags(n), shareMark: p.shareMark[n]}
	}
	v.acc = grow(v.acc, k)
	if !s.vertexDrivable(g) { // every vertex would keep the ternary result
		s.vertexMemoRecord(g)
		v.done = true
		return
	}
	// Every device on comes second, after every device off: the two
	// assignments most likely to disagree. The solve stops as soon as no
	// node the ternary pass left X can still be decided.
	all := 1<<len(v.unk) - 1
	// The parts are memoised as groups are (a clock edge's phase A brings
	// the same vertices back step after step), their entries apart from the
	// groups' by the quick solve in their keys (memoLook).
	p.net.quick = true
	gaveUp := false
	for step := 0; step <= all; step++ {
		mask := step
		switch step {
		case 1:
			mask = all
		case all:
			mask = 1
		}
		if step > 0 && !v.open(g) {
			break
		}
		for j, d := range v.unk {
			s.cond[d] = Off
			if mask>>j&1 == 1 {
				s.cond[d] = On
			}
		}
		for i, n := range g.nodes { // every vertex starts from the state before the solve
			p.info[n], p.fightV[n], p.shareMark[n] = v.info0[i], v.fv0[i], v.mark0[i]
			s.setSolveFlags(n, v.flag0[i])
		}
		p.memo.vertex = uint64(step) + 1
		if !s.vertexSolve(g, step == 0) {
			gaveUp = true
			break
		}
	}
	p.net.quick, p.net.gaveUp = false, false
	p.memo.vertex = 0
	p.memo.hit, p.memo.rec = nil, nil // the last part's: g's own delays are read from the vertices (groupDelay)
	for _, d := range v.unk {
		s.cond[d] = Unknown
	}
	for i, n := range g.nodes {
		a := &v.acc[i]
		if gaveUp || v.tern[i].val != VX || a.floats || a.val == VX {
			a = &v.tern[i] // decided by the ternary rule, or its charge decides somewhere, or the vertices disagree
		} else {
			a.info.Vertex = true
		}
		g.nval[i], g.nstr[i], g.nstate[i], g.nvolts[i], g.contested[i] = a.val, a.str, a.state, a.volts, a.contest
		s.setSolveFlags(n, a.flags)
		p.info[n], p.fightV[n], p.shareMark[n] = a.info, a.fightV, v.tern[i].shareMark
	}
	s.vertexMemoRecord(g)
	v.done = true
}

// open reports whether a node the ternary pass left X still has one
// driven value at every vertex solved so far.
func (v *vertexState) open(g *group) bool {
	for i := range g.nodes {
		if v.tern[i].val == VX && v.acc[i].val != VX && !v.acc[i].floats {
			return true
		}
	}
	return false
}

// vertexDrivable reports whether a node the ternary pass left X reaches a
// source through devices that are on. If none does, every such node floats
// at the vertex with every device of unknown state off (a part without
// sources keeps its charge, StateZ), so no vertex can decide it: the
// vertex solve would keep the ternary result, and is not run.
func (s *Sim) vertexDrivable(g *group) bool {
	nl := s.nl
	v := &s.phys.vert
	gen := v.next()
	q := v.queue[:0]
	for i, seed := range g.nodes {
		if v.tern[i].val != VX || v.mark[seed] == gen {
			continue
		}
		v.mark[seed] = gen
		q = append(q[:0], seed)
		for j := 0; j < len(q); j++ {
			n := q[j]
			for _, d := range nl.chanDev[nl.chanStart[n]:nl.chanStart[n+1]] {
				switch o := nl.other(d, n); {
				case s.cond[d] != On:
				case s.source[o]:
					v.queue = q
					return true
				case v.mark[o] != gen:
					v.mark[o] = gen
					q = append(q, o)
				}
			}
		}
	}
	v.queue = q
	return false
}

// next starts a new walk over the marks.
func (v *vertexState) next() uint32 {
	v.gen++
	if v.gen == 0 {
		clear(v.mark)
		clear(v.dmark)
		v.gen = 1
	}
	return v.gen
}

// vertexSolve solves the parts of g that the devices on in this vertex
// join, each as a group of its own, and merges each node's result into its
// accumulator (first: the first vertex, which sets them). It reports false
// when a part's network defeats Newton's method: the vertex solve then
// gives up, every node keeping the ternary result.
func (s *Sim) vertexSolve(g *group, first bool) bool {
	nl := s.nl
	p := &s.phys
	v := &p.vert
	gen := v.next()
	sub := &v.sub
	for _, seed := range g.nodes {
		if v.mark[seed] == gen {
			continue
		}
		// One part: the nodes of g that devices on reach from seed, with the
		// sources they touch (solveGroup's walk, over the devices on alone).
		sub.nodes, sub.srcs, sub.devs = sub.nodes[:0], sub.srcs[:0], sub.devs[:0]
		sub.hasUnknown, sub.srcHas = false, [3]bool{}
		sub.nodes = append(sub.nodes, seed)
		v.mark[seed] = gen
		for i := 0; i < len(sub.nodes); i++ {
			n := sub.nodes[i]
			for _, d := range nl.chanDev[nl.chanStart[n]:nl.chanStart[n+1]] {
				if s.cond[d] != On || v.dmark[d] == gen {
					continue
				}
				v.dmark[d] = gen
				sub.devs = append(sub.devs, d)
				o := nl.other(d, n)
				switch {
				case s.source[o]:
					if v.mark[o] != gen {
						v.mark[o] = gen
						sub.srcs = append(sub.srcs, o)
						sub.srcHas[s.val[o]] = true
					}
				case v.mark[o] != gen:
					v.mark[o] = gen
					sub.nodes = append(sub.nodes, o)
				}
			}
		}
		s.resolve(sub)
		s.physSolve(sub)
		if p.net.gaveUp {
			return false
		}
		for j, n := range sub.nodes {
			s.physDelay(sub, j) // into p.info[n].Delay, while the part's trees are at hand
			r := vertexAcc{val: sub.nval[j], str: sub.nstr[j], state: sub.nstate[j], volts: sub.nvolts[j],
				contest: sub.contested[j], flags: s.solveFlags(n), info: p.info[n], fightV: p.fightV[n]}
			a := &v.acc[v.pos[n]]
			r.floats = r.state == StateZ || (r.val != VX && math.IsNaN(r.volts))
			switch {
			case first:
				*a = r
			case r.floats || a.floats:
				a.floats = true
			case a.val != r.val || a.val == VX:
				a.val = VX // the vertices disagree: the ternary result stands
			default:
				str, flags, contest := min(a.str, r.str), a.flags|r.flags, a.contest || r.contest
				if worse(a.val, a, &r) {
					*a = r
				}
				a.str, a.flags, a.contest = str, flags, contest
			}
		}
	}
	return true
}
