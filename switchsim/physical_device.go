package switchsim

import "math"

// Devices in physical mode: their sizes, the level-1 constant of each, the
// effective resistance of the delay estimate, and the gate voltage they
// work with.

// deviceResistance is R = r_sq L / W with rn for nMOS and rp for pMOS. A
// resistor given in ohms has its own; pulls and always-on links (Tran) have
// no size and take Tech.DefaultResistance of their strength; so do pull
// and weak transistors left at the default size (the netlist does not say
// whether a size was given, so the default size stands for "none"), unless
// their sized resistance is already higher.
func deviceResistance(nl *Netlist, d int) float64 {
	t := nl.Tech
	k, st := nl.devKind[d], nl.devCap[d]
	if nl.devOhms != nil && nl.devOhms[d] > 0 {
		return nl.devOhms[d] // a resistor's own value (resistive.go)
	}
	switch k {
	case PullUp, PullDown, Tran:
		return t.DefaultResistance(st)
	}
	rsq, w0 := t.Rn, t.Wn
	if k == PMOS {
		rsq, w0 = t.Rp, t.Wp
	}
	w, l := nl.width(d), nl.length(d)
	r := rsq * l / w
	if st < Strong && w == w0 && l == t.L {
		r = max(r, t.DefaultResistance(st))
	}
	return r
}

// effectiveSize is device d's W and L as physical mode uses them: the drawn
// size, except that a pull or weak transistor left at the default size has
// its length stretched so that its effective resistance is
// Tech.DefaultResistance of its strength (deviceResistance): one rule makes
// both its delay and its current in a fight. Pulls have no size (0, 0).
func effectiveSize(nl *Netlist, d int) (w, l float64) {
	k := nl.devKind[d]
	if k >= PullUp {
		return 0, 0
	}
	t := nl.Tech
	rsq := t.Rn
	if k == PMOS {
		rsq = t.Rp
	}
	w, l = nl.width(d), nl.length(d)
	if r, drawn := deviceResistance(nl, d), rsq*l/w; r > drawn {
		l *= r / drawn
	}
	return w, l
}

// deviceBeta is the constant of device d's current in a fight: k' W / L of
// the level-1 model (kn or kp, effectiveSize) for a transistor, in A/V^2,
// and the conductance 1 / R of a pull (a resistor), in siemens.
func deviceBeta(nl *Netlist, d int) float64 {
	switch nl.devKind[d] {
	case PullUp, PullDown, Tran:
		return 1 / deviceResistance(nl, d)
	case PMOS:
		w, l := effectiveSize(nl, d)
		return nl.Tech.Kp * w / l
	}
	w, l := effectiveSize(nl, d)
	return nl.Tech.Kn * w / l
}

// gateVolts is the gate voltage device d works with this round: a source's
// own (sources change only between settles), else the one recorded at the
// start of the round (gateVoltsRecorded); NaN for pulls.
func (s *Sim) gateVolts(d int32) float64 {
	gn := s.nl.devGate[d]
	switch {
	case gn < 0:
		return math.NaN()
	case s.source[gn] && !math.IsNaN(s.volts[gn]):
		return s.volts[gn]
	}
	return s.gateVoltsRecorded(d)
}
