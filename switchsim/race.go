package switchsim

import (
	"math"
	"slices"
)

// Race analysis (DEVELOPERS.md "Race analysis"): ternary simulation in two
// phases (Eichelberger 1965; Brzozowski and Seger 1995). From the state
// before the step, phase A drives every input the step changes to X and
// settles; phase B gives them their new values and settles again. A node
// with a definite value after phase B has it under every assignment of
// delays; one that is still X depends on them (a race, or an oscillation
// when no stable state can be reached); one that went X in phase A and
// came back may pulse (a glitch).

// Why says why race analysis ran; several reasons may hold together.
type Why uint8

const (
	WhyInputs    Why = 1 << iota // the step changed more than one input
	WhyUnsettled                 // the unit-delay rounds did not settle
	WhyAsked                     // RacesEveryStep asked for it on every step
)

// Analysis says what race and case analysis did in one settle.
type Analysis struct {
	// Inputs are the inputs the settle changed, in the order they were set.
	Inputs []int32
	// Ran is set when race analysis ran; Why says why.
	Ran bool
	Why Why
	// A and B are the rounds of the two phases.
	A, B Phase
	// Splits is the number of X nodes case analysis split on; Bounded is set
	// when it stopped at its bound with X nodes left that it might have
	// resolved.
	Splits  int
	Bounded bool
	// Decided is set when the last of the Result's rounds is the decision
	// round: the nodes whose state the analyses set otherwise than the
	// unit-delay rounds left it.
	Decided bool
	// Alone is set when phase A ran alone before the rounds (RacesGlitches
	// on a single-input step); WentX counts the nodes it made X. Its rounds
	// are not recorded; the rounds decide the step, and a node it made X
	// that they bring back to its value is a glitch.
	Alone bool
	WentX int
}

// Phase is the rounds of one phase of race analysis, as Result has them.
type Phase struct {
	Rounds   int
	Changed  []int32
	RoundEnd []int32
	After    []NodeState
}

// Round returns the nodes the phase changed in round i (0-based).
func (p *Phase) Round(i int) []int32 {
	lo := int32(0)
	if i > 0 {
		lo = p.RoundEnd[i-1]
	}
	return p.Changed[lo:p.RoundEnd[i]]
}

func (an *Analysis) reset() { *an = Analysis{Inputs: an.Inputs[:0]} }

func phaseOf(l *roundLog) Phase {
	return Phase{Rounds: l.rounds, Changed: l.changed, RoundEnd: l.roundEnd, After: l.after}
}

// noteKind says how the analyses decided a node's present state.
type noteKind uint8

const (
	noteNone        noteKind = iota
	noteRace                 // X after phase B: the result depends on the order of the inputs
	noteOscillation          // X after phase B, and no stable state is reached from it
	noteGlitch               // went X in phase A and came back in phase B
	noteDecided              // the analysis's value, where the unit-delay rounds left another
	noteCase                 // resolved by case analysis
	noteGlitchAlone          // went X in phase A alone and the rounds brought it back
)

// nodeNote is kept per node until the node is next solved (explain.go).
type nodeNote struct {
	kind   noteKind
	split  int32  // noteCase: the node split on
	settle uint32 // the settle that wrote it
}

// analysis is the scratch of race and case analysis, reused by every settle.
type analysis struct {
	inputs, moved []int32
	to, toA       []Drive
	was           []bool
	pending       []int32 // fan-out left queued by an earlier stopped settle
	ran           bool
	unitN         int         // log entries when the unit-delay rounds ended
	unitEnd       []NodeState // the state they left, parallel to those entries
	aN            int
	aVal          []Value // phase A's values, parallel to the first aN entries
	recA, recB    roundLog
	glitch        []int32 // candidates after phase B: log entries
	race          []int32 // candidates after phase B: nodes
	visits        int     // node solves, for the case-analysis bound
	stage         Stage   // where the rounds running now belong
	forcedList    []int32 // nodes set to X by forcing rounds in this settle
	forcedStage   []Stage
	lastInputs    []int32 // the inputs of the last race analysis, for explain
	lastSettle    uint32
	wentX         []wentX // phaseAlone: the nodes phase A made X, with their state before the step

	// case analysis (cases.go)
	taint        []uint8  // per node: taintUnknown, taintX, taintClean
	taintMark    []uint32 // node -> taintID when taint was found
	taintID      uint32
	stack        []int32
	explored     []int32
	cands        []int32
	b0           []caseState // branch 0's end states, in log order
	b0At         []int32     // node -> its entry in b0 (valid where that entry names it)
	b0Nodes      []int32     // changed in branch 0
	b0All        []int32     // X before the split and solved in branch 0
	res          []caseState // the nodes resolved in this iteration, with their states
	resAt        []int32     // node -> its entry in res (valid where that entry names it)
	held         []int32     // fan-out left queued when case analysis began
	l0End        int         // log entries when case analysis began
	recC         roundLog    // the rounds after an adoption
	firstMark    []uint32    // node -> settle stamp: decide met its entry
	contradicted bool        // the branch running has a fight at the strongest strength
	sawX         bool        // a group solve in this settle left a node X

	// conserveCharge, made on first use (physical mode)
	devAt    []int32 // device -> its entry in the log
	partMark []uint32
	partID   uint32
	part     []int32
	partDevs []int32
	failMark []uint32 // node -> settle stamp: changed in a split whose branches both did not settle (nil: none yet)
	nn       int      // nodes, for the arrays made on first use
}

// init sizes the analyses for nn nodes. Their per-node arrays are made on
// first use (grown): most settles never split, and many never run race
// analysis, so a compiled design does not carry them.
func (a *analysis) init(nn int) { a.nn = nn }

// perNode returns x, made with nn entries on first use.
func perNode[T any](x []T, nn int) []T {
	if x == nil {
		x = make([]T, nn)
	}
	return x
}

// forced records a node set to X by a forcing round.
func (a *analysis) forced(n int32) {
	a.forcedList, a.forcedStage = append(a.forcedList, n), append(a.forcedStage, a.stage)
}

// raceAnalysis runs the two phases after the unit-delay rounds of a step,
// then case analysis, and classifies what stays X.
func (s *Sim) raceAnalysis(settled bool) {
	a := &s.ana
	an := &s.res.Analysis
	an.Ran, a.ran = true, true
	if len(a.inputs) > 1 {
		an.Why |= WhyInputs
	}
	if !settled {
		an.Why |= WhyUnsettled
	}
	if s.races == RacesEveryStep {
		an.Why |= WhyAsked
	}
	u := &s.undo
	a.unitN = len(u.nodes)
	a.unitEnd = grow(a.unitEnd, a.unitN)
	for i := range a.unitN {
		a.unitEnd[i] = s.Node(int(u.nodes[i].n))
	}
	s.undoTo(undoMark{}, false) // back to the state before the step
	a.sawX = true               // (nodes the rounds solved may be X again: case analysis looks)
	s.gates = append(s.gates, a.pending...)

	a.phaseADrives()
	s.rec, a.stage = &a.recA, InPhaseA
	a.recA.reset()
	s.applyInputs(a.inputs, a.toA)
	s.rounds(false)
	a.aN = len(u.nodes)
	a.aVal = grow(a.aVal, a.aN)
	for i := range a.aN {
		a.aVal[i] = s.val[u.nodes[i].n]
	}

	s.rec, a.stage = &a.recB, InPhaseB
	a.recB.reset()
	s.applyInputs(a.inputs, a.to)
	s.rounds(false)
	u.index() // segment 0 is complete: the analyses look nodes up in it
	if s.conserveCharge() {
		s.rounds(false) // phase B goes on with the charges given back
	}
	s.rec, a.stage = &s.unit, InRounds
	an.A, an.B = phaseOf(&a.recA), phaseOf(&a.recB)
	u.index() // again: charges given back added entries

	// Candidates, from the state before the step (the log's entries), phase
	// A's end, phase B's end (now) and the unit-delay rounds' end.
	a.glitch, a.race = a.glitch[:0], a.race[:0]
	for i := range u.nodes {
		e := &u.nodes[i]
		n := e.n
		if s.nl.nodeKind[n] != Internal || e.val == VX {
			continue
		}
		av := e.val
		if i < a.aN {
			av = a.aVal[i]
		}
		uv := e.val
		if i < a.unitN {
			uv = a.unitEnd[i].Value
		}
		if av == VX {
			a.glitch = append(a.glitch, int32(i))
		}
		if s.val[n] == VX && (!settled || uv != VX) {
			a.race = append(a.race, n)
		}
	}
	s.caseAnalysis()
	s.classify()
}

// classify turns the candidates into warnings from the final state: a
// glitch where a node of a kind that matters came back to its value before
// the step, a race or an oscillation where an untainted node is still X.
func (s *Sim) classify() {
	a := &s.ana
	u := &s.undo
	r := &s.res
	a.lastInputs = append(a.lastInputs[:0], a.inputs...)
	a.lastSettle = s.settleID
	// Taint is judged on the state case analysis left, before any of these
	// nodes is noted as oscillating.
	a.newTaint()
	keep := a.race[:0]
	for _, n := range a.race {
		if s.val[n] == VX && !s.warned(n) && s.seen(n) && !s.tainted(n) {
			keep = append(keep, n)
		}
	}
	for _, n := range keep {
		kind, note, stage := WarnRace, noteRace, InPhaseB
		if a.failMark != nil && a.failMark[n] == s.settleID {
			kind, note, stage = WarnOscillation, noteOscillation, InCases
			r.Oscillated = true
		}
		s.markWarned(n)
		s.setNote(n, nodeNote{kind: note, settle: s.settleID})
		r.Warnings = append(r.Warnings, Warning{Kind: kind, Node: int(n), Device: -1, Other: -1,
			Volts: math.NaN(), Margin: math.NaN(), Stage: stage})
	}
	for _, i := range a.glitch {
		e := &u.nodes[i] // segment 0: the case analysis's branches only add entries they remove
		s.glitchAt(e.n, e.val, e.str, noteGlitch)
	}
}

// glitchAt reports a glitch on node n, which went X in phase A from value
// was at strength str, where it came back to was and a pulse on it matters.
func (s *Sim) glitchAt(n int32, was Value, str Strength, note noteKind) {
	nl := s.nl
	if s.val[n] != was {
		return
	}
	dynamic := str.IsCharge() || s.str[n].IsCharge()
	if !s.seen(n) || !dynamic && nl.nodeFlag[n]&(nodeOutput|nodeGatePass) == 0 && !s.gatesDynamic(n) {
		return // a pulse on a static internal node matters only where it arrives
	}
	if nt := s.noteOf(n); nt.kind == noteNone || nt.settle != s.settleID {
		s.setNote(n, nodeNote{kind: note, settle: s.settleID})
	}
	s.res.Warnings = append(s.res.Warnings, Warning{Kind: WarnGlitch, Node: int(n), Device: -1, Other: -1,
		Volts: math.NaN(), Margin: math.NaN(), Stage: InPhaseA})
}

// phaseADrives sets toA: the drives of phase A, every changing input X.
func (a *analysis) phaseADrives() {
	a.toA = a.toA[:0]
	for _, d := range a.to {
		if d != DriveZ {
			d = DriveX // a released input keeps its value as charge: no value changes
		}
		a.toA = append(a.toA, d)
	}
}

// wentX is a node phase A alone made X, with its state before the step.
type wentX struct {
	n   int32
	val Value
	str Strength
}

// phaseAlone runs phase A on its own before the rounds of a single-input
// step (RacesGlitches): from the state before the step, the input at X,
// settled without recording rounds or touching nodes (as a case-analysis
// branch runs); it lists the internal nodes that went X, then goes back to
// the state before the step with a fresh log, the queued fan-out as it was.
// It costs one settle of what the input reaches and the undo of it; phase
// B, case analysis of the phases and the comparison with the rounds are
// not paid for. Unlike the full analysis, a node phase B would have left
// X (a race) is called a glitch if the rounds bring it back.
func (s *Sim) phaseAlone() {
	a := &s.ana
	u := &s.undo
	an := &s.res.Analysis
	nshorts := len(s.shorts)
	a.phaseADrives()
	s.rec, a.stage = nil, InPhaseA
	s.applyInputs(a.inputs, a.toA)
	s.rounds(false)
	a.wentX = a.wentX[:0]
	for i := range u.nodes {
		e := &u.nodes[i]
		if s.nl.nodeKind[e.n] == Internal && e.val != VX && s.val[e.n] == VX {
			a.wentX = append(a.wentX, wentX{e.n, e.val, e.str})
		}
	}
	an.Alone, an.WentX = true, len(a.wentX)
	for _, n := range a.forcedList { // forcing rounds of phase A: nothing of them stays
		s.setNote(n, nodeNote{})
	}
	a.forcedList, a.forcedStage = a.forcedList[:0], a.forcedStage[:0]
	for _, d := range s.shorts[nshorts:] {
		i, _ := slices.BinarySearch(s.nl.shortDevs, d)
		s.shortMark[i] = s.settleID - 1
	}
	s.shorts = s.shorts[:nshorts]
	s.undoTo(undoMark{}, true)
	s.gates = append(s.gates, a.pending...)
	s.rec, a.stage = &s.unit, InRounds
	a.sawX = false
}

// glitchesAlone reports, after the rounds and case analysis of a step that
// ran phaseAlone, the nodes phase A made X that came back to their value.
func (s *Sim) glitchesAlone() {
	a := &s.ana
	if len(a.wentX) == 0 {
		return
	}
	a.lastInputs = append(a.lastInputs[:0], a.inputs...)
	a.lastSettle = s.settleID
	for _, w := range a.wentX {
		s.glitchAt(w.n, w.val, w.str, noteGlitchAlone)
	}
}

// seen reports whether anything sees node n: it gates a device or is an
// output. A race or a pulse on a node nothing sees is reported where it
// arrives, if anywhere.
func (s *Sim) seen(n int32) bool {
	nl := s.nl
	return nl.gateStart[n+1] > nl.gateStart[n] || nl.nodeFlag[n]&nodeOutput != 0
}

// gatesDynamic reports whether node n gates a device whose channel touches
// a node held by charge before the step or after it (one that something
// sees): a pulse there can take the charge away.
func (s *Sim) gatesDynamic(n int32) bool {
	nl := s.nl
	for _, d := range nl.gateDev[nl.gateStart[n]:nl.gateStart[n+1]] {
		for _, m := range [2]int32{nl.devA[d], nl.devB[d]} {
			if s.source[m] || !s.seen(m) {
				continue
			}
			was := s.str[m]
			if i := s.undo.before(m); i >= 0 {
				was = s.undo.nodes[i].str
			}
			if was.IsCharge() || s.str[m].IsCharge() {
				return true
			}
		}
	}
	return false
}

// decide records the decision round: the nodes whose final state differs
// from the one the unit-delay rounds left them in. It also reports the
// oscillating nodes of forcing rounds.
func (s *Sim) decide() {
	a := &s.ana
	u := &s.undo
	r := &s.res
	for i, n := range a.forcedList {
		if !s.warned(n) && s.val[n] == VX {
			s.markWarned(n)
			r.Oscillated = true
			r.Warnings = append(r.Warnings, Warning{Kind: WarnOscillation, Node: int(n), Device: -1, Other: -1,
				Volts: math.NaN(), Margin: math.NaN(), Stage: a.forcedStage[i]})
		}
	}
	a.forcedList, a.forcedStage = a.forcedList[:0], a.forcedStage[:0]
	rec := &s.unit
	start := len(rec.changed)
	add := func(n int32) {
		rec.changed = append(rec.changed, n)
		if rec.delays {
			rec.delay = append(rec.delay, math.NaN())
		}
		rec.after = append(rec.after, s.Node(int(n)))
		if s.noteOf(n).settle != s.settleID {
			s.setNote(n, nodeNote{kind: noteDecided, settle: s.settleID})
		}
	}
	// What the unit-delay rounds left: with race analysis, a node's entry
	// of segment 0 (the rounds' end if they changed it, else its state
	// before the step); every node case analysis changed has an entry after
	// l0End with its state before that (the first one counts), which is the
	// rounds' end where segment 0 has none.
	for i := range u.nodes {
		e := &u.nodes[i]
		n := e.n
		if s.source[n] || (i < a.l0End && !a.ran) {
			continue
		}
		was := s.saved(i)
		switch {
		case i < a.l0End && i < a.unitN:
			was = a.unitEnd[i]
		case i >= a.l0End:
			a.firstMark = perNode(a.firstMark, a.nn)
			if a.firstMark[n] == s.settleID || (a.ran && u.before(n) >= 0 && u.before(n) < a.l0End) {
				continue
			}
			a.firstMark[n] = s.settleID
		}
		if !sameNode(was, s.Node(int(n))) {
			add(n)
		}
	}
	if len(rec.changed) > start {
		slices.Sort(rec.changed[start:]) // one order whatever the analyses' order
		for k := start; k < len(rec.changed); k++ {
			rec.after[k] = s.Node(int(rec.changed[k]))
		}
		rec.rounds++
		rec.roundEnd = append(rec.roundEnd, int32(len(rec.changed)))
		r.Analysis.Decided = true
	}
	r.Analysis.Inputs = append(r.Analysis.Inputs, a.inputs...)
}

// sameNode compares two node states, volts to a microvolt.
func sameNode(a, b NodeState) bool {
	return a.Value == b.Value && a.Strength == b.Strength && a.State == b.State && !voltsMoved(a.Volts, b.Volts)
}

// conserveCharge is physical mode's answer to a pessimism of the phases:
// phase A makes floating nodes X wherever a device of unknown state joins
// charges at different levels, and phase B cannot get their voltages back,
// although charge that only moved between floating nodes ends where the
// final connections put it, whatever the order of the changes. A floating
// part phase B leaves X with no voltage (nodes joined by devices that are
// on, no source) gets its nodes' charges from before the step back, and
// phase B goes on from there (physical mode shares them as always), when
// the charge could not go anywhere else: every device that was on or
// unknown before the step, after phase A or after phase B joins it only to
// its own nodes, is on at the end and conducts across the voltages there
// (one reservoir: no order of connection can leave a different split).
// Where a device between its nodes turned on and off again (a pulse) or a
// source could reach it, it stays X. It reports whether it gave any part
// its charge back.
func (s *Sim) conserveCharge() bool {
	if s.mode != Physical {
		return false
	}
	nl := s.nl
	a := &s.ana
	u := &s.undo
	if a.devAt == nil {
		a.devAt, a.partMark = make([]int32, len(nl.devName)), make([]uint32, len(s.val))
	}
	for i := range u.devs {
		a.devAt[u.devs[i].d] = int32(i)
	}
	condBefore := func(d int32) Conduction {
		if i := a.devAt[d]; int(i) < len(u.devs) && u.devs[i].d == d {
			return u.devs[i].cond
		}
		return s.cond[d]
	}
	aOf := func(n int32) Value { // a node's value at the end of phase A
		i := u.before(n)
		switch {
		case i >= 0 && i < a.aN:
			return a.aVal[i]
		case i >= 0:
			return u.nodes[i].val
		}
		return s.val[n]
	}
	ever := func(d int32) bool { // on or unknown at some end of the step
		if s.cond[d] != Off || condBefore(d) != Off {
			return true
		}
		g := nl.devGate[d]
		return g < 0 || conduction(nl.devKind[d], aOf(g)) != Off
	}
	a.partID++
	gave := false
	for i := range u.nodes {
		n := u.nodes[i].n
		if a.partMark[n] == a.partID || s.source[n] || s.val[n] != VX || !math.IsNaN(s.voltsAt(n)) || !s.str[n].IsCharge() {
			continue
		}
		// The part: everything joined to n through devices that were ever on.
		a.part = append(a.part[:0], n)
		a.partMark[n] = a.partID
		a.partDevs = a.partDevs[:0]
		ok := true
		for k := 0; k < len(a.part) && ok; k++ {
			m := a.part[k]
			for _, d := range nl.chanDev[nl.chanStart[m]:nl.chanStart[m+1]] {
				if !ever(d) {
					continue
				}
				o := nl.other(d, m)
				if s.source[o] || s.cond[d] != On {
					ok = false // a source could reach it, or a connection made during the step is broken at its end
					break
				}
				a.partDevs = append(a.partDevs, d)
				if a.partMark[o] != a.partID {
					a.partMark[o] = a.partID
					a.part = append(a.part, o)
				}
			}
		}
		lo, hi := math.Inf(1), math.Inf(-1)
		for _, m := range a.part {
			j := u.before(m)
			if !ok || j < 0 || !u.nodes[j].str.IsCharge() {
				ok = false // it was driven before the step: its charge came from a source
				break
			}
			v := s.saved(j).Volts
			if math.IsNaN(v) {
				ok = false // an unknown charge: the range stands
				break
			}
			lo, hi = min(lo, v), max(hi, v)
		}
		for _, d := range a.partDevs {
			ok = ok && s.conductsAcross(d, lo, hi)
		}
		if !ok {
			continue
		}
		for _, m := range a.part {
			s.restoreNode(u.before(m))
			s.seed(m)
			s.gates = append(s.gates, m) // the devices it gates follow its value again
		}
		gave = true
	}
	return gave
}
