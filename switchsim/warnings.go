package switchsim

import (
	"fmt"
	"math"
	"strings"
)

// settleWarnings reports, for every node solved in this settle, what its
// final state says about the design (not the transients on the way there).
func (s *Sim) settleWarnings() {
	nl := s.nl
	r := &s.res
	add := func(kind string, n, d, o int) {
		r.Warnings = append(r.Warnings, Warning{Kind: kind, Node: n, Device: d, Other: o, Volts: s.volts[n]})
	}
	for _, n32 := range s.touched {
		n := int(n32)
		if s.warnMark[n] == s.settleID { // already reported as oscillating
			continue
		}
		fans := nl.gateStart[n+1] > nl.gateStart[n]
		switch st := s.state[n]; {
		case st == StateX && s.fight[n]:
			add(WarnConflict, n, -1, -1)
		case (st == StateL || st == StateH) && s.contest[n] && s.mode == Ideal:
			add(WarnContention, n, -1, -1)
		case st == StateZ && s.shared[n]:
			add(WarnChargeSharing, n, -1, -1)
		case st == StateZ && s.val[n] != VX && (fans || s.isOutput(n)):
			add(WarnHeldByCharge, n, -1, -1)
		case st == StateZ && s.val[n] == VX && fans:
			add(WarnFloatingGate, n, int(nl.gateDev[nl.gateStart[n]]), -1)
		}
		s.physWarnings(n, add)
	}
}

func (s *Sim) isOutput(n int) bool {
	for _, o := range s.nl.outputs {
		if int(o) == n {
			return true
		}
	}
	return false
}

// Message words a warning with the design's names.
func (s *Sim) Message(w Warning) string {
	nl := s.nl
	node := nl.nodeName[w.Node]
	dev := func(d int) string {
		if d < 0 || d >= len(nl.devName) {
			return "?"
		}
		return nl.devName[d]
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
		return fmt.Sprintf("%s was still changing after %d rounds: set to X", node, s.limit)
	case WarnDegraded:
		return fmt.Sprintf("%s is a degraded %s%s: a threshold drop through %s", node, s.val[w.Node], volts, dev(w.Device))
	case WarnLevelLost:
		return s.lostText(w)
	case WarnPartialOn:
		return s.partialOnText(w)
	}
	return fmt.Sprintf("%s: %s", node, w.Kind)
}

// sharingNames lists the other floating nodes joined to n by devices that are on.
func (s *Sim) sharingNames(n int) []string {
	var names []string
	for _, m := range s.floatingGroup(n) {
		if m != n {
			names = append(names, s.nl.nodeName[m])
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
