package switchsim

import "math"

// Fights: the resistor network of a contested part, a part where sources of
// both values meet (MODEL.md §4, contention).
//
// Every device that is on is a conductance G = 1 / R between its channel
// terminals. A device whose pass limit can bite carries the current
// I = G (f(Va) - f(Vb)) with f the clamp at its limit L: f(x) = min(x, L) for
// an nMOS (it cannot pull a terminal above L, PassHigh of its gate) and
// f(x) = max(x, L) for a pMOS (not below PassLow). Seen from the node it
// drives, a threshold-limited path is then a source at its limited level in
// series with its resistance, and the device turns off once the node reaches
// that level; between two internal nodes the channel stays symmetric. A
// device joined to a source of the value it passes fully (an nMOS to a 0, a
// pMOS to a 1) is a plain resistor, as are pulls.
//
// Each f is non-decreasing, so the node equations (Kirchhoff's current law)
// form a monotone piecewise-linear system. Small parts are solved by Newton's
// method on the pieces with a dense elimination (exact once the pieces are
// right), large parts by projected successive over-relaxation with an exact
// one-node solve; both end with Gauss-Seidel sweeps that check the result.
// A tiny conductance (1e-12 of the largest) from every node to the voltage it
// held keeps nodes that no current reaches at their charge.

// physDenseMax is the largest part solved by the dense method (a physNet's
// denseMax; tests lower it to exercise the iterative one).
const physDenseMax = 48

// physElem is one device of the network.
type physElem struct {
	a, b   int32   // local node index, -1 for a source terminal
	va, vb float64 // the source terminal's voltage
	g      float64 // conductance, scaled by the largest in the part
	lim    float64
	clamp  int8 // +1: f = min(x, lim); -1: f = max(x, lim); 0: f = x
	dev    int32
	pa, pb float64 // Newton: the slopes of f the last step used at a and b
}

func (e *physElem) f(x float64) float64 {
	switch e.clamp {
	case 1:
		return min(x, e.lim)
	case -1:
		return max(x, e.lim)
	}
	return x
}

// slope is f'(x), taking the clamped side at the breakpoint.
func (e *physElem) slope(x float64) float64 {
	switch {
	case e.clamp == 1 && x >= e.lim, e.clamp == -1 && x <= e.lim:
		return 0
	}
	return 1
}

// physNet is the scratch of one network solve.
type physNet struct {
	denseMax   int
	k          int
	vdd, gmax  float64
	gmin       float64
	el         []physElem
	start, adj []int32 // elements at local node j: adj[start[j]:start[j+1]]
	fill       []int32
	v, hold    []float64
	jac, rhs   []float64
	lo         []float64 // solution with X sources at 0 (or the only solution)
}

// build fills the network of part c; X sources stand at xv.
func (s *Sim) netBuild(c int32, xv float64) {
	nl := s.nl
	p := &s.phys
	cp := &p.comps[c]
	nt := &p.net
	nodes := cp.nodes
	k := len(nodes)
	nt.k, nt.vdd = k, p.vdd
	nt.v, nt.hold = grow(nt.v, k), grow(nt.hold, k)
	for j, n := range nodes {
		h := s.volts[n]
		if math.IsNaN(h) {
			h = p.vdd / 2
		}
		nt.hold[j] = min(max(h, 0), p.vdd)
	}
	nt.el = nt.el[:0]
	nt.gmax = 0
	for _, d := range cp.devs {
		a, b := nl.devA[d], nl.devB[d]
		if a == b {
			continue
		}
		e := s.element(d, xv)
		if !s.source[a] {
			e.a = p.li[a]
		}
		if !s.source[b] {
			e.b = p.li[b]
		}
		nt.gmax = max(nt.gmax, e.g)
		nt.el = append(nt.el, e)
	}
	for i := range nt.el {
		nt.el[i].g /= nt.gmax
	}
	nt.gmin = 1e-12
	nt.start = grow(nt.start, k+1)
	if k == 1 { // every element touches the one node
		nt.start[0], nt.start[1] = 0, int32(len(nt.el))
		nt.adj = grow(nt.adj, len(nt.el))
		for i := range nt.adj {
			nt.adj[i] = int32(i)
		}
		return
	}
	clear(nt.start)
	for _, e := range nt.el {
		if e.a >= 0 {
			nt.start[e.a+1]++
		}
		if e.b >= 0 {
			nt.start[e.b+1]++
		}
	}
	for j := 0; j < k; j++ {
		nt.start[j+1] += nt.start[j]
	}
	nt.adj = grow(nt.adj, int(nt.start[k]))
	nt.fill = append(nt.fill[:0], nt.start[:k]...)
	for i, e := range nt.el {
		if e.a >= 0 {
			nt.adj[nt.fill[e.a]] = int32(i)
			nt.fill[e.a]++
		}
		if e.b >= 0 {
			nt.adj[nt.fill[e.b]] = int32(i)
			nt.fill[e.b]++
		}
	}
}

// element is device d's network model (see the top of this file) with
// unscaled conductance; a source terminal gets its voltage (X sources at
// xv), a node terminal is left at -1 for the caller to number.
func (s *Sim) element(d int32, xv float64) physElem {
	nl := s.nl
	p := &s.phys
	a, b := nl.devA[d], nl.devB[d]
	g := 1 / p.res[d]
	if !p.slow {
		g = p.con[d] // the same quotient, worked out once
	}
	e := physElem{a: -1, b: -1, g: g, dev: d}
	srcVal := VX
	if s.source[a] {
		e.va, srcVal = p.sourceVolts(s.val[a], xv)
	}
	if s.source[b] {
		e.vb, srcVal = p.sourceVolts(s.val[b], xv)
	}
	switch k := nl.devKind[d]; {
	case k == NMOS && srcVal != V0:
		e.clamp, e.lim = 1, min(max(s.passLimit(d), 0), p.vdd)
	case k == PMOS && srcVal != V1:
		e.clamp, e.lim = -1, min(max(s.passLimit(d), 0), p.vdd)
	}
	return e
}

// sourceVolts is a source's voltage in the network and the value it acts
// as: an X source stands at xv and acts as the value nearer.
func (p *physState) sourceVolts(v Value, xv float64) (float64, Value) {
	switch v {
	case V0:
		return 0, V0
	case V1:
		return p.vdd, V1
	}
	if xv > p.vdd/2 {
		return xv, V1
	}
	return xv, V0
}

// solve finds the node voltages into nt.v.
func (nt *physNet) solve() {
	copy(nt.v, nt.hold)
	if nt.k == 1 { // the one-node solve is exact
		nt.v[0] = nt.solveNode(0)
		return
	}
	if nt.k <= nt.denseMax {
		if !nt.newton() {
			nt.sweeps(1, 2000)
		}
		return
	}
	// about 4 million element visits at most: a few milliseconds
	budget := max(50, 2000000/max(len(nt.el), 1))
	nt.sweeps(1.6, budget)
	nt.sweeps(1, 200)
}

// terminal returns element e's voltage at terminal a (or b).
func (nt *physNet) at(e *physElem, a bool) float64 {
	if a {
		if e.a < 0 {
			return e.va
		}
		return nt.v[e.a]
	}
	if e.b < 0 {
		return e.vb
	}
	return nt.v[e.b]
}

// newton runs Newton's method on the piecewise-linear node equations and
// reports whether it converged: a step below 1e-13 vdd means the pieces it
// solved on are those of the solution.
func (nt *physNet) newton() bool {
	k := nt.k
	nt.jac, nt.rhs = grow(nt.jac, k*k), grow(nt.rhs, k)
	for it := 0; it < 60; it++ {
		jac, rhs := nt.jac, nt.rhs
		clear(jac)
		for j := 0; j < k; j++ {
			jac[j*k+j] = nt.gmin
			rhs[j] = -nt.gmin * (nt.v[j] - nt.hold[j])
		}
		for i := range nt.el {
			e := &nt.el[i]
			xa, xb := nt.at(e, true), nt.at(e, false)
			cur := e.g * (e.f(xa) - e.f(xb)) // leaving a
			e.pa, e.pb = e.slope(xa), e.slope(xb)
			sa, sb := e.g*e.pa, e.g*e.pb
			if e.a >= 0 {
				rhs[e.a] -= cur
				jac[int(e.a)*k+int(e.a)] += sa
				if e.b >= 0 {
					jac[int(e.a)*k+int(e.b)] -= sb
				}
			}
			if e.b >= 0 {
				rhs[e.b] += cur
				jac[int(e.b)*k+int(e.b)] += sb
				if e.a >= 0 {
					jac[int(e.b)*k+int(e.a)] -= sa
				}
			}
		}
		if !gaussSolve(jac, rhs, k) {
			return false
		}
		step, projected := 0.0, false
		for j := 0; j < k; j++ {
			x := nt.v[j] + rhs[j]
			if x < 0 || x > nt.vdd {
				x, projected = min(max(x, 0), nt.vdd), true
			}
			step = max(step, math.Abs(x-nt.v[j]))
			nt.v[j] = x
		}
		if step < 1e-13*nt.vdd {
			return true
		}
		if !projected && nt.samePieces() { // the step was exact: the solution lies on the pieces solved on
			return true
		}
	}
	return false
}

// samePieces reports whether every element is on the pieces the last
// Newton step linearised it on.
func (nt *physNet) samePieces() bool {
	for i := range nt.el {
		e := &nt.el[i]
		if e.clamp != 0 && (e.slope(nt.at(e, true)) != e.pa || e.slope(nt.at(e, false)) != e.pb) {
			return false
		}
	}
	return true
}

// gaussSolve solves a x = b in place (x into b) by elimination with partial
// pivoting; false if a is singular.
func gaussSolve(a, b []float64, k int) bool {
	for col := 0; col < k; col++ {
		piv, best := col, math.Abs(a[col*k+col])
		for r := col + 1; r < k; r++ {
			if v := math.Abs(a[r*k+col]); v > best {
				piv, best = r, v
			}
		}
		if best == 0 {
			return false
		}
		if piv != col {
			for c := col; c < k; c++ {
				a[col*k+c], a[piv*k+c] = a[piv*k+c], a[col*k+c]
			}
			b[col], b[piv] = b[piv], b[col]
		}
		inv := 1 / a[col*k+col]
		for r := col + 1; r < k; r++ {
			f := a[r*k+col] * inv
			if f == 0 {
				continue
			}
			for c := col; c < k; c++ {
				a[r*k+c] -= f * a[col*k+c]
			}
			b[r] -= f * b[col]
		}
	}
	for r := k - 1; r >= 0; r-- {
		x := b[r]
		for c := r + 1; c < k; c++ {
			x -= a[r*k+c] * b[c]
		}
		b[r] = x / a[r*k+r]
	}
	return true
}

// sweeps runs projected SOR sweeps with factor w until no node moves by
// more than 1e-12 vdd or the sweep budget is spent.
func (nt *physNet) sweeps(w float64, budget int) {
	for sw := 0; sw < budget; sw++ {
		step := 0.0
		for j := 0; j < nt.k; j++ {
			x := nt.solveNode(j)
			if w != 1 {
				x = min(max(nt.v[j]+w*(x-nt.v[j]), 0), nt.vdd)
			}
			step = max(step, math.Abs(x-nt.v[j]))
			nt.v[j] = x
		}
		if step < 1e-12*nt.vdd {
			return
		}
	}
}

// solveNode solves node j's current law for its voltage with the others
// fixed: F(x) = gmin x + sum g f(x) = gmin hold + sum g f(V_other), F
// increasing and piecewise linear, by Newton steps kept inside a bracket.
func (nt *physNet) solveNode(j int) float64 {
	target := nt.gmin * nt.hold[j]
	scale := nt.gmin
	els := nt.adj[nt.start[j]:nt.start[j+1]]
	for _, i := range els {
		e := &nt.el[i]
		other := nt.at(e, e.a != int32(j))
		target += e.g * e.f(other)
		scale += e.g
	}
	scale *= nt.vdd
	lo, hi := 0.0, nt.vdd
	x := nt.v[j]
	for it := 0; it < 100; it++ {
		fx, sx := nt.gmin*x, nt.gmin
		for _, i := range els {
			e := &nt.el[i]
			fx += e.g * e.f(x)
			sx += e.g * e.slope(x)
		}
		r := fx - target
		if math.Abs(r) <= 1e-15*scale {
			return x
		}
		if r < 0 {
			lo = x
		} else {
			hi = x
		}
		if hi-lo <= 1e-15*nt.vdd {
			return (lo + hi) / 2
		}
		xn := x - r/sx
		if !(xn > lo && xn < hi) {
			xn = (lo + hi) / 2
		}
		x = xn
	}
	return x
}

// physFight estimates a part where sources of both values (or an X source
// and a value) meet: it solves the network and decides each node by VIL/VIH.
// An X source may stand anywhere from 0 to vdd; the network is solved with
// it at both ends (the node voltages rise with it), and a node gets a value
// only if both solutions give it, at the end nearer the band.
func (s *Sim) physFight(g *group, c int32) {
	p := &s.phys
	cp := &p.comps[c]
	nt := &p.net
	nodes := cp.nodes
	k := len(nodes)
	s.netBuild(c, 0)
	nt.solve()
	nt.lo = append(nt.lo[:0], nt.v...)
	if cp.has[VX] {
		s.netBuild(c, p.vdd)
		nt.solve()
	}
	reached := false
	for j := 0; j < k; j++ {
		n := nodes[j]
		i := s.groupIndex(g, n)
		if keepX(g, i) {
			p.info[n] = noPhysRec()
			g.nvolts[i] = math.NaN()
			continue
		}
		lo, hi := nt.lo[j], nt.v[j]
		val, volts := VX, math.NaN()
		switch {
		case hi <= p.vil:
			val, volts = V0, hi
		case lo >= p.vih:
			val, volts = V1, lo
		case lo == hi:
			volts = lo
		}
		p.info[n] = noPhysRec()
		p.info[n].How = howFight
		// The ideal strength is that of the ideal winner, and of both values
		// where they fought; only a value the network turned round needs its
		// own strength.
		if g.nval[i] != val && g.nval[i] != VX {
			if !reached {
				s.reachStrength(c)
				reached = true
			}
			g.nstr[i] = p.sv[V1][n]
			if val == V0 {
				g.nstr[i] = p.sv[V0][n]
			} else if val == VX {
				g.nstr[i] = max(p.sv[V0][n], p.sv[V1][n])
			}
		}
		g.nval[i], g.nvolts[i] = val, volts
		g.nstate[i] = StateX
		if val != VX {
			g.nstate[i] = StateL + State(val)
		}
		g.contested[i] = true
		s.contest[n], s.fight[n] = true, false // decided by the network, not a strength fight
	}
}

// fightInfo finds, for a contested node (howFight) at the present
// voltages, the devices carrying the largest current into it from the 1
// side and out of it to the 0 side and its effective resistances up and
// down: with I the current through the node, RUp = (vdd - V) / I and
// RDown = V / I, so V = vdd RDown / (RUp + RDown); for a plain divider these
// are the two branch resistances. A node no current passes (a dead end of
// the network) takes them from the nearest contested node that has some.
// It is computed on demand (warnings, explanation), not in the solve.
func (s *Sim) fightInfo(n int32) (up, down int32, rUp, rDown float64) {
	nl := s.nl
	p := &s.phys
	p.next()
	p.stamp[n] = p.gen
	queue := append(p.dq[:0], n)
	defer func() { p.dq = queue[:0] }()
	for qi := 0; qi < len(queue); qi++ {
		m := queue[qi]
		v := s.volts[m]
		xv := p.vdd // an X source as in the solution reported: at vdd unless the node reads 1
		if s.val[m] == V1 {
			xv = 0
		}
		var in, out, bestIn, bestOut, scale float64
		up, down = -1, -1
		for _, d := range nl.chanDev[nl.chanStart[m]:nl.chanStart[m+1]] {
			if s.cond[d] != On || nl.devA[d] == nl.devB[d] {
				continue
			}
			e := s.element(d, xv)
			o, other := nl.other(d, m), e.va
			if o != nl.devA[d] {
				other = e.vb
			}
			if !s.source[o] {
				other = s.volts[o]
				if p.stamp[o] != p.gen && p.info[o].How == howFight {
					p.stamp[o] = p.gen
					queue = append(queue, o)
				}
			}
			if math.IsNaN(other) || math.IsNaN(v) {
				continue
			}
			cur := e.g * (e.f(other) - e.f(v))
			scale = max(scale, e.g*p.vdd)
			switch {
			case cur > 0:
				in += cur
				if cur > bestIn {
					bestIn, up = cur, d
				}
			case cur < 0:
				out -= cur
				if -cur > bestOut {
					bestOut, down = -cur, d
				}
			}
		}
		if i := (in + out) / 2; i > 1e-9*scale && i > 0 {
			return up, down, (p.vdd - v) / i, v / i
		}
	}
	return -1, -1, math.NaN(), math.NaN()
}

// reachStrength fills sv[0] and sv[1] for part c: the strongest strength
// at which each value (an X source counts as both) reaches each node through
// devices that are on, unblocked.
func (s *Sim) reachStrength(c int32) {
	nl := s.nl
	p := &s.phys
	cp := &p.comps[c]
	sv0, sv1 := p.sv[V0], p.sv[V1]
	for _, n := range cp.nodes {
		sv0[n], sv1[n] = HighZ, HighZ
	}
	q := p.order[:0]
	for _, d := range cp.devs {
		src, o, ok := s.sourceEnd(d)
		if !ok {
			continue
		}
		st, v := nl.devCap[d], s.val[src]
		grew := false
		if (v == V0 || v == VX) && st > sv0[o] {
			sv0[o], grew = st, true
		}
		if (v == V1 || v == VX) && st > sv1[o] {
			sv1[o], grew = st, true
		}
		if grew {
			q = append(q, o)
		}
	}
	if int32(len(cp.nodes)) == 1 {
		p.order = q[:0]
		return
	}
	for qi := 0; qi < len(q); qi++ {
		m := q[qi]
		for _, d := range nl.chanDev[nl.chanStart[m]:nl.chanStart[m+1]] {
			if s.cond[d] != On {
				continue
			}
			o := nl.other(d, m)
			if s.source[o] {
				continue
			}
			cp := nl.devCap[d]
			grew := false
			if st := min(sv0[m], cp); st > sv0[o] {
				sv0[o], grew = st, true
			}
			if st := min(sv1[m], cp); st > sv1[o] {
				sv1[o], grew = st, true
			}
			if grew {
				q = append(q, o)
			}
		}
	}
	p.order = q[:0]
}
