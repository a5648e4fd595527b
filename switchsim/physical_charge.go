package switchsim

import "math"

// physCharge estimates a floating part: its nodes share their charge,
// V = sum(C V) / sum(C), and the value is decided by VIL/VIH (the state stays
// Z). A node whose voltage is unknown may hold anything from 0 to vdd: the
// result is then a range, and a value is given only if the whole range
// decides it, at the end nearer the band.
func (s *Sim) physCharge(g *group, c int32) {
	nl := s.nl
	p := &s.phys
	cp := &p.comps[c]
	nodes := cp.nodes
	// The mean is taken about the lowest known level, so that nodes already
	// at one level keep it exactly.
	vmin, vmax := math.Inf(1), math.Inf(-1)
	unknown := 0
	for _, n := range nodes {
		v := s.storedVolts(n)
		p.good[n] = v
		if math.IsNaN(v) {
			unknown++
			continue
		}
		vmin, vmax = min(vmin, v), max(vmax, v)
	}
	base := 0.0
	if unknown < len(nodes) {
		base = vmin
	}
	var sumC, lo, hi float64
	for _, n := range nodes {
		cn := nl.nodeCap[n]
		sumC += cn
		if v := p.good[n]; math.IsNaN(v) {
			lo += cn * (0 - base)
			hi += cn * (p.vdd - base)
		} else {
			lo += cn * (v - base)
			hi += cn * (v - base)
		}
	}
	lo, hi = base+lo/sumC, base+hi/sumC
	val, volts := VX, math.NaN()
	switch {
	case hi <= p.vil:
		val, volts = V0, hi
	case lo >= p.vih:
		val, volts = V1, lo
	case unknown == 0:
		volts = lo
	}
	// Sharing happens when charges at different levels meet (1 mV apart),
	// or charge of an unknown level meets a known one. Only then is the value
	// decided afresh by VIL/VIH: a node that shares with nothing keeps what
	// it stores, so a lost level is never read back as the other value.
	shared := len(nodes) > 1 && (vmax-vmin > 1e-3 || (unknown > 0 && unknown < len(nodes)))
	for _, n := range nodes {
		i := s.groupIndex(g, n)
		in := p.floatRecord(n)
		if shared {
			p.shareMark[n] = s.settleID
			in.Before = s.volts[n]
		}
		if keepX(g, i) {
			g.nvolts[i] = math.NaN()
			continue
		}
		if !shared {
			s.keepCharge(g, i, p.good[n])
			continue
		}
		in.How = howCharge
		g.nval[i], g.nvolts[i] = val, volts
		s.shared[n] = true
	}
}

// storedVolts is the voltage node n holds as charge: its estimate, or
// where that is unknown the full level of the value it stores (NaN for X).
func (s *Sim) storedVolts(n int32) float64 {
	v := s.volts[n]
	if math.IsNaN(v) {
		switch s.val[n] {
		case V0:
			v = 0
		case V1:
			v = s.phys.vdd
		}
	}
	return v
}

// floatRecord starts node n's record as a member of a floating part: the
// voltage it held before its last sharing is kept while it stays floating.
func (p *physState) floatRecord(n int32) *physRec {
	in := &p.info[n]
	before := in.Before
	if in.How != howCharge {
		before = math.NaN()
	}
	*in = noPhysRec()
	in.Before = before
	return in
}

// keepCharge settles g.nodes[i], floating with nothing to share, at the
// charge it holds, volts, with its value. A node that shared earlier in
// this settle keeps its charge-sharing report.
func (s *Sim) keepCharge(g *group, i int, volts float64) {
	n := g.nodes[i]
	s.phys.info[n].How = howCharge
	g.nvolts[i] = volts
	s.shared[n] = s.shared[n] || s.phys.shareMark[n] == s.settleID
}
