package switchsim

import (
	"math"
	"slices"
)

// Case analysis (DEVELOPERS.md "Case analysis"): Bryant's ternary rule
// keeps a node X wherever a device of unknown state could change it, which
// is pessimistic when the X is sustained only by other X nodes around it
// (a transmission-gate adder from the unknown start: X gates the
// transmission gates that would resolve them). Splitting on such a node, as
// in Bryant and Seger's ternary symbolic simulation, is sound: settle once
// with it stored as 0 and once as 1; a node that ends at the same definite
// value both times has that value whatever the node's real one. What
// differs stays X (a latch never written).

// caseState is a node's state at the end of a branch.
type caseState struct {
	n        int32 // the node
	st       NodeState
	phys     physRec
	contest  bool
	shared   bool
	split    int32 // the node split on
	conflict bool  // two splits resolved the node to different values
}

// Taint states (ana.taint).
const (
	taintSearch uint8 = iota // on the present search's path: not known yet
	taintX                   // its X comes from an X input, a fight, an oscillation or a lost level
	taintClean               // its X comes from none of them: an unknown start
)

// caseVisits is the case-analysis bound on node solves in one settle.
func caseVisits(nodes int) int { return 64*nodes + 4096 }

// caseAnalysis splits on X nodes solved in this settle that are sustained
// only by an unknown start, and adopts what both branches agree on.
func (s *Sim) caseAnalysis() {
	a := &s.ana
	a.l0End = len(s.undo.nodes) // the entries after it are case analysis's (see decide)
	if s.splits < 0 || !a.sawX {
		return // no node solved in this settle is X
	}
	if !slices.ContainsFunc(s.touched, func(n int32) bool { return s.splittable(n) }) {
		// No candidate (the X was a transient, as in a transmission gate's
		// two halves switching a round apart): nothing to split, and no
		// segment or taint arrays to make.
		return
	}
	an := &s.res.Analysis
	a.visits = 0
	budget := caseVisits(len(s.val))
	rec := s.rec
	a.held = append(a.held[:0], s.gates...)                  // fan-out a stopped run left queued: kept for the next Settle
	s.undo.open()                                            // what adoption and its rounds change is logged after l0End
	s.undo.logDevices(s.mode == Physical || len(a.held) > 0) // as in segment 0: see undoLog
	a.recC.reset()
	defer func() { s.rec, s.gates = rec, append(s.gates[:0], a.held...) }()
	for !an.Bounded {
		a.newTaint()
		a.cands = a.cands[:0]
		for _, n := range s.touched {
			if s.splittable(n) && !s.tainted(n) {
				a.cands = append(a.cands, n)
			}
		}
		if len(a.cands) == 0 {
			return
		}
		slices.Sort(a.cands)
		a.res = a.res[:0]
		for _, c := range a.cands {
			if an.Splits >= s.splits || a.visits >= budget {
				an.Bounded = true
				break
			}
			an.Splits++
			s.split(c)
		}
		if !s.adopt() {
			return
		}
	}
}

// splittable reports whether node n could be split on: X, not a source,
// gating devices (taint aside).
func (s *Sim) splittable(n int32) bool {
	return s.val[n] == VX && !s.source[n] && s.nl.gateStart[n+1] > s.nl.gateStart[n]
}

// newTaint forgets what tainted found: the state changed.
func (a *analysis) newTaint() {
	a.taintMark, a.taint = perNode(a.taintMark, a.nn), perNode(a.taint, a.nn)
	a.taintID++
	if a.taintID == 0 {
		clear(a.taintMark)
		a.taintID = 1
	}
}

// tainted reports whether X node n's X can come from something real: an
// input driven x, a fight of definite values, a node found oscillating, or
// (physical mode) a level decided X by its voltage. It searches backwards
// from n over X nodes: through devices not off to their other terminal,
// and from devices of unknown state to their gates. Results are kept for
// the state (until newTaint): a node whose search found nothing is clean,
// and so is every node that search went through (their sources are a subset).
func (s *Sim) tainted(n int32) bool {
	a := &s.ana
	nl := s.nl
	if a.taintMark[n] == a.taintID {
		return a.taint[n] == taintX
	}
	a.stack, a.explored = a.stack[:0], a.explored[:0]
	found := false
	visit := func(m int32) {
		if a.taintMark[m] == a.taintID {
			found = found || a.taint[m] == taintX
			return // clean, or already on this search
		}
		a.taintMark[m], a.taint[m] = a.taintID, taintSearch
		a.stack = append(a.stack, m)
		a.explored = append(a.explored, m)
	}
	visit(n)
	for len(a.stack) > 0 && !found {
		m := a.stack[len(a.stack)-1]
		a.stack = a.stack[:len(a.stack)-1]
		if s.taintSource(m) {
			found = true
			break
		}
		for _, d := range nl.chanDev[nl.chanStart[m]:nl.chanStart[m+1]] {
			c := s.cond[d]
			if c == Off {
				continue
			}
			o := nl.other(d, m)
			switch {
			case s.source[o]:
				found = found || s.val[o] == VX
			case s.val[o] == VX:
				visit(o)
			}
			if g := nl.devGate[d]; c == Unknown && g >= 0 {
				if s.source[g] {
					found = true
				} else {
					visit(g)
				}
			}
		}
	}
	for _, m := range a.explored {
		switch {
		case !found:
			a.taint[m] = taintClean
		case m != n:
			a.taintMark[m] = 0 // not decided by this search
		}
	}
	if found {
		a.taint[n] = taintX
	}
	return found
}

// taintSource reports whether X node m is X for a real reason of its own.
func (s *Sim) taintSource(m int32) bool {
	switch {
	case s.flag(m, nfFight), s.noteOf(m).kind == noteOscillation:
		return true
	case s.mode == Physical && !math.IsNaN(s.volts[m]):
		return true // a level in the undefined band
	}
	return false
}

// split settles the two branches of candidate c and records what they
// agree on (ana.res); where neither branch settles, the nodes they changed
// keep changing (ana.failMark).
func (s *Sim) split(c int32) {
	a := &s.ana
	u := &s.undo
	a.b0At, a.resAt, a.failMark = perNode(a.b0At, a.nn), perNode(a.resAt, a.nn), perNode(a.failMark, a.nn)
	m := s.branchStart(c, V0)
	ok0 := s.rounds(true)
	bad0 := s.contradicts(c, V0)
	a.b0Nodes, a.b0All, a.b0 = a.b0Nodes[:0], a.b0All[:0], a.b0[:0]
	for i := m.nodes; i < len(u.nodes); i++ {
		e := &u.nodes[i]
		a.b0At[e.n] = int32(len(a.b0))
		a.b0 = append(a.b0, s.caseStateOf(e.n))
		if e.val == VX {
			a.b0All = append(a.b0All, e.n) // X before the split
		}
		if !sameNode(s.saved(i), s.Node(int(e.n))) {
			a.b0Nodes = append(a.b0Nodes, e.n) // changed in branch 0
		}
	}
	s.undoTo(m, true)
	m = s.branchStart(c, V1)
	ok1 := s.rounds(true)
	bad1 := s.contradicts(c, V1)
	switch {
	case ok0 && ok1 && !bad0 && !bad1:
		for i := m.nodes; i < len(u.nodes); i++ {
			e := &u.nodes[i]
			n := e.n
			if e.val != VX || s.val[n] == VX {
				continue
			}
			if b := a.branch0(n); b != nil && b.st.Value == s.val[n] {
				s.record(weaker(*b, s.caseStateOf(n)), c)
			}
		}
	case ok1 && !bad1 && bad0: // c is 1 in every real state: branch 1 alone decides
		for i := m.nodes; i < len(u.nodes); i++ {
			if e := &u.nodes[i]; e.val == VX && s.val[e.n] != VX {
				s.record(s.caseStateOf(e.n), c)
			}
		}
	case ok0 && !bad0 && bad1: // c is 0 in every real state: branch 0 alone decides
		for _, n := range a.b0All {
			if b := a.branch0(n); b.st.Value != VX {
				s.record(*b, c)
			}
		}
	case !ok0 && !ok1:
		for _, n := range a.b0Nodes {
			a.failMark[n] = s.settleID
		}
		for i := m.nodes; i < len(u.nodes); i++ {
			if e := &u.nodes[i]; !sameNode(s.saved(i), s.Node(int(e.n))) {
				a.failMark[e.n] = s.settleID
			}
		}
	}
	s.undoTo(m, true)
}

// contradicts reports whether the branch that stored v in c and just ran
// cannot be a real state: it ended with c at the other value, or it had a
// fight at the strongest strength a device passes, which no signal can
// override (DEVELOPERS.md "Case analysis").
func (s *Sim) contradicts(c int32, v Value) bool {
	bad := s.ana.contradicted || s.val[c] == 1-v
	s.ana.contradicted = false
	return bad
}

// branchStart opens a log segment and stores v in c, with c's fan-out
// queued: the devices it gates take their new state in round 1. c's own
// group is solved only when a device in it changes.
func (s *Sim) branchStart(c int32, v Value) undoMark {
	m := s.undo.open()
	s.rec = nil
	s.ana.contradicted = false
	s.logNode(c)
	s.val[c] = v
	switch st := s.str[c]; {
	case st.IsCharge() || st == HighZ:
		s.state[c] = StateZ
	case st < Strong:
		s.state[c] = StateL + State(v)
	default:
		s.state[c] = State0 + State(v)
	}
	s.setVolts(c, s.physSourceVolts(v))
	s.gates = append(append(s.gates[:0], s.ana.held...), c)
	return m
}

func (s *Sim) caseStateOf(n int32) caseState {
	cs := caseState{n: n, st: s.Node(int(n)), contest: s.flag(n, nfContest), shared: s.flag(n, nfShared)}
	if s.mode == Physical {
		cs.phys = s.phys.info[n]
	}
	return cs
}

// weaker picks, of two states of the same value, the less committed one:
// the lower strength, then the lower state letter, then the lower voltage.
func weaker(x, y caseState) caseState {
	switch {
	case x.st.Strength != y.st.Strength:
		if y.st.Strength < x.st.Strength {
			return y
		}
	case x.st.State != y.st.State:
		if y.st.State < x.st.State {
			return y
		}
	case y.st.Volts < x.st.Volts:
		return y
	}
	return x
}

// branch0 returns node n's state at the end of branch 0 of the split
// running, nil where branch 0 did not solve it.
func (a *analysis) branch0(n int32) *caseState {
	if i := int(a.b0At[n]); i < len(a.b0) && a.b0[i].n == n {
		return &a.b0[i]
	}
	return nil
}

// record notes that splitting on c resolves node cs.n to cs.
func (s *Sim) record(cs caseState, c int32) {
	a := &s.ana
	n := cs.n
	cs.split = c
	i := int(a.resAt[n])
	if i >= len(a.res) || a.res[i].n != n {
		a.resAt[n] = int32(len(a.res))
		a.res = append(a.res, cs)
		return
	}
	old := &a.res[i]
	if old.st.Value != cs.st.Value {
		old.conflict = true
		return
	}
	w := weaker(*old, cs)
	w.split, w.conflict = min(old.split, c), old.conflict
	*old = w
}

// adopt gives the nodes resolved in this iteration their state, and the
// devices they gate their new state (no group is solved again: both
// branches solved them with these device states). It reports whether any
// node was resolved.
func (s *Sim) adopt() bool {
	a := &s.ana
	any := false
	s.gates = append(s.gates[:0], a.held...)
	for i := range a.res {
		cs := &a.res[i]
		n := cs.n
		if cs.conflict {
			continue // the splits disagree: no stable state, leave it X
		}
		any = true
		s.logNode(n)
		if s.mark[n].touch != s.settleID {
			s.touch(n)
		}
		s.val[n], s.str[n], s.state[n] = cs.st.Value, cs.st.Strength, cs.st.State
		s.setVolts(n, cs.st.Volts)
		s.nflag[n] = nodeFlags(false, cs.contest, cs.shared)
		if s.mode == Physical {
			s.phys.info[n] = cs.phys
		}
		s.setNote(n, nodeNote{kind: noteCase, split: cs.split, settle: s.settleID})
		s.gates = append(s.gates, n)
	}
	if any {
		// The devices the resolved nodes gate take their new state, and
		// the groups they touch are solved again: rounds, as in a branch.
		s.rec = &a.recC
		s.rounds(true)
	}
	return any
}
