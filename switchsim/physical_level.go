package switchsim

import "math"

// passLimit is device d's pass limit for its present gate voltage: for an
// nMOS the highest 1 it passes, for a pMOS the lowest 0; NaN for pulls.
func (s *Sim) passLimit(d int32) float64 {
	k := s.nl.devKind[d]
	if k >= PullUp {
		return math.NaN()
	}
	if gn := s.nl.devGate[d]; s.source[gn] {
		v := s.val[gn]
		if v == VX { // an X gate: the device is of unknown state; take the full level of on
			v = V1 - Value(k)
		}
		return s.phys.limRail[k][v]
	}
	return s.phys.dv[d].lim
}

// limitFor computes device d's pass limit for the gate voltage recorded in gv.
// A gate at a rail (the commonest case) takes the limit computed once in
// limRail for that voltage: the same function of the same argument.
func (s *Sim) limitFor(d int32) float64 {
	t := &s.nl.Tech
	k := s.nl.devKind[d]
	if k > PMOS {
		return math.NaN()
	}
	v := s.gateVoltsRecorded(d)
	switch {
	case s.phys.slow:
	case v == 0:
		return s.phys.limRail[k][V0]
	case v == s.phys.vdd:
		return s.phys.limRail[k][V1]
	}
	if k == NMOS {
		return t.PassHigh(v)
	}
	return t.PassLow(v)
}

// gateVoltsRecorded is gv[d], an unknown voltage taken as the full level
// that turns the device on.
func (s *Sim) gateVoltsRecorded(d int32) float64 {
	v := s.phys.dv[d].gv
	if math.IsNaN(v) {
		v = 0
		if s.nl.devKind[d] == NMOS {
			v = s.phys.vdd
		}
	}
	return v
}

// physLevel estimates the nodes of a part driven by value v alone.
func (s *Sim) physLevel(g *group, c int32, v Value) {
	p := &s.phys
	cp := &p.comps[c]
	full := p.full(v)
	nodes := cp.nodes
	if !cp.degr[v] { // nothing on the way can drop the level
		for _, n := range nodes {
			i := s.groupIndex(g, n)
			s.phys.info[n] = noPhysRec()
			if keepX(g, i) {
				g.nvolts[i] = math.NaN()
				continue
			}
			s.decideLevel(g, i, v, full, -1)
		}
		return
	}
	// A node's level is the best over every path of driving devices, of
	// whatever strength: with one value in the part, current flows until
	// each node reaches the highest level (for a 1) some path delivers, so
	// a weak restorer beside a pass device brings the node to its full
	// level, as at the DC operating point (DEVELOPERS.md, physical mode).
	cp.stree, cp.sval = true, v
	{
		s.levelSearch(c, v, Weak)
		for _, n := range nodes {
			i := s.groupIndex(g, n)
			if keepX(g, i) || g.nstr[i] < Weak {
				continue
			}
			old := s.phys.info[n]
			s.phys.info[n] = noPhysRec()
			level, drop := p.pathLevel(v, p.good[n], p.drop[n])
			if len(nodes) == 1 {
				level, drop = s.retained(n, v, level, drop, old)
			}
			s.decideLevel(g, i, v, level, drop)
		}
	}
	for _, n := range nodes {
		i := s.groupIndex(g, n)
		if keepX(g, i) || g.nstr[i] < Weak {
			s.phys.info[n] = noPhysRec()
			g.nvolts[i] = math.NaN()
		}
	}
}

// full is the full level of value v: vdd for a 1, 0 for a 0.
func (p *physState) full(v Value) float64 {
	if v == V1 {
		return p.vdd
	}
	return 0
}

// pathLevel turns a level search's result for a node driven by v (how good
// its best level is, -1 where v does not reach, and the device of the last
// drop) into the level and that device; v unreached counts as full.
func (p *physState) pathLevel(v Value, good float64, drop int32) (float64, int32) {
	switch {
	case good < 0:
		return p.full(v), -1
	case v == V0:
		return p.vdd - good, drop
	}
	return good, drop
}

// retained is charge retention for lone node n driven by v to level through
// the limiting device drop: a limiting device only stops driving at its
// limit, so a lone node already past it keeps its better level, since
// nothing can pull it back (common practice). It then keeps the device that
// dropped its level before (old, its record), if any. With other nodes in the
// part that charge would be shared; this first-order estimate then keeps the
// driven level, so callers apply it to lone nodes only.
func (s *Sim) retained(n int32, v Value, level float64, drop int32, old physRec) (float64, int32) {
	prev := s.volts[n]
	if drop < 0 || !((v == V1 && prev > level) || (v == V0 && prev < level)) {
		return level, drop
	}
	switch {
	case prev == s.phys.full(v):
		return prev, -1
	case old.How == howLevel && old.Drop >= 0:
		return prev, old.Drop
	}
	return prev, drop
}

// levelRange is the one rule of levels (DEVELOPERS.md, physical mode), for a node whose
// estimate lies in [lo, hi] and whose value by the switch-level model is
// want: a 1 holds at or above VIH, a 0 at or below VIL, at the end of the
// range nearer the band; elsewhere the value is lost and the node is X,
// never flipped (lost is then want; the volts are kept when the range is
// one point). Where the switch-level model has no value (want X: charges of
// equal class that differ) the level decides by VIL/VIH.
func (p *physState) levelRange(want Value, lo, hi float64) (val Value, volts float64, lost Value) {
	one := math.NaN()
	if lo == hi {
		one = lo
	}
	switch want {
	case V1:
		if lo >= p.vih {
			return V1, lo, VX
		}
		return VX, one, V1
	case V0:
		if hi <= p.vil {
			return V0, hi, VX
		}
		return VX, one, V0
	}
	switch {
	case hi <= p.vil:
		return V0, hi, VX
	case lo >= p.vih:
		return V1, lo, VX
	}
	return VX, one, VX
}

// decideLevel applies a path level to node g.nodes[i], driven by v: a level
// past VIH (for a 1) or VIL (for a 0) keeps the value, shown H/L if it is not
// full; a level inside the band loses it (X).
func (s *Sim) decideLevel(g *group, i int, v Value, level float64, drop int32) {
	p := &s.phys
	n := g.nodes[i]
	g.nvolts[i] = level
	in := &p.info[n]
	in.How, in.Drop = howLevel, drop
	var lost Value
	g.nval[i], g.nstate[i], lost = p.levelDecided(v, level, drop, g.nval[i], g.nstate[i])
	if lost != VX {
		in.Lost = lost
	}
}

// levelDecided is decideLevel's rule for a node resolved to val and state:
// its value and state, and the value whose level it lost (VX: none).
func (p *physState) levelDecided(v Value, level float64, drop int32, val Value, state State) (Value, State, Value) {
	if lv, _, lost := p.levelRange(v, level, level); lv == VX {
		return VX, StateX, lost
	}
	if drop >= 0 && state <= State1 {
		state = StateL + State(v)
	}
	return val, state, VX
}

// levelSearch finds, for every node of part c, the best level at which v
// reaches it through devices that are on and capped at least lvl: a widest
// path search where a path is as good as its worst pass limit. good holds
// the level for a 1 and vdd - level for a 0 (larger is better), -1 where v
// does not reach; drop the device of the last drop on the best path. Among
// paths of the best level it prefers the lower resistance, and it leaves
// that tree (par, dist, the order reached in sorder[o0:o1]) for the delay.
// The preference is greedy, so it may miss the least resistance in a tie.
func (s *Sim) levelSearch(c int32, v Value, lvl Strength) {
	nl := s.nl
	p := &s.phys
	cp := &p.comps[c]
	full := p.vdd
	for _, n := range cp.nodes {
		p.good[n], p.drop[n], p.par[n], p.dist[n] = -1, -1, -1, math.Inf(1)
	}
	if s.fullSearch(c, v, lvl) {
		return
	}
	for _, n := range cp.nodes {
		p.good[n], p.drop[n], p.par[n], p.dist[n] = -1, -1, -1, math.Inf(1)
	}
	p.next()
	gen := p.gen
	h := &p.heap
	h.items = h.items[:0]
	for _, d := range cp.devs {
		if nl.devCap[d] < lvl {
			continue
		}
		o, ok := s.fedBy(d, v)
		if !ok {
			continue
		}
		gd, dr := s.through(d, v, full, -1)
		if r := p.res[d]; better(gd, r, p.good[o], p.dist[o]) {
			if gd > p.good[o] {
				h.push(gd, o)
			}
			p.good[o], p.drop[o], p.par[o], p.dist[o] = gd, dr, d, r
		}
	}
	cp.o0 = int32(len(p.sorder))
	if int32(len(cp.nodes)) == 1 { // a lone node: its sources' devices settle it
		p.sorder = append(p.sorder, cp.nodes[0])
		cp.o1 = int32(len(p.sorder))
		return
	}
	for len(h.items) > 0 {
		it := h.pop()
		m := it.n
		if p.stamp[m] == gen || it.key < p.good[m] {
			continue
		}
		p.stamp[m] = gen
		p.sorder = append(p.sorder, m)
		gm := p.good[m]
		for _, d := range nl.chanDev[nl.chanStart[m]:nl.chanStart[m+1]] {
			if s.cond[d] != On || nl.devCap[d] < lvl {
				continue
			}
			o := nl.other(d, m)
			if s.source[o] || p.stamp[o] == gen {
				continue
			}
			gd, dr := s.through(d, v, gm, p.drop[m])
			if r := p.dist[m] + p.res[d]; better(gd, r, p.good[o], p.dist[o]) {
				if gd > p.good[o] {
					h.push(gd, o)
				}
				p.good[o], p.drop[o], p.par[o], p.dist[o] = gd, dr, d, r
			}
		}
	}
	cp.o1 = int32(len(p.sorder))
}

// fullSearch is levelSearch's fast path: a breadth-first search through
// the devices that pass v fully (pMOS and pulls for a 1, nMOS and pulls for
// a 0). If it reaches every node of the part, every level is full and the
// search's tree is the delay tree; otherwise it reports false.
func (s *Sim) fullSearch(c int32, v Value, lvl Strength) bool {
	nl := s.nl
	p := &s.phys
	cp := &p.comps[c]
	full := p.vdd
	o0 := len(p.sorder)
	for _, d := range cp.devs {
		if nl.devCap[d] < lvl || !s.passesFully(d, v) {
			continue
		}
		o, ok := s.fedBy(d, v)
		if !ok {
			continue
		}
		if r := p.res[d]; r < p.dist[o] {
			if p.good[o] < 0 {
				p.sorder = append(p.sorder, o)
			}
			p.good[o], p.par[o], p.dist[o] = full, d, r
		}
	}
	for j := o0; j < len(p.sorder); j++ {
		m := p.sorder[j]
		for _, d := range nl.chanDev[nl.chanStart[m]:nl.chanStart[m+1]] {
			if s.cond[d] != On || nl.devCap[d] < lvl || !s.passesFully(d, v) {
				continue
			}
			o := nl.other(d, m)
			if s.source[o] || p.good[o] >= 0 {
				continue
			}
			p.good[o], p.par[o], p.dist[o] = full, d, p.dist[m]+p.res[d]
			p.sorder = append(p.sorder, o)
		}
	}
	if len(p.sorder)-o0 == len(cp.nodes) {
		cp.o0, cp.o1 = int32(o0), int32(len(p.sorder))
		return true
	}
	p.sorder = p.sorder[:o0]
	return false
}

// passesFully reports whether device d passes value v without a drop: a
// pMOS or a pull for a 1, an nMOS or a pull for a 0.
func (s *Sim) passesFully(d int32, v Value) bool {
	k := s.nl.devKind[d]
	return k >= PullUp || (k == PMOS) == (v == V1)
}

// through is how good v stays on a path as good as gd, last dropped by dr,
// once it passes device d, and the device of the last drop after it.
func (s *Sim) through(d int32, v Value, gd float64, dr int32) (float64, int32) {
	if lg := s.limitGood(d, v); lg < gd {
		return lg, d
	}
	return gd, dr
}

// better reports whether a path as good as gd with resistance r beats the
// best so far (good, dist): a better level, or the same with less resistance.
func better(gd, r, good, dist float64) bool { return gd > good || (gd == good && r < dist) }

// limitGood is how good device d lets value v through (see levelSearch):
// an nMOS limits a 1 to PassHigh, a pMOS limits a 0 to PassLow; otherwise
// the value passes fully.
func (s *Sim) limitGood(d int32, v Value) float64 {
	k := s.nl.devKind[d]
	switch {
	case v == V1 && k == NMOS:
		return max(s.passLimit(d), 0)
	case v == V0 && k == PMOS:
		return max(s.phys.vdd-s.passLimit(d), 0)
	}
	return math.Inf(1)
}

// fedBy returns the end of device d that is not a source when its other end
// is a source of value v: where v enters a part through d.
func (s *Sim) fedBy(d int32, v Value) (int32, bool) {
	src, o, ok := s.sourceEnd(d)
	if !ok || s.val[src] != v {
		return -1, false
	}
	return o, true
}

// sourceEnd returns, for a device with a source at one end of its channel
// and a node that is not a source at the other, the source and the node.
func (s *Sim) sourceEnd(d int32) (src, o int32, ok bool) {
	a, b := s.nl.devA[d], s.nl.devB[d]
	switch {
	case s.source[a] && !s.source[b]:
		return a, b, true
	case s.source[b] && !s.source[a]:
		return b, a, true
	}
	return -1, -1, false
}
