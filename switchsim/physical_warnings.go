package switchsim

import (
	"fmt"
	"math"
)

// physWarnings adds physical-mode warnings for node n after a settle. The
// level warnings (degraded, level-lost) are given only where a level
// matters (levelMatters): the inner node of a series stack keeps its facts
// in the explanation without one. partial-on is given on a gate node, where
// the level always matters.
func (s *Sim) physWarnings(n int, add func(kind WarnKind, n, d, o int)) {
	if s.mode != Physical {
		return
	}
	p := &s.phys
	in := &p.info[n]
	st := s.state[n]
	matters := s.levelMatters(n)
	switch in.How {
	case howLevel:
		switch {
		case st == StateX && matters:
			add(WarnLevelLost, n, int(in.Drop), -1)
		case (st == StateL || st == StateH) && in.Drop >= 0 && matters:
			add(WarnDegraded, n, int(in.Drop), -1)
		}
		if (st == StateL || st == StateH) && s.flag(int32(n), nfContest) {
			add(WarnContention, n, -1, -1) // the other value reaches it through a device of unknown state
		}
	case howFight:
		if in.Vertex && !matters {
			break // contended at some assignment of devices of unknown state, and nothing reads its level
		}
		win, lose := s.fightSides(int32(n))
		if s.val[n] == V0 {
			win, lose = lose, win
		}
		add(WarnContention, n, int(win), int(lose))
	case howLeak:
		if st == StateX && matters {
			add(WarnLevelLost, n, int(s.leakOf(int32(n))), -1)
		}
	}
	s.partialOn(n, add)
}

// physQuiet reports, for node n at state st (0, 1, L or H) after a
// settle, that physical mode has nothing to say of it (settleWarnings,
// physWarnings): it is no fight's node, no device is partly on, it is in
// no feedback loop whose write could have failed, and at L or H its level
// is neither degraded nor contested.
func (s *Sim) physQuiet(n int, st State) bool {
	p := &s.phys
	in := &p.info[n]
	if in.How == howFight || p.nLeak > 0 || s.nl.nodeFlag[n]&nodeLoop != 0 {
		return false
	}
	return st <= State1 || in.How != howLevel || (in.Drop < 0 && !s.flag(int32(n), nfContest))
}

// fightSides returns the devices carrying the most current into node n of
// a fight from the 1 side and out of it to the 0 side.
func (s *Sim) fightSides(n int32) (up, down int32) {
	in := &s.phys.info[n]
	if in.Up == upLater {
		up, down, _, _, _ := s.fightInfo(n)
		return up, down
	}
	return in.Up, in.Down
}

// leakOf returns the partly-on device that moves node n of a part of one
// value (howLeak): the one of its strongest two that is partly on, else
// the first partly-on device at n, -1 if none.
func (s *Sim) leakOf(n int32) int32 {
	p := &s.phys
	up, down := s.fightSides(n)
	for _, d := range [2]int32{up, down} {
		if d >= 0 && p.leak[d] {
			return d
		}
	}
	nl := s.nl
	for _, d := range nl.chanDev[nl.chanStart[n]:nl.chanStart[n+1]] {
		if p.leak[d] {
			return d
		}
	}
	return -1
}

// levelMatters reports whether a level at node n is read by something: it
// gates a device, it is an output, or it is watched (Sim.Watch: the
// session's checked nodes).
func (s *Sim) levelMatters(n int) bool {
	nl := s.nl
	return nl.gateStart[n+1] > nl.gateStart[n] || s.phys.watch[n]
}

// partialOn reports the devices gated by n that logic says are off while
// their gate voltage still exceeds the threshold (with the body effect) from
// the channel terminal acting as source: the lower one for an nMOS, the
// higher for a pMOS. They leak static current (common practice).
func (s *Sim) partialOn(n int, add func(kind WarnKind, n, d, o int)) {
	if s.phys.nLeak == 0 {
		return
	}
	nl := s.nl
	vg := s.volts[n]
	if math.IsNaN(vg) {
		return
	}
	for _, d := range nl.gateDev[nl.gateStart[n]:nl.gateStart[n+1]] {
		if s.phys.leak[d] && s.partlyOn(d, vg) { // leak: partly on at least from the rail it is body-tied to
			add(WarnPartialOn, n, int(d), -1)
		}
	}
}

// partlyOn reports whether device d, off by logic, with its gate at vg
// exceeds its threshold (body effect included) from the channel terminal
// acting as source at the present voltages.
func (s *Sim) partlyOn(d int32, vg float64) bool {
	nl := s.nl
	t := &nl.Tech
	va, vb := s.volts[nl.devA[d]], s.volts[nl.devB[d]]
	switch {
	case math.IsNaN(va) && math.IsNaN(vb):
		return false
	case math.IsNaN(va):
		va = vb
	case math.IsNaN(vb):
		vb = va
	}
	sp := math.Sqrt(t.Phi)
	if nl.devKind[d] == NMOS {
		vs := min(va, vb)
		return vg-vs > t.Vtn+t.Gamma*(math.Sqrt(t.Phi+max(vs, 0))-sp)
	}
	vs := max(va, vb)
	return vs-vg > t.Vtp+t.Gamma*(math.Sqrt(t.Phi+max(t.Vdd-vs, 0))-sp)
}

// levelText words what node n's level is against the band: which side it
// fell and what a stage reading it sees (the one rule of levels).
func (s *Sim) levelText(n int) string {
	p := &s.phys
	v := s.volts[n]
	vm := s.Margin(n).StageVM
	stage := ""
	if !math.IsNaN(vm) {
		stage = fmt.Sprintf(" (its switching threshold is %.2f V)", vm)
	}
	switch {
	case math.IsNaN(v):
		return "its level is unknown"
	case v <= p.vil:
		return fmt.Sprintf("%.2f V is below VIL (%.2f V), so the next stage reads a 0", v, p.vil)
	case v >= p.vih:
		return fmt.Sprintf("%.2f V is above VIH (%.2f V), so the next stage reads a 1", v, p.vih)
	}
	return fmt.Sprintf("%.2f V is inside the undefined band (VIL %.2f V to VIH %.2f V), so what the next stage reads is unknown%s", v, p.vil, p.vih, stage)
}

// lostText words a level-lost warning: the value lost, where its level
// fell, what the next stage reads and what took the level there.
func (s *Sim) lostText(w Warning) string {
	nl := s.nl
	p := &s.phys
	in := &p.info[w.Node]
	what := "its level"
	if lost := in.Lost; lost != VX {
		what = fmt.Sprintf("its %s is lost: the estimated level", lost)
	}
	level := s.levelText(w.Node)
	if math.IsNaN(s.volts[w.Node]) {
		level = "is unknown" // levelText's own words would repeat "its level"
	}
	flipped := ""
	if lost, v := in.Lost, s.volts[w.Node]; (lost == V1 && v <= p.vil) || (lost == V0 && v >= p.vih) {
		flipped = ", the value flipped"
	}
	by := ""
	if w.Device >= 0 {
		by = "; last dropped by " + nl.DeviceDisplayName(w.Device)
		if in.How == howLeak {
			by = fmt.Sprintf("; pulled there by %s, which conducts partly", nl.DeviceDisplayName(w.Device))
		}
	}
	return fmt.Sprintf("%s is X: %s %s%s%s", nl.DisplayName(w.Node), what, level, flipped, by)
}

// partialOnText words a partial-on warning with the gate's voltage and the
// device's static current at the settled voltages.
func (s *Sim) partialOnText(w Warning) string {
	nl := s.nl
	b := s.DeviceBias(w.Device)
	cur := ""
	if !math.IsNaN(b.Current) {
		cur = ", " + formatAmps(math.Abs(b.Current)) + " of static current"
	}
	return fmt.Sprintf("%s is off by logic but its gate %s sits at %.2f V, past its threshold: it conducts partly%s",
		nl.DeviceDisplayName(w.Device), nl.DisplayName(w.Node), b.GateVolts, cur)
}

// sharingLostText is what a charge-sharing warning adds where the sharing
// lost a node's stored value.
func (s *Sim) sharingLostText(n int) string {
	if s.mode != Physical || s.phys.info[n].How != howCharge || s.phys.info[n].Lost == VX {
		return ""
	}
	return fmt.Sprintf(": its stored %s is lost: %s", s.phys.info[n].Lost, s.levelText(n))
}

// formatAmps prints a current with an SI prefix.
func formatAmps(a float64) string {
	switch {
	case a >= 1e-3:
		return fmt.Sprintf("%.3g mA", a*1e3)
	case a >= 1e-6:
		return fmt.Sprintf("%.3g µA", a*1e6)
	case a >= 1e-9:
		return fmt.Sprintf("%.3g nA", a*1e9)
	}
	return fmt.Sprintf("%.3g A", a)
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
// explanation can show how the charge was shared.
func (s *Sim) physSharing(n int) []physShare {
	var out []physShare
	for _, m := range s.floatingGroup(n) {
		b := math.NaN()
		if s.mode == Physical {
			b = s.phys.info[m].Before
		}
		out = append(out, physShare{m, s.nl.capOf(int(m)), b, s.volts[m]})
	}
	return out
}

// lostLevel is the explanation's account of a node that is X because its
// level was lost (nil for any other node).
func (s *Sim) lostLevel(n int) *LostLevel {
	p := &s.phys
	in := &p.info[n]
	if s.mode != Physical || s.source[n] || s.val[n] != VX || math.IsNaN(s.volts[n]) {
		return nil
	}
	l := &LostLevel{Value: in.Lost, Volts: s.volts[n], Reads: VX, VIL: p.vil, VIH: p.vih, Device: -1}
	switch {
	case l.Volts <= p.vil:
		l.Reads = V0
	case l.Volts >= p.vih:
		l.Reads = V1
	}
	switch in.How {
	case howLevel:
		l.Cause, l.Device = LostByDrop, int(in.Drop)
	case howCharge:
		l.Cause = LostBySharing
	case howLeak:
		l.Cause, l.Device = LostByLeak, int(s.leakOf(int32(n)))
	default:
		return nil
	}
	if l.Value == VX {
		return nil
	}
	return l
}
