package switchsim

import (
	"fmt"
	"math"
	"slices"
	"strings"
)

// WarnKind names a kind of warning; the names are those files and reports
// use (the README lists them).
type WarnKind string

// Warning kinds.
const (
	WarnDegraded      WarnKind = "degraded"       // a 1 or 0 past its threshold but not full (physical)
	WarnLevelLost     WarnKind = "level-lost"     // a level inside the undefined band: X (physical)
	WarnContention    WarnKind = "contention"     // a node driven against a path of the other value
	WarnConflict      WarnKind = "conflict"       // X from a 0 and a 1 at equal strength
	WarnChargeSharing WarnKind = "charge-sharing" // floating nodes of different charge joined
	WarnHeldByCharge  WarnKind = "held-by-charge" // a gate or output held by stored charge alone
	WarnPartialOn     WarnKind = "partial-on"     // a device off by logic whose gate still turns it on partly (physical)
	WarnFloatingGate  WarnKind = "floating-gate"  // a gate floating with no stored value
	WarnOscillation   WarnKind = "oscillation"    // no definite value, and it keeps changing
	WarnRace          WarnKind = "race"           // the result depends on the order of inputs changed together
	WarnGlitch        WarnKind = "glitch"         // may pulse to the other value and back during the step
	WarnWriteFail     WarnKind = "write-fail"     // a write that does not flip the feedback loop it drives
	WarnShort         WarnKind = "short"          // a device conducting between two sources of different values
)

// Stage says where in a settle a warning was found.
type Stage uint8

const (
	InRounds Stage = iota // the unit-delay rounds, or the final state
	InPhaseA              // race analysis, phase A (changing inputs at X)
	InPhaseB              // race analysis, phase B (their new values)
	InCases               // case analysis (a split whose branches never settle)
)

// Warning is one finding of a settle. Device and Other are -1 where they do
// not apply; Volts and Margin are NaN where unknown. Sim.Message words it.
//
//	race, glitch       Node; the inputs are Result.Analysis.Inputs
//	oscillation        Node; Stage says whether a forcing round or the analysis found it
//	write-fail         Node, Device the write path's device, Other the keeper's,
//	                   Margin (physical): how far the node's voltage is past the
//	                   loop's switching threshold towards the written value
//	                   (negative: the write missed by that much)
//	short              Node and Other the two sources, Device the device
//	contention         Node, Device the winning device, Other the losing one (physical)
//	degraded, level-lost  Node, Device the device of the last threshold drop
//	partial-on, floating-gate  Node the gate, Device the device
type Warning struct {
	Kind   WarnKind
	Node   int
	Device int
	Other  int // a second device or node, by kind
	Volts  float64
	Margin float64
	Stage  Stage
}

// settleWarnings reports, for every node solved in this settle, what its
// final state says about the design (not the transients on the way there).
func (s *Sim) settleWarnings() {
	nl := s.nl
	r := &s.res
	add := func(kind WarnKind, n, d, o int) {
		r.Warnings = append(r.Warnings, Warning{Kind: kind, Node: n, Device: d, Other: o, Volts: s.voltsAt(int32(n)), Margin: math.NaN()})
	}
	ideal := s.mode == Ideal
	for _, n32 := range s.touched {
		n := int(n32)
		st := s.state[n]
		if ideal && st <= State1 || !ideal && st <= StateH && s.physQuiet(n, st) {
			continue // a driven 0 or 1 is neither contested nor a fight: none of the below applies
		}
		if s.warned(n32) { // already reported as racing or oscillating
			continue
		}
		switch {
		case st == StateX && s.flag(n32, nfFight):
			add(WarnConflict, n, -1, -1)
		case (st == StateL || st == StateH) && s.flag(n32, nfContest) && s.mode == Ideal:
			add(WarnContention, n, -1, -1)
		case st != StateZ: // (only a floating node's warnings are left)
		case s.flag(n32, nfShared) && s.quietSharing(n):
		case s.flag(n32, nfShared):
			add(WarnChargeSharing, n, -1, -1)
		case s.val[n] != VX && (nl.gateStart[n+1] > nl.gateStart[n] || nl.nodeFlag[n]&nodeOutput != 0):
			add(WarnHeldByCharge, n, -1, -1)
		case s.val[n] == VX && nl.gateStart[n+1] > nl.gateStart[n]:
			add(WarnFloatingGate, n, int(nl.gateDev[nl.gateStart[n]]), -1)
		}
		if s.mode == Physical {
			s.physWarnings(n, add)
		}
		if nl.nodeFlag[n]&nodeLoop != 0 && (s.flag(n32, nfContest) || (s.val[n] == VX && s.flag(n32, nfFight))) {
			s.writeFail(n32)
		}
	}
	for _, d := range s.shorts {
		a, b := nl.devA[d], nl.devB[d]
		if s.cond[d] != Off && s.source[a] && s.source[b] && s.val[a] != VX && s.val[b] != VX && s.val[a] != s.val[b] {
			r.Warnings = append(r.Warnings, Warning{Kind: WarnShort, Node: int(a), Device: int(d), Other: int(b),
				Volts: math.NaN(), Margin: math.NaN()})
		}
	}
}

// checkShort lists device d (both terminals rails or inputs) to be checked
// for a short at the end of the settle: its gate or a terminal changed.
func (s *Sim) checkShort(d int32) {
	i, _ := slices.BinarySearch(s.nl.shortDevs, d)
	if s.shortMark[i] != s.settleID {
		s.shortMark[i] = s.settleID
		s.shorts = append(s.shorts, d)
	}
}

// writeFail reports a fight that is still there after the settle on node n
// inside a feedback loop, when one side is the loop's own keeper (a path
// through a device the loop gates) and the other a write (a path through
// a switched device and no feedback) of the other value, and the write did
// not win. Ratioed logic, whose pull-up is always on, has no write side.
func (s *Sim) writeFail(n int32) {
	write, keeper := int32(-1), int32(-1)
	wv, kv := VX, VX
	s.pathSides(n, func(src int32, first, feedback int32, switched bool) {
		v := s.val[src]
		switch {
		case feedback >= 0 && keeper < 0:
			keeper, kv = feedback, v
		case feedback < 0 && switched && write < 0:
			write, wv = first, v
		}
	})
	if write < 0 || keeper < 0 || wv == VX || kv == VX || wv == kv || s.val[n] == wv {
		return
	}
	w := Warning{Kind: WarnWriteFail, Node: int(n), Device: int(write), Other: int(keeper), Volts: s.voltsAt(int32(n)), Margin: math.NaN()}
	if s.mode == Physical && !math.IsNaN(w.Volts) {
		vm := s.loopThreshold(n)
		w.Margin = w.Volts - vm // towards a written 1
		if wv == V0 {
			w.Margin = vm - w.Volts
		}
	}
	s.res.Warnings = append(s.res.Warnings, w)
}

// pathSides searches from n through devices that are on to the sources
// reaching it and calls side for each source found: the device next to n on
// the path, the first device on it that the loop gates (-1: none), and
// whether a device on it is switched by a node (not tied to a rail, not a
// pull). It allocates its scratch on first use only.
func (s *Sim) pathSides(n int32, side func(src, first, feedback int32, switched bool)) {
	nl := s.nl
	if s.wpar == nil {
		s.wpar, s.wdev = make([]int32, len(s.val)), make([]int32, len(s.val))
	}
	s.nextEpoch()
	stamp := s.epoch
	s.comp = append(s.comp[:0], n)
	s.mark[n].round = stamp
	s.wpar[n], s.wdev[n] = -1, -1
	for i := 0; i < len(s.comp); i++ {
		m := s.comp[i]
		for _, d := range nl.chanDev[nl.chanStart[m]:nl.chanStart[m+1]] {
			if s.cond[d] != On {
				continue
			}
			o := nl.other(d, m)
			if s.source[o] {
				first, feedback, switched := d, int32(-1), false
				for at, dev := m, d; ; at, dev = s.wpar[at], s.wdev[at] {
					if nl.devFlag[dev]&devFeedback != 0 {
						feedback = dev
					}
					if g := nl.devGate[dev]; g >= 0 && g != nl.power && g != nl.ground {
						switched = true
					}
					first = dev
					if s.wdev[at] < 0 {
						break
					}
				}
				side(o, first, feedback, switched)
				continue
			}
			if s.mark[o].round != stamp {
				s.mark[o].round = stamp
				s.wpar[o], s.wdev[o] = m, d
				s.comp = append(s.comp, o)
			}
		}
	}
}

// loopThreshold is the switching threshold of the stage of n's loop that n
// drives: the square-law VM of the nMOS and pMOS it gates that close the
// loop, with their sizes; the technology's VM where it gates no such pair.
func (s *Sim) loopThreshold(n int32) float64 {
	nl := s.nl
	t := nl.Tech
	wn, wp := 0.0, 0.0
	for _, d := range nl.gateDev[nl.gateStart[n]:nl.gateStart[n+1]] {
		if nl.devFlag[d]&devFeedback == 0 {
			continue
		}
		switch nl.devKind[d] {
		case NMOS:
			wn = max(wn, nl.width(int(d))*t.L/nl.length(int(d)))
		case PMOS:
			wp = max(wp, nl.width(int(d))*t.L/nl.length(int(d)))
		}
	}
	if wn > 0 && wp > 0 {
		t.Wn, t.Wp = wn, wp
	}
	return t.SwitchingThreshold()
}

// Message words a warning with the design's names.
func (s *Sim) Message(w Warning) string {
	nl := s.nl
	name := func(n int) string {
		if n < 0 || n >= len(nl.nodeName) {
			return "?"
		}
		return nl.DisplayName(n)
	}
	node := name(w.Node)
	dev := func(d int) string {
		if d < 0 || d >= len(nl.devName) {
			return "?"
		}
		return nl.DeviceDisplayName(d)
	}
	volts := ""
	if !math.IsNaN(w.Volts) {
		volts = fmt.Sprintf(" at %.2f V", w.Volts)
	}
	switch w.Kind {
	case WarnConflict:
		return fmt.Sprintf("%s is X: a 0 and a 1 reach it at equal strength (%s)", node, s.str[w.Node])
	case WarnContention:
		if w.Device >= 0 && w.Other >= 0 {
			verdict := fmt.Sprintf("%s wins over %s", dev(w.Device), dev(w.Other))
			if s.val[w.Node] == VX {
				verdict = fmt.Sprintf("%s and %s fight to the undefined band", dev(w.Device), dev(w.Other))
			}
			return fmt.Sprintf("%s is %s%s: %s", node, s.state[w.Node], volts, verdict)
		}
		return fmt.Sprintf("%s is %s%s: driven %s but a path of the other value also reaches it", node, s.state[w.Node], volts, s.val[w.Node])
	case WarnChargeSharing:
		return fmt.Sprintf("%s shares charge with %s and now holds %s%s%s", node, strings.Join(s.sharingNames(w.Node), ", "), s.val[w.Node], volts, s.sharingLostText(w.Node))
	case WarnHeldByCharge:
		return fmt.Sprintf("%s holds %s by stored charge alone: nothing drives it", node, s.val[w.Node])
	case WarnFloatingGate:
		return fmt.Sprintf("%s floats with no stored value and gates %s, which is of unknown state", node, dev(w.Device))
	case WarnOscillation:
		switch w.Stage {
		case InRounds:
			return fmt.Sprintf("%s was still changing after %d rounds: set to X", node, s.limit)
		case InPhaseA, InPhaseB:
			return fmt.Sprintf("%s was still changing after %d rounds of race analysis phase %c: set to X", node, s.limit, "AB"[w.Stage-InPhaseA])
		}
		return fmt.Sprintf("%s is X after race analysis and keeps changing: with either value stored at its loop the rounds never settle (an odd ring of inverting stages)", node)
	case WarnRace:
		if len(s.res.Analysis.Inputs) < 2 {
			return fmt.Sprintf("%s is X: the result of changing %s depends on the order in which its effects arrive (race analysis: X in phase A, still X in phase B)",
				node, s.inputsText())
		}
		return fmt.Sprintf("%s is X: %s changed together and the result depends on their order (race analysis: X in phase A, still X in phase B)",
			node, s.inputsText())
	case WarnGlitch:
		back := "in phase B"
		if s.noteOf(int32(w.Node)).kind == noteGlitchAlone {
			back = "when the rounds settled"
		}
		return fmt.Sprintf("%s may glitch: with %s changing it went X in phase A and came back to %s %s; a pulse here %s",
			node, s.inputsText(), s.val[w.Node], back, s.glitchWhy(w.Node))
	case WarnWriteFail:
		return s.writeFailText(w, node, dev, volts)
	case WarnShort:
		d := w.Device
		how := "is on"
		if s.cond[d] == Unknown {
			how = fmt.Sprintf("is of unknown state (gate %s is X)", name(nl.Device(d).Gate))
		}
		return fmt.Sprintf("%s %s between %s (%s) and %s (%s): a short across two sources of different values",
			dev(d), how, node, s.val[w.Node], name(w.Other), s.val[w.Other])
	case WarnDegraded:
		return fmt.Sprintf("%s is a degraded %s%s: a threshold drop through %s", node, s.val[w.Node], volts, dev(w.Device))
	case WarnLevelLost:
		return s.lostText(w)
	case WarnPartialOn:
		return s.partialOnText(w)
	}
	return fmt.Sprintf("%s: %s", node, w.Kind)
}

// inputsText names the inputs the last settle changed.
func (s *Sim) inputsText() string {
	var names []string
	for _, n := range s.res.Analysis.Inputs {
		names = append(names, s.nl.DisplayName(int(n)))
	}
	return joinAnd(names)
}

// glitchWhy says why a pulse on node n matters.
func (s *Sim) glitchWhy(n int) string {
	switch f := s.nl.nodeFlag[n]; {
	case s.str[n].IsCharge():
		return "can change a node held by charge for good"
	case f&nodeGatePass != 0:
		return "opens or closes a pass device for its length"
	case s.gatesDynamic(int32(n)):
		return "can open a path that takes the charge of a dynamic node"
	case f&nodeOutput != 0:
		return "reaches the next stage through the output"
	}
	return "matters where it arrives"
}

func (s *Sim) writeFailText(w Warning, node string, dev func(int) string, volts string) string {
	nl := s.nl
	wv := V1
	if s.val[w.Node] == V1 {
		wv = V0
	}
	head := fmt.Sprintf("%s is %s%s: the write of %s through %s does not overcome the keeper %s", node, s.state[w.Node], volts, wv, dev(w.Device), dev(w.Other))
	if !math.IsNaN(w.Margin) {
		vm := w.Volts - w.Margin
		if wv == V0 {
			vm = w.Volts + w.Margin
		}
		side := "below"
		if w.Volts > vm {
			side = "above"
		}
		return fmt.Sprintf("%s: the node sits %.2f V %s the loop's switching threshold %.2f V, on the keeper's side",
			head, math.Abs(w.Volts-vm), side, vm)
	}
	return fmt.Sprintf("%s: the write path is %s, the keeper %s", head, nl.devCap[w.Device], nl.devCap[w.Other])
}

// quietSharing reports a diffusion node (a stack's inner node, between pass
// devices: it gates nothing) whose charge sharing is not worth its own
// warning: it floats alone now (it shared earlier in the settle, and only
// its level, which nothing reads, is left of it), or a node of its floating
// group that is not a diffusion node carries the warning.
func (s *Sim) quietSharing(n int) bool {
	nl := s.nl
	if nl.nodeFlag[n]&nodeDiffusion == 0 {
		return false
	}
	g := s.floatingGroup(n)
	if len(g) == 1 {
		return true
	}
	for _, m := range g {
		if nl.nodeFlag[m]&nodeDiffusion == 0 && s.flag(int32(m), nfShared) {
			return true
		}
	}
	return false
}

// sharingNames lists the other floating nodes joined to n by devices that are on.
func (s *Sim) sharingNames(n int) []string {
	var names []string
	for _, m := range s.floatingGroup(n) {
		if m != n {
			names = append(names, s.nl.DisplayName(m))
		}
	}
	if len(names) == 0 {
		names = []string{"no other node"}
	}
	return names
}

// floatingGroup returns n and the non-source nodes joined to it by devices that are on.
func (s *Sim) floatingGroup(n int) []int { return s.joined(n, false) }

// joined returns n and the non-source nodes joined to it by devices that
// are on, or also unknown with withUnknown (n's group).
func (s *Sim) joined(n int, withUnknown bool) []int {
	nl := s.nl
	seen := map[int]bool{n: true}
	list := []int{n}
	for i := 0; i < len(list); i++ {
		m := list[i]
		for _, d := range nl.chanDev[nl.chanStart[m]:nl.chanStart[m+1]] {
			if c := s.cond[d]; c == Off || (c == Unknown && !withUnknown) {
				continue
			}
			if o := nl.Other(int(d), m); !s.source[o] && !seen[o] {
				seen[o] = true
				list = append(list, o)
			}
		}
	}
	return list
}
