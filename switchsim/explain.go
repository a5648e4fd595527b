package switchsim

import (
	"cmp"
	"fmt"
	"math"
	"slices"

	"railyard/switchsim/diag"
)

// Explanation says why a node holds its state (switchsim §6).
type Explanation struct {
	Node int
	NodeState
	Source    bool   // a rail or a driven input: it holds what it is given
	Winning   []Path // the strongest paths that set the value, up to three
	Opposing  []Path // paths of another value that reach the node but lose, up to three
	Unknown   []int  // devices of unknown state in the node's group
	Sharing   []int  // for a floating node: the floating nodes it shares charge with (itself included)
	Contested bool
	// The node's group as the engine resolved it, so that a viewer need not
	// walk it again: Group its member nodes (the node first; rails and
	// driven inputs are not members) joined through devices that are on or
	// unknown, Devices those devices, each once, including the ones that
	// join a member to a source. For a source, Group is nil and Devices are
	// the devices it feeds directly.
	Group   []int
	Devices []int

	// Physical mode (NaN, -1 or nil where they do not apply).
	Degrader int           // the device that caused the last threshold drop
	Divider  *Divider      // for a node of a fight: its DC operating point's effective resistances
	Lost     *LostLevel    // for a node that is X because its level was lost: where it fell
	Share    []ShareMember // for a floating node: the group's capacitances and voltages
	Delay    float64       // the Elmore delay estimate of the node's last change, seconds

	// Analysis says how race or case analysis decided the node's present
	// state (the zero value where the rounds alone did).
	Analysis AnalysisNote
}

// AnalysisNote is what an explanation says of race and case analysis.
type AnalysisNote struct {
	// Kind is race, oscillation or glitch when the node has that warning.
	Kind WarnKind
	// Decided: race analysis set this state, not the unit-delay rounds
	// (they ended elsewhere, or did not settle).
	Decided bool
	// Case: case analysis resolved the node by splitting on node Split.
	Case  bool
	Split int
	// Inputs are the inputs changed in the step that decided it (nil when
	// that was not the last settle).
	Inputs []int
	// Alone: the glitch came from phase A run alone (RacesGlitches), the
	// rounds bringing the node back.
	Alone bool
	// Vertex: physical mode decided the node at every on/off assignment of
	// its group's devices of unknown state (physical_vertex.go), where the
	// ternary rule left it X.
	Vertex bool
}

// Any reports whether the note says anything.
func (a AnalysisNote) Any() bool { return a.Kind != "" || a.Decided || a.Case || a.Vertex }

// Divider describes a node of a fight at its DC operating point (the
// level-1 solve, physical_fight.go) by the effective resistances of its two
// sides there, Up = (vdd - V) / I and Down = V / I with I the current
// through the node, so that Volts = vdd Down / (Up + Down).
type Divider struct {
	Up, Down             float64 // effective ohms to the 1 side and to the 0 side
	UpDevice, DownDevice int     // the devices carrying the most current on each side (-1: none)
	Volts                float64
	Amps                 float64 // the current through the node
}

// LostLevel says why a node is X by the one rule of levels (switchsim §4):
// the value whose level was lost, where the level fell against the band
// and what a stage reading it sees.
type LostLevel struct {
	Value    Value   // the value that was lost
	Volts    float64 // the estimated level
	Reads    Value   // what the next stage reads: 0 at or below VIL, 1 at or above VIH, X inside the band
	VIL, VIH float64
	Cause    LossCause
	Device   int // the device of the last threshold drop, or the partly-on device (-1: none)
}

// LossCause says what took a level out of its band.
type LossCause uint8

const (
	LostByDrop    LossCause = iota // threshold drops along the driving path
	LostBySharing                  // charge sharing
	LostByLeak                     // a partly-on device pulling against the driven value
)

func (c LossCause) String() string {
	return [...]string{"threshold drop", "charge sharing", "partly-on device"}[c]
}

// ShareMember is one node of a floating group that shares charge.
type ShareMember struct {
	Node          int
	Cap           float64 // farads
	Before, Volts float64 // volts before the last sharing (NaN: none recorded) and now
}

// Path is a chain of devices from a source (a rail, a driven input, or a
// node's own stored charge) to the explained node.
type Path struct {
	Source   int
	Value    Value
	Strength Strength // the path's strength: the weakest of the source and the devices' caps
	Steps    []PathStep
	Weakest  int // the device that sets the path's strength (-1: the source itself)
}

// PathStep is one device on a path, from node From to node To.
type PathStep struct {
	Device     int
	Gate       int // -1 for pulls
	GateValue  Value
	GateVolts  float64 // the gate's voltage in physical mode (Bias.GateVolts), NaN in ideal mode and for pulls
	Conduction Conduction
	From, To   int
	Parallel   []int // other devices that are on between the same two nodes (a transmission gate's other half)
}

// Explain says why node n holds its present state. It searches the node's
// group afresh and allocates; it is meant for people, not for the hot path.
func (s *Sim) Explain(n int) Explanation {
	e := Explanation{Node: n, NodeState: s.Node(n), Source: s.source[n], Degrader: -1, Delay: math.NaN()}
	nl := s.nl
	if e.Source {
		for _, d := range nl.chanDev[nl.chanStart[n]:nl.chanStart[n+1]] {
			if s.cond[d] != Off && !slices.Contains(e.Devices, int(d)) {
				e.Devices = append(e.Devices, int(d))
			}
		}
		return e
	}
	e.Analysis = s.analysisNote(n)
	members := s.joined(n, true)
	e.Group = members
	seen := map[int32]bool{}
	for _, m := range members {
		for _, d := range nl.chanDev[nl.chanStart[m]:nl.chanStart[m+1]] {
			if s.cond[d] == Off || seen[d] {
				continue
			}
			seen[d] = true
			e.Devices = append(e.Devices, int(d))
			if s.cond[d] == Unknown {
				e.Unknown = append(e.Unknown, int(d))
			}
		}
	}
	e.Contested = s.flag(int32(n), nfContest)
	if e.Floating {
		e.Sharing = s.floatingGroup(n)
		e.Winning = s.winningPaths(n)
		s.physExplain(&e)
		return e
	}
	e.Winning = s.winningPaths(n)
	e.Opposing = s.opposingPaths(n)
	s.physExplain(&e)
	return e
}

func (s *Sim) step(d, from, to int) PathStep {
	g := int(s.nl.devGate[d])
	gv := V1
	if g >= 0 {
		gv = s.val[g]
	}
	ps := PathStep{Device: d, Gate: g, GateValue: gv, GateVolts: s.GateVolts(d), Conduction: s.cond[d], From: from, To: to}
	nl := s.nl
	for _, o := range nl.chanDev[nl.chanStart[from]:nl.chanStart[from+1]] {
		if int(o) != d && s.cond[o] == On && nl.Other(int(o), from) == to {
			ps.Parallel = append(ps.Parallel, int(o))
		}
	}
	return ps
}

// winningPaths follows the resolved strengths back from n: through devices
// that are on and at least as strong as n's strength, across nodes at least
// that strong whose value agrees, to the sources that set n's value.
func (s *Sim) winningPaths(n int) []Path {
	nl := s.nl
	want, v := s.str[n], s.val[n]
	agrees := func(m int) bool { return v == VX || s.val[m] == v || s.val[m] == VX }
	type pred struct{ node, dev int }
	prev := map[int]pred{n: {-1, -1}}
	queue := []int{n}
	var found []int
	for i := 0; i < len(queue) && len(found) < 3; i++ {
		m := queue[i]
		for _, d32 := range nl.chanDev[nl.chanStart[m]:nl.chanStart[m+1]] {
			d := int(d32)
			if s.cond[d] != On || (nl.devCap[d] < want && !want.IsCharge()) {
				continue
			}
			o := nl.Other(d, m)
			if _, seen := prev[o]; seen {
				continue
			}
			if s.source[o] {
				if agrees(o) && min(Supply, nl.devCap[d]) >= want {
					prev[o] = pred{m, d}
					found = append(found, o)
					if len(found) == 3 {
						break
					}
				}
				continue
			}
			if s.str[o] >= want && agrees(o) {
				prev[o] = pred{m, d}
				queue = append(queue, o)
			}
		}
	}
	if len(found) == 0 && want.IsCharge() {
		// The value is charge: the origin is the strongest stored charge in the group.
		for _, m := range queue {
			if nl.nodeCharge[m] == want {
				found = append(found, m)
				break
			}
		}
	}
	var paths []Path
	for _, src := range found {
		p := Path{Source: src, Value: s.val[src], Strength: want, Weakest: -1}
		if !s.source[src] {
			p.Strength = nl.nodeCharge[src]
		} else {
			p.Strength = Supply
		}
		for at := src; at != n; {
			pr := prev[at]
			p.Steps = append(p.Steps, s.step(pr.dev, at, pr.node))
			if c := nl.devCap[pr.dev]; c < p.Strength {
				p.Strength, p.Weakest = c, pr.dev
			}
			at = pr.node
		}
		paths = append(paths, p)
	}
	return paths
}

// opposingPaths finds, for each driven source in n's group whose value is
// not n's, the strongest path from it to n through devices on or unknown
// (a maximin search, ignoring blocking): the paths that reach n but lose.
func (s *Sim) opposingPaths(n int) []Path {
	nl := s.nl
	v := s.val[n]
	type label struct {
		str      Strength
		node     int
		dev      int
		finished bool
	}
	lab := map[int]*label{n: {str: Supply, node: -1, dev: -1}}
	for {
		// pick the unfinished node with the strongest label (groups are small)
		best := -1
		for m, l := range lab {
			if !l.finished && !s.source[m] && (best < 0 || l.str > lab[best].str || (l.str == lab[best].str && m < best)) {
				best = m
			}
		}
		if best < 0 {
			break
		}
		lb := lab[best]
		lb.finished = true
		for _, d32 := range nl.chanDev[nl.chanStart[best]:nl.chanStart[best+1]] {
			d := int(d32)
			if s.cond[d] == Off {
				continue
			}
			o := nl.Other(d, best)
			st := min(lb.str, nl.devCap[d])
			if l, ok := lab[o]; !ok || (!l.finished && st > l.str) {
				lab[o] = &label{str: st, node: best, dev: d}
			}
		}
	}
	var paths []Path
	for src, l := range lab {
		if !s.source[src] || (s.val[src] == v && v != VX) {
			continue
		}
		p := Path{Source: src, Value: s.val[src], Strength: l.str, Weakest: -1}
		for at := src; at != n; {
			lb := lab[at]
			p.Steps = append(p.Steps, s.step(lb.dev, at, lb.node))
			if nl.devCap[lb.dev] == l.str && p.Weakest < 0 {
				p.Weakest = lb.dev
			}
			at = lb.node
		}
		paths = append(paths, p)
	}
	slices.SortFunc(paths, func(a, b Path) int { // strongest first, then by source
		return cmp.Or(cmp.Compare(b.Strength, a.Strength), cmp.Compare(a.Source, b.Source))
	})
	if len(paths) > 3 {
		paths = paths[:3]
	}
	return paths
}

// analysisNote returns what race or case analysis said of node n when it
// last decided n's state.
func (s *Sim) analysisNote(n int) AnalysisNote {
	nt := s.noteOf(int32(n))
	an := AnalysisNote{Split: -1}
	an.Vertex = s.mode == Physical && s.phys.info[n].Vertex && s.val[n] != VX
	if nt.kind == noteNone {
		return an
	}
	switch nt.kind {
	case noteRace:
		an.Kind = WarnRace
	case noteOscillation:
		an.Kind = WarnOscillation
	case noteGlitch:
		an.Kind = WarnGlitch
	case noteGlitchAlone:
		an.Kind, an.Alone = WarnGlitch, true
	case noteDecided:
		an.Decided = true
	case noteCase:
		an.Case, an.Split = true, int(nt.split)
	}
	if nt.kind != noteCase && nt.settle == s.ana.lastSettle {
		for _, in := range s.ana.lastInputs {
			an.Inputs = append(an.Inputs, int(in))
		}
	}
	return an
}

// AnalysisText words an explanation's analysis note for a person, or
// returns "" where there is none: which phase made the node X and why, or
// which node case analysis split on.
func (s *Sim) AnalysisText(e Explanation) string { return AnalysisWords(s.nl, e) }

// AnalysisWords is AnalysisText for a caller holding the netlist alone
// (the explorer's Why view).
func AnalysisWords(nl *Netlist, e Explanation) string {
	an := e.Analysis
	if !an.Any() {
		return ""
	}
	ins := "the inputs changed together in an earlier step"
	if len(an.Inputs) > 0 {
		var names []string
		for _, in := range an.Inputs {
			names = append(names, nl.DisplayName(in))
		}
		ins = joinAnd(names)
	}
	switch {
	case an.Kind == WarnRace:
		return "race analysis: phase A (" + ins + " at X) made it X, and phase B (their new values) left it X: its value depends on the order in which they arrive"
	case an.Kind == WarnOscillation:
		return "race analysis: phase A (" + ins + " at X) made it X, phase B left it X, and with either value stored in its loop the rounds never settle: it keeps changing"
	case an.Kind == WarnGlitch && an.Alone:
		return "glitch analysis: phase A alone (" + ins + " at X) made it X, and the rounds brought it back to its value: it may pulse while the step settles"
	case an.Kind == WarnGlitch:
		return "race analysis: phase A (" + ins + " at X) made it X, and phase B brought it back to its value: it may pulse while the step settles"
	case an.Decided:
		return "race analysis decided this state (" + ins + "): the unit-delay rounds, which assume every device switches in the same time, ended elsewhere or did not settle"
	case an.Case:
		return "resolved by case analysis on " + nl.DisplayName(an.Split) + ": the ternary rules leave it X only because X nodes gate the devices around it; settled with " +
			nl.DisplayName(an.Split) + " stored as 0 and as 1, it ends at this value both times"
	case an.Vertex:
		return fmt.Sprintf("decided at every assignment of the %s of unknown state in its group: "+
			"strengths alone leave it X, but solved with each of them on and off it is driven to this value every time (its level is the worst of them)",
			diag.Count(len(e.Unknown), "device"))
	}
	return ""
}

// joinAnd lists names as "a", "a and b", "a, b and c".
func joinAnd(names []string) string {
	switch len(names) {
	case 0:
		return "no input"
	case 1:
		return names[0]
	}
	out := ""
	for i, n := range names[:len(names)-1] {
		if i > 0 {
			out += ", "
		}
		out += n
	}
	return out + " and " + names[len(names)-1]
}

// physExplain adds physical-mode facts to an explanation.
func (s *Sim) physExplain(e *Explanation) {
	if s.mode != Physical {
		return
	}
	in := s.physInfo(e.Node)
	e.Delay = in.Delay
	switch in.How {
	case howLevel:
		e.Degrader = int(in.Drop)
	case howFight, howLeak:
		e.Divider = &Divider{Up: in.RUp, Down: in.RDown, UpDevice: int(in.Up), DownDevice: int(in.Down), Volts: in.Volts, Amps: in.Amps}
	}
	e.Lost = s.lostLevel(e.Node)
	if e.Floating {
		for _, m := range s.physSharing(e.Node) {
			e.Share = append(e.Share, ShareMember{Node: m.Node, Cap: m.Cap, Before: m.Before, Volts: m.Volts})
		}
	}
}
