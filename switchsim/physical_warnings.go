package switchsim

import "math"

// physWarnings adds physical-mode warnings for node n after a settle.
func (s *Sim) physWarnings(n int, add func(kind string, n, d, o int)) {
	if s.mode != Physical {
		return
	}
	p := &s.phys
	in := &p.info[n]
	st := s.state[n]
	switch in.How {
	case howLevel:
		switch {
		case st == StateX:
			add(WarnLevelLost, n, int(in.Drop), -1)
		case (st == StateL || st == StateH) && in.Drop >= 0:
			add(WarnDegraded, n, int(in.Drop), -1)
		}
		if (st == StateL || st == StateH) && s.contest[n] {
			add(WarnContention, n, -1, -1) // the other value reaches it through a device of unknown state
		}
	case howFight:
		win, lose := in.Up, in.Down
		if win == upLater {
			win, lose, _, _, _ = s.fightInfo(int32(n))
		}
		if s.val[n] == V0 {
			win, lose = lose, win
		}
		add(WarnContention, n, int(win), int(lose))
	}
	s.partialOn(n, add)
}

// partialOn reports the devices gated by n that logic says are off while
// their gate voltage still exceeds the threshold (with the body effect) from
// the channel terminal acting as source: the lower one for an nMOS, the
// higher for a pMOS. They leak static current (common practice).
func (s *Sim) partialOn(n int, add func(kind string, n, d, o int)) {
	nl := s.nl
	vg := s.volts[n]
	if math.IsNaN(vg) {
		return
	}
	t := &nl.Tech
	for _, d := range nl.gateDev[nl.gateStart[n]:nl.gateStart[n+1]] {
		if !s.phys.leak[d] { // not even partly on from the rail it is body-tied to
			continue
		}
		sp := math.Sqrt(t.Phi)
		va, vb := s.volts[nl.devA[d]], s.volts[nl.devB[d]]
		switch {
		case math.IsNaN(va) && math.IsNaN(vb):
			continue
		case math.IsNaN(va):
			va = vb
		case math.IsNaN(vb):
			vb = va
		}
		on := false
		if nl.devKind[d] == NMOS {
			vs := min(va, vb)
			on = vg-vs > t.Vtn+t.Gamma*(math.Sqrt(t.Phi+max(vs, 0))-sp)
		} else {
			vs := max(va, vb)
			on = vs-vg > t.Vtp+t.Gamma*(math.Sqrt(t.Phi+max(t.Vdd-vs, 0))-sp)
		}
		if on {
			add(WarnPartialOn, n, int(d), -1)
		}
	}
}

// physInfo returns what physical mode knows about node n (see physNode).
// In ideal mode, and for sources, everything is unknown except Volts of a
// driven source.
func (s *Sim) physInfo(n int) physNode {
	in := noPhysNode()
	in.Volts = s.volts[n]
	if s.mode != Physical || s.source[n] {
		return in
	}
	if s.val[n] == VX && math.IsNaN(in.Volts) { // set X since (oscillation): nothing is estimated
		return in
	}
	r := s.phys.info[n]
	in.How, in.Drop, in.Before, in.Delay = r.How, r.Drop, r.Before, r.Delay
	if in.How == howFight || in.How == howLeak {
		in.Up, in.Down, in.RUp, in.RDown, in.Amps = s.fightInfo(int32(n))
	}
	return in
}

// physShare is one member of a floating group, for the explanation.
type physShare struct {
	Node   int
	Cap    float64 // farads
	Before float64 // volts before the last sharing (NaN: none recorded)
	Volts  float64 // volts now
}

// physSharing returns node n's floating group (n and the non-source nodes
// joined to it by devices not off) with capacitances and voltages, so the
// explanation can show sum(C V) / sum(C).
func (s *Sim) physSharing(n int) []physShare {
	var out []physShare
	for _, m := range s.floatingGroup(n) {
		b := math.NaN()
		if s.mode == Physical {
			b = s.phys.info[m].Before
		}
		out = append(out, physShare{m, s.nl.nodeCap[m], b, s.volts[m]})
	}
	return out
}
