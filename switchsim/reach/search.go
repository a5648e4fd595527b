package reach

import (
	"context"
	"errors"
	"fmt"
	"math"
	"time"

	"railyard/switchsim"
)

// cond is one condition a state holds, as the engine's warning that showed it.
type cond struct {
	kind Kind
	w    switchsim.Warning
}

// pending is a state found and not yet expanded.
type pending struct {
	snap  *switchsim.Snapshot // nil beyond the snapshot budget: rebuilt by replay
	conds []cond              // the engine's conditions it holds (outputs are read afresh)
}

type fkey struct {
	kind         Kind
	node, device int32
}

// finding is a Finding being collected.
type finding struct {
	Finding
	from, to int32 // the first occurrence: the step from state from to state to (from -1: the start)
	lastFrom int32 // the state last counted, for what a step does
}

type search struct {
	nl   *switchsim.Netlist
	sim  *switchsim.Sim
	opt  Options
	ins  []int
	outs []int

	// key layout: one slot per input's drive, then one per node's value
	valNodes []int32
	slotOf   []int32 // node -> its value slot, -1 for the rails
	inSlot   []int32 // node -> its input index, -1 if not an input
	tab      *table
	parent   []int32
	depth    []int32
	queue    []pending // the states from qbase on, in state order; emptied as each is expanded
	qbase    int32     // state number of queue[0]
	held     int64     // bytes of snapshots in the queue
	snapCost int64
	start    *switchsim.Snapshot
	reset    [][]Set

	index    map[fkey]int32
	findings []*finding

	stamp    uint32
	changed  []uint32 // node -> stamp of the settle that changed it
	fresh    []uint32 // node -> stamp of the settle that reported it
	float    []bool   // node -> floating in the state being expanded
	cur      []byte   // the key of the state being expanded
	next     []byte   // the key being built
	conds    []cond   // scratch: a settle's conditions
	rep      *Report
	expanded int32 // the state being expanded
	margin   struct {
		v        float64
		node     int
		from, to int32
		got      switchsim.NodeState
		of       []bool // node -> its margin counts: an output, or an internal node that gates a device
	}
	t0    time.Time
	lastP time.Time
}

// Search explores the design's reachable states. It returns an error only
// when Check refuses the search; a search stopped by the cap or the context
// returns its report with Stopped set.
func Search(ctx context.Context, nl *switchsim.Netlist, opt Options) (*Report, error) {
	plan, err := Check(nl, opt)
	if err != nil {
		return nil, err
	}
	s := newSearch(nl, opt)
	s.rep.Plan = plan
	s.run(ctx)
	return s.rep, nil
}

func newSearch(nl *switchsim.Netlist, opt Options) *search {
	nn := nl.NumNodes()
	s := &search{nl: nl, opt: opt, ins: nl.Inputs(), outs: nl.Outputs(), reset: opt.Reset,
		slotOf: make([]int32, nn), inSlot: make([]int32, nn), index: map[fkey]int32{},
		changed: make([]uint32, nn), fresh: make([]uint32, nn), float: make([]bool, nn)}
	for n := range s.inSlot {
		s.inSlot[n] = -1
	}
	for i, n := range s.ins {
		s.inSlot[n] = int32(i)
	}
	for n := 0; n < nn; n++ {
		s.slotOf[n] = -1
		if k := nl.NodeKind(n); k != switchsim.Power && k != switchsim.Ground {
			s.slotOf[n] = int32(len(s.ins) + len(s.valNodes))
			s.valNodes = append(s.valNodes, int32(n))
		}
	}
	keyLen := (len(s.ins) + len(s.valNodes) + 3) / 4
	s.tab = newTable(keyLen)
	s.cur, s.next = make([]byte, keyLen), make([]byte, keyLen)
	s.snapCost = int64(nn)*48 + int64(nl.NumDevices())*16 + 256
	s.rep = &Report{Inputs: s.ins}
	s.margin.v, s.margin.node = math.NaN(), -1
	s.margin.of = make([]bool, nn)
	for _, o := range s.outs {
		s.margin.of[o] = true
	}
	for n := 0; n < nn; n++ {
		if nl.NodeKind(n) == switchsim.Internal && len(nl.GatedDevices(n)) > 0 {
			s.margin.of[n] = true
		}
	}
	return s
}

func getSlot(k []byte, i int32) uint8    { return (k[i>>2] >> ((i & 3) * 2)) & 3 }
func putSlot(k []byte, i int32, v uint8) { k[i>>2] = k[i>>2]&^(3<<((i&3)*2)) | v<<((i&3)*2) }

// drive returns input i's drive in key k.
func (s *search) drive(k []byte, i int) switchsim.Drive { return switchsim.Drive(getSlot(k, int32(i))) }

// value returns node n's value in key k (a rail's is its own).
func (s *search) value(k []byte, n int) switchsim.Value {
	if sl := s.slotOf[n]; sl >= 0 {
		return switchsim.Value(getSlot(k, sl))
	}
	if s.nl.NodeKind(n) == switchsim.Power {
		return switchsim.V1
	}
	return switchsim.V0
}

// fullKey packs the simulator's present state into k.
func (s *search) fullKey(k []byte) {
	for i, n := range s.ins {
		putSlot(k, int32(i), uint8(s.sim.InputDrive(n)))
	}
	for _, n := range s.valNodes {
		putSlot(k, s.slotOf[n], uint8(s.sim.Node(int(n)).Value))
	}
}

func (s *search) run(ctx context.Context) {
	s.t0 = time.Now()
	s.lastP = s.t0
	defer func() {
		s.rep.Elapsed = time.Since(s.t0)
		s.rep.States = s.tab.n
		s.rep.TableBytes = s.tab.bytes() + 4*int64(cap(s.parent)+cap(s.depth))
		s.rep.Findings = make([]Finding, len(s.findings))
		for i, f := range s.findings {
			f.Steps = s.sequence(f.from, f.to)
			f.Moves = len(f.Steps) - 1 - len(s.reset)
			s.rep.Findings[i] = f.Finding
		}
		s.rep.Margin, s.rep.MarginNode, s.rep.MarginGot = s.margin.v, s.margin.node, s.margin.got
		if s.margin.node >= 0 {
			s.rep.MarginSteps = s.sequence(s.margin.from, s.margin.to)
		}
		if s.opt.Progress != nil {
			s.opt.Progress(s.progress())
		}
	}()

	// The start, as `railyard run` reaches it from a fresh session: the
	// first settle with every input X, then every input 0, then the reset
	// rows. Conditions are carried through these settles, so that one the
	// first settle shows and no later one changes (a pull-up against a
	// pull-down, say) is a condition of the start.
	// Single-input steps run phase A alone for glitches (RacesGlitches):
	// a select that changes alone can pulse a dynamic node or an output.
	races := switchsim.RacesGlitches
	if s.opt.NoGlitches {
		races = switchsim.RacesWhenNeeded
	}
	s.sim = switchsim.NewSim(s.nl, switchsim.Options{Mode: s.opt.Mode, Races: races})
	var conds []cond
	r := s.sim.Settle()
	s.stamp++
	for _, w := range r.Warnings {
		if k, isState, ok := s.classify(w, nil); ok && isState {
			conds = append(conds, cond{k, w})
		}
	}
	steps := [][]Set{make([]Set, 0, len(s.ins))}
	for _, n := range s.ins {
		steps[0] = append(steps[0], Set{n, switchsim.Drive0})
	}
	steps = append(steps, s.reset...)
	for _, row := range steps {
		for _, st := range row {
			s.sim.SetInput(st.Input, st.Drive)
		}
		conds = s.carry(conds, s.sim.Settle(), nil, false)
	}
	s.fullKey(s.cur)
	s.tab.add(s.cur)
	s.parent, s.depth = append(s.parent, -1), append(s.depth, 0)
	s.start = s.sim.Snapshot()
	s.queue = append(s.queue, pending{snap: s.start, conds: keep(conds)})
	s.count(-1, 0, true, conds)
	for n := range s.margin.of {
		s.noteMargin(n, -1, 0)
	}

	max := s.opt.maxStates()
	moves := make([][]Set, 0, len(s.ins)*len(s.ins))
	for p := int32(0); int(p) < s.tab.n; p++ {
		s.expanded = p
		i := p - s.qbase
		pd := s.queue[i]
		s.queue[i] = pending{}
		if i > 1024 && int(i) > len(s.queue)/2 { // drop the expanded front: amortised constant a state
			s.queue = append(s.queue[:0], s.queue[i+1:]...)
			s.qbase = p + 1
		}
		snap := pd.snap
		if snap == nil {
			snap = s.rebuild(p)
			s.rep.Replays++
		} else if snap != s.start {
			s.held -= s.snapCost
		}
		copy(s.cur, s.tab.key(p))
		s.sim.Restore(snap)
		for n := range s.float {
			s.float[n] = s.sim.Node(n).Floating
		}
		moves = s.moves(moves[:0])
		for _, mv := range moves {
			if err := ctx.Err(); err != nil { // every step: a settle of a large design is slow
				s.rep.Stopped = Canceled
				if errors.Is(err, context.DeadlineExceeded) {
					s.rep.Stopped = AtTimeLimit
				}
				return
			}
			if s.rep.Transitions&63 == 0 {
				s.tick()
			}
			s.sim.Restore(snap)
			for _, st := range mv {
				s.sim.SetInput(st.Input, st.Drive)
			}
			r := s.sim.Settle()
			s.rep.Transitions++
			cc := s.carry(pd.conds, r, mv, true)
			copy(s.next, s.cur)
			for _, st := range mv {
				putSlot(s.next, s.inSlot[st.Input], uint8(st.Drive))
				putSlot(s.next, s.slotOf[st.Input], uint8(s.sim.Node(st.Input).Value))
			}
			for _, n := range r.Changed {
				if sl := s.slotOf[n]; sl >= 0 {
					putSlot(s.next, sl, uint8(s.sim.Node(int(n)).Value))
				}
			}
			if s.opt.verifyKeys {
				s.verify()
			}
			to, seen := s.tab.find(s.next)
			if !seen {
				if s.tab.n >= max {
					s.rep.Stopped = AtCap
					return
				}
				to = s.tab.add(s.next)
				s.parent = append(s.parent, p)
				s.depth = append(s.depth, s.depth[p]+1)
				s.rep.Depth = int(s.depth[to])
				var sn *switchsim.Snapshot
				if s.held+s.snapCost <= s.snapBudget() {
					sn = s.sim.Snapshot()
					s.held += s.snapCost
				}
				s.queue = append(s.queue, pending{snap: sn, conds: keep(cc)})
			}
			s.count(p, to, !seen, cc)
			for _, n := range r.Changed { // a node the settle left alone keeps the margin already noted
				s.noteMargin(int(n), p, to)
			}
		}
	}
}

// verify panics when the key built from the settle's changes differs from
// the simulator's whole state packed afresh (tests only).
func (s *search) verify() {
	k := make([]byte, len(s.next))
	s.fullKey(k)
	if string(k) != string(s.next) {
		panic(fmt.Sprintf("reach: incremental key %x, packed afresh %x", s.next, k))
	}
}

// keep copies the conditions a state hands on.
func keep(cc []cond) []cond {
	var out []cond
	for _, c := range cc {
		if carried(c.kind) || c.kind == Short { // a short is checked again by shortHolds
			out = append(out, c)
		}
	}
	return out
}

func (s *search) snapBudget() int64 {
	if s.opt.SnapshotBudget > 0 {
		return s.opt.SnapshotBudget
	}
	return DefaultSnapshotBudget
}

func (s *search) progress() Progress {
	return Progress{States: s.tab.n, Transitions: s.rep.Transitions, Frontier: s.tab.n - int(s.expanded) - 1, Elapsed: time.Since(s.t0)}
}

func (s *search) tick() {
	if s.opt.Progress == nil || s.opt.ProgressEvery <= 0 {
		return
	}
	if now := time.Now(); now.Sub(s.lastP) >= s.opt.ProgressEvery {
		s.lastP = now
		s.opt.Progress(s.progress())
	}
}

// moves lists the input changes tried from the state in s.cur: each input
// to the other of 0 and 1 (an input at x or z to both), and with Pairs
// every two inputs together.
func (s *search) moves(out [][]Set) [][]Set {
	targets := func(i int) []switchsim.Drive {
		switch s.drive(s.cur, i) {
		case switchsim.Drive0:
			return []switchsim.Drive{switchsim.Drive1}
		case switchsim.Drive1:
			return []switchsim.Drive{switchsim.Drive0}
		}
		return []switchsim.Drive{switchsim.Drive0, switchsim.Drive1}
	}
	for i, n := range s.ins {
		for _, d := range targets(i) {
			out = append(out, []Set{{n, d}})
		}
	}
	if s.opt.Pairs {
		for i, a := range s.ins {
			for j := i + 1; j < len(s.ins); j++ {
				for _, da := range targets(i) {
					for _, db := range targets(j) {
						out = append(out, []Set{{a, da}, {s.ins[j], db}})
					}
				}
			}
		}
	}
	return out
}

// rebuild returns a snapshot of state p, replaying its sequence from the start.
func (s *search) rebuild(p int32) *switchsim.Snapshot {
	var path []int32
	for at := p; at > 0; at = s.parent[at] {
		path = append(path, at)
	}
	s.sim.Restore(s.start)
	prev := s.tab.key(0)
	for i := len(path) - 1; i >= 0; i-- {
		k := s.tab.key(path[i])
		for j, n := range s.ins {
			if d := s.drive(k, j); d != s.drive(prev, j) {
				s.sim.SetInput(n, d)
			}
		}
		s.sim.Settle()
		prev = k
	}
	return s.sim.Snapshot()
}

// classify turns an engine warning into a finding kind; isState is set for
// a condition of the settled state (kept by later settles that leave its
// node alone), clear for what the step itself did. mv is nil for the
// settles that lead to the start, whose steps are not judged.
func (s *search) classify(w switchsim.Warning, mv []Set) (k Kind, isState, ok bool) {
	node := w.Node
	// X that a node held before the step is not the step's doing: a latch
	// never written stays X, and that is no race.
	before := func() switchsim.Value {
		if node < 0 || node >= s.nl.NumNodes() {
			return switchsim.VX
		}
		return s.value(s.cur, node)
	}
	switch w.Kind {
	case switchsim.WarnConflict:
		return Conflict, true, true
	case switchsim.WarnLevelLost:
		return LevelLost, true, true
	case switchsim.WarnContention:
		if node >= 0 && s.sim.Node(node).Value == switchsim.VX {
			return Conflict, true, true // a divider in the undefined band: the fight has no winner
		}
		return Contention, true, true
	case warnWriteFail:
		return WriteFail, true, true
	case warnShort:
		return Short, true, true
	case warnRace:
		return Race, false, mv != nil && before() != switchsim.VX
	case switchsim.WarnOscillation:
		return Oscillation, false, mv != nil && before() != switchsim.VX
	case warnGlitch:
		if mv == nil {
			return "", false, false
		}
		if node >= 0 && (s.float[node] || s.sim.Node(node).Floating) {
			return Glitch, false, true
		}
		return Hazard, false, true
	}
	return "", false, false
}

// carry returns the conditions of the state a settle left: the ones its
// warnings show, and those of the state before on nodes it neither changed
// nor reported (a settle reports only the nodes it solved). With judge, the
// step's own findings (race, glitch, oscillation, short) come too.
func (s *search) carry(before []cond, r *switchsim.Result, mv []Set, judge bool) []cond {
	s.stamp++
	for _, n := range r.Changed {
		s.changed[n] = s.stamp
	}
	out := s.conds[:0]
	for _, w := range r.Warnings {
		if w.Node >= 0 && w.Node < len(s.fresh) {
			s.fresh[w.Node] = s.stamp
		}
		k, isState, ok := s.classify(w, mv)
		if ok && (isState || judge) {
			out = append(out, cond{k, w})
		}
	}
	for _, c := range before {
		if n := c.w.Node; carried(c.kind) && n >= 0 && n < len(s.fresh) && s.changed[n] != s.stamp && s.fresh[n] != s.stamp {
			out = append(out, c)
		} else if c.kind == Short && s.shortHolds(c.w) {
			out = append(out, c)
		}
	}
	s.conds = out
	if !judge {
		return append([]cond(nil), out...)
	}
	return out
}

// shortHolds reports whether a short of the state before still holds in
// the simulator's present state (its device not off, its terminals at two
// different values). The engine reports a short only on a settle that
// changed the device's gate or terminals, so one that a settle left alone
// (a device whose gate nothing drives, across the rails from the first
// settle on) is handed on.
func (s *search) shortHolds(w switchsim.Warning) bool {
	if w.Device < 0 || w.Device >= s.nl.NumDevices() || (w.Node >= 0 && w.Node < len(s.fresh) && s.fresh[w.Node] == s.stamp) {
		return false // not a device's, or reported again by this settle
	}
	d := s.nl.Device(w.Device)
	if s.sim.Conduction(w.Device) == switchsim.Off || d.A < 0 || d.B < 0 {
		return false
	}
	a, b := s.sim.Node(d.A).Value, s.sim.Node(d.B).Value
	return a != switchsim.VX && b != switchsim.VX && a != b
}

// carried reports the conditions a state hands on to the next on the nodes
// a settle leaves alone. What a step did (a race, a glitch, an oscillation)
// is not handed on; a short is handed on by shortHolds, by its device.
func carried(k Kind) bool {
	switch k {
	case Conflict, LevelLost, Contention, WriteFail:
		return true
	}
	return false
}

// isStateKind reports the kinds that are conditions of a state.
func isStateKind(k Kind) bool {
	switch k {
	case Conflict, LevelLost, Contention, WriteFail, Short:
		return true
	}
	return false
}

// noteMargin keeps node n's noise margin when it counts (an output or a
// node that gates a device) and is the worst so far, with the step from ->
// to that showed it.
func (s *search) noteMargin(n int, from, to int32) {
	if !s.margin.of[n] {
		return
	}
	if m := s.sim.Margin(n).Noise; !math.IsNaN(m) && (math.IsNaN(s.margin.v) || m < s.margin.v) {
		s.margin.v, s.margin.node, s.margin.from, s.margin.to, s.margin.got = m, n, from, to, s.sim.Node(n)
	}
}

// count records the conditions of the step from state from (-1: the start)
// to state to, and the outputs' states there; fresh is set when to was
// found by this step.
func (s *search) count(from, to int32, fresh bool, cc []cond) {
	for _, c := range cc {
		f := s.finding(c.kind, c.w.Node, c.w.Device, from, to, func() string { return s.sim.Message(c.w) })
		s.tally(f, from, fresh, isStateKind(c.kind))
	}
	for _, o := range s.outs {
		st := s.sim.Node(o)
		var f *finding
		switch st.State {
		case switchsim.StateZ:
			f = s.finding(FloatingOutput, o, -1, from, to, func() string {
				return fmt.Sprintf("output %s floats, holding %s by charge", s.nl.DisplayName(o), st.Value)
			})
		case switchsim.StateL, switchsim.StateH:
			f = s.finding(DegradedOutput, o, -1, from, to, func() string {
				return fmt.Sprintf("output %s is %s%s, not a strong full level", s.nl.DisplayName(o), st.State, volts(st.Volts))
			})
		default:
			continue
		}
		s.tally(f, from, fresh, true)
	}
}

func (s *search) tally(f *finding, from int32, fresh, state bool) {
	if from >= 0 {
		f.Transitions++
	}
	switch {
	case state && (fresh || f.States == 0):
		f.States++
	case !state && f.lastFrom != from:
		f.lastFrom = from
		f.States++
	}
}

// finding returns the finding of a kind on a node (or device), made at its
// first occurrence, the step from -> to, with the words msg gives while the
// simulator is in the state that shows it.
func (s *search) finding(k Kind, node, dev int, from, to int32, msg func() string) *finding {
	key := fkey{k, int32(node), -1}
	if node < 0 || k == Short {
		key.device = int32(dev)
	}
	if i, ok := s.index[key]; ok {
		return s.findings[i]
	}
	f := &finding{Finding: Finding{Kind: k, Node: node, Device: dev, Message: msg()}, from: from, to: to, lastFrom: -2}
	if node >= 0 {
		f.Got = s.sim.Node(node)
	}
	s.index[key] = int32(len(s.findings))
	s.findings = append(s.findings, f)
	return f
}

// sequence returns the inputs that reach the step from -> to from a fresh
// simulator: every input 0, the reset rows, then one row a move.
func (s *search) sequence(from, to int32) [][]Set {
	first := make([]Set, 0, len(s.ins))
	for _, n := range s.ins {
		first = append(first, Set{n, switchsim.Drive0})
	}
	out := append([][]Set{first}, s.reset...)
	if from < 0 {
		return out
	}
	var path []int32
	for at := from; at >= 0; at = s.parent[at] {
		path = append(path, at)
	}
	prev := path[len(path)-1]
	for i := len(path) - 2; i >= 0; i-- {
		out = append(out, s.diff(prev, path[i]))
		prev = path[i]
	}
	return append(out, s.diff(from, to))
}

// diff lists the inputs whose drives differ from state a to state b.
func (s *search) diff(a, b int32) []Set {
	ka, kb := s.tab.key(a), s.tab.key(b)
	var row []Set
	for i, n := range s.ins {
		if d := s.drive(kb, i); d != s.drive(ka, i) {
			row = append(row, Set{n, d})
		}
	}
	return row
}

func volts(v float64) string {
	if math.IsNaN(v) {
		return ""
	}
	return fmt.Sprintf(" at %.3f V", v)
}
