package switchsim

import "math"

// physSingle is physGroup for the commonest group: one node and no device
// of unknown state or partly on. It gives exactly what physParts and
// physLevel, physCharge or physFight and physDelay give for such a group,
// without their per-part scratch, searches and heap: with one node every
// path is a single device to a source. It shares their rules (keepCharge,
// retained, through, better, solveFight, loneDelay) and reports false,
// having done nothing, for a group it does not take.
func (s *Sim) physSingle(g *group) bool {
	has := g.srcHas
	if len(g.nodes) != 1 || g.hasUnknown || (s.phys.nLeak > 0 && s.phys.leakAt[g.nodes[0]] > 0) {
		return false
	}
	nl := s.nl
	p := &s.phys
	n := g.nodes[0]
	p.fast, p.fdel = true, math.NaN()
	switch {
	case (has[VX] && (has[V0] || has[V1])) || (has[V0] && has[V1]): // a fight (physFight)
		p.gidx[n], p.li[n] = 0, 0
		s.solveFight(g, g.nodes, g.devs, nil, has)
		p.fdel = s.loneDelay(g, n, g.nval[0])
		return true
	case !has[V0] && !has[V1] && !has[VX]: // floating: a lone node shares with nothing (physCharge)
		p.floatRecord(n)
		s.keepCharge(g, 0, s.storedVolts(n))
		p.fdel = 0 // the delay tree's root
		return true
	case has[VX]:
		g.nvolts[0] = math.NaN()
		p.info[n] = noPhysRec()
		return true
	}
	v := V0
	if has[V1] {
		v = V1
	}
	full := p.full(v)
	degr := false
	// with the search for a drop, loneDelay's: the least-resistance device fed by v
	dist, par := math.Inf(1), int32(-1)
	for _, d := range g.devs {
		if k := nl.devKind[d]; k < PullUp && !s.passesFully(d, v) {
			degr = true
		}
		if _, ok := s.fedBy(d, v); ok && p.res[d] < dist {
			dist, par = p.res[d], d
		}
	}
	if !degr { // the least-resistance device to a source of the node's value sets the delay (delayTree)
		p.info[n] = noPhysRec()
		s.decideLevel(g, 0, v, full, -1)
		if g.nval[0] != v || par < 0 {
			return true
		}
		p.fdel = dist * nl.capOf(int(n))
		return true
	}
	old := p.info[n]
	p.info[n] = noPhysRec()
	if g.nstr[0] < Weak {
		g.nvolts[0] = math.NaN()
		return true
	}
	lvl := Weak // every driving path counts (physLevel)
	// fullSearch: the least-resistance device passing v fully.
	good, drop, par, dist := -1.0, int32(-1), int32(-1), math.Inf(1)
	for _, d := range g.devs {
		if nl.devCap[d] < lvl || !s.passesFully(d, v) {
			continue
		}
		if _, ok := s.fedBy(d, v); ok && p.res[d] < dist {
			good, par, dist = p.vdd, d, p.res[d]
		}
	}
	if good < 0 { // levelSearch: the best level, ties to the lower resistance
		for _, d := range g.devs {
			if nl.devCap[d] < lvl {
				continue
			}
			if _, ok := s.fedBy(d, v); !ok {
				continue
			}
			gd, dr := s.through(d, v, p.vdd, -1)
			if r := p.res[d]; better(gd, r, good, dist) {
				good, drop, par, dist = gd, dr, d, r
			}
		}
	}
	level, ldrop := p.pathLevel(v, good, drop)
	level, ldrop = s.retained(n, v, level, ldrop, old)
	s.decideLevel(g, 0, v, level, ldrop)
	if g.nval[0] == v { // the search's tree (searchDelay)
		p.fdel = 0
		if par >= 0 {
			p.fdel = s.edgeResistance(par) * nl.capOf(int(n))
		}
	}
	return true
}

// loneDelay is the Elmore delay of lone node n driven to v: R C through its
// least-resistance device from a source of value v (delayTree), NaN where
// none or v is X.
func (s *Sim) loneDelay(g *group, n int32, v Value) float64 {
	p := &s.phys
	if v == VX {
		return math.NaN()
	}
	dist, par := math.Inf(1), int32(-1)
	for _, d := range g.devs {
		if _, ok := s.fedBy(d, v); ok && p.res[d] < dist {
			dist, par = p.res[d], d
		}
	}
	if par < 0 {
		return math.NaN()
	}
	return dist * s.nl.capOf(int(n))
}
