package switchsim

import "math"

// The resistor network of a contested part (MODEL.md §4, contention).
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

// physDenseMax is the largest part solved by the dense method.
var physDenseMax = 48

// physElem is one device of the network.
type physElem struct {
	a, b   int32   // local node index, -1 for a source terminal
	va, vb float64 // the source terminal's voltage
	g      float64 // conductance, scaled by the largest in the part
	lim    float64
	clamp  int8 // +1: f = min(x, lim); -1: f = max(x, lim); 0: f = x
	dev    int32
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
	nodes := p.cn[cp.n0:cp.n1]
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
	srcV := func(n int32) (float64, Value) {
		switch s.val[n] {
		case V0:
			return 0, V0
		case V1:
			return p.vdd, V1
		}
		if xv > 0 {
			return xv, V1
		}
		return xv, V0
	}
	for _, d := range p.ce[cp.e0:cp.e1] {
		a, b := nl.devA[d], nl.devB[d]
		if a == b {
			continue
		}
		e := physElem{a: -1, b: -1, g: 1 / p.res[d], dev: d}
		var srcVal = VX
		if s.source[a] {
			e.va, srcVal = srcV(a)
		} else {
			e.a = p.li[a]
		}
		if s.source[b] {
			e.vb, srcVal = srcV(b)
		} else {
			e.b = p.li[b]
		}
		switch k := nl.devKind[d]; {
		case k == NMOS && srcVal != V0:
			e.clamp, e.lim = 1, min(max(s.passLimit(d), 0), p.vdd)
		case k == PMOS && srcVal != V1:
			e.clamp, e.lim = -1, min(max(s.passLimit(d), 0), p.vdd)
		}
		nt.gmax = max(nt.gmax, e.g)
		nt.el = append(nt.el, e)
	}
	for i := range nt.el {
		nt.el[i].g /= nt.gmax
	}
	nt.gmin = 1e-12
	nt.start = grow(nt.start, k+1)
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

// solve finds the node voltages into nt.v.
func (nt *physNet) solve() {
	copy(nt.v, nt.hold)
	if nt.k <= physDenseMax {
		nt.newton()
		nt.sweeps(1, 200)
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

// newton runs Newton's method on the piecewise-linear node equations.
func (nt *physNet) newton() {
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
			sa, sb := e.g*e.slope(xa), e.g*e.slope(xb)
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
			return
		}
		step := 0.0
		for j := 0; j < k; j++ {
			x := min(max(nt.v[j]+rhs[j], 0), nt.vdd)
			step = max(step, math.Abs(x-nt.v[j]))
			nt.v[j] = x
		}
		if step < 1e-13*nt.vdd {
			return
		}
	}
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

// physDivider estimates a part where sources of both values (or an X source
// and a value) meet: it solves the network and decides each node by VIL/VIH.
// An X source may stand anywhere from 0 to vdd; the network is solved with
// it at both ends (the node voltages rise with it), and a node gets a value
// only if both solutions give it, at the end nearer the band.
func (s *Sim) physDivider(g *group, c int32) {
	p := &s.phys
	cp := &p.comps[c]
	nt := &p.net
	nodes := p.cn[cp.n0:cp.n1]
	k := len(nodes)
	s.netBuild(c, 0)
	nt.solve()
	nt.lo = append(nt.lo[:0], nt.v...)
	if cp.has[VX] {
		s.netBuild(c, p.vdd)
		nt.solve()
	}
	s.divideInfo(nodes)
	s.reachStrength(c, V0)
	s.reachStrength(c, V1)
	for j := 0; j < k; j++ {
		n := nodes[j]
		i := s.groupIndex(g, n)
		if keepX(g, i) {
			p.info[n] = noPhysNode()
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
		in := &p.info[n]
		in.Volts = volts
		g.nval[i], g.nvolts[i] = val, volts
		switch val {
		case VX:
			g.nstate[i], g.nstr[i] = StateX, max(p.sv[V0][n], p.sv[V1][n])
		default:
			g.nstate[i], g.nstr[i] = StateL+State(val), p.sv[val][n]
		}
		g.contested[i] = true
		s.contest[n], s.fight[n] = true, false // decided by the network, not a strength fight
	}
}

// divideInfo records, for each node of the solved network, the devices
// carrying the largest current in from the 1 side and out to the 0 side and
// the effective resistances up and down (V = vdd RDown / (RUp + RDown)). A
// node no current passes (a dead end) takes them from a neighbour.
func (s *Sim) divideInfo(nodes []int32) {
	p := &s.phys
	nt := &p.net
	imax := 0.0
	for j, n := range nodes {
		in := &p.info[n]
		*in = noPhysNode()
		in.How = howDivider
		var inflow, outflow, bestIn, bestOut float64
		for _, ei := range nt.adj[nt.start[j]:nt.start[j+1]] {
			e := &nt.el[ei]
			other := nt.at(e, e.a != int32(j))
			cur := e.g * nt.gmax * (e.f(other) - e.f(nt.v[j])) // into the node
			switch {
			case cur > 0:
				inflow += cur
				if cur > bestIn {
					bestIn, in.Up = cur, e.dev
				}
			case cur < 0:
				outflow -= cur
				if -cur > bestOut {
					bestOut, in.Down = -cur, e.dev
				}
			}
		}
		p.good[n] = (inflow + outflow) / 2 // the current through the node
		imax = max(imax, p.good[n])
	}
	missing := 0
	for j, n := range nodes {
		in := &p.info[n]
		i := p.good[n]
		if imax > 0 && i > 1e-9*imax {
			in.RUp, in.RDown = (nt.vdd-nt.v[j])/i, nt.v[j]/i
		} else {
			in.RUp, in.Up, in.Down = math.NaN(), -1, -1
			missing++
		}
	}
	for pass := 0; missing > 0 && pass < len(nodes); pass++ {
		moved := false
		for j, n := range nodes {
			in := &p.info[n]
			if !math.IsNaN(in.RUp) {
				continue
			}
			for _, ei := range nt.adj[nt.start[j]:nt.start[j+1]] {
				e := &nt.el[ei]
				o := e.a
				if o == int32(j) {
					o = e.b
				}
				if o < 0 {
					continue
				}
				if on := &p.info[nodes[o]]; !math.IsNaN(on.RUp) {
					in.RUp, in.RDown, in.Up, in.Down = on.RUp, on.RDown, on.Up, on.Down
					missing--
					moved = true
					break
				}
			}
		}
		if !moved {
			break
		}
	}
}

// reachStrength fills sv[v] for part c: the strongest strength at which v
// (or X) reaches each node through devices that are on, unblocked.
func (s *Sim) reachStrength(c int32, v Value) {
	nl := s.nl
	p := &s.phys
	cp := &p.comps[c]
	sv := p.sv[v]
	for _, n := range p.cn[cp.n0:cp.n1] {
		sv[n] = HighZ
	}
	q := p.order[:0]
	relax := func(o int32, st Strength) {
		if st > sv[o] {
			sv[o] = st
			q = append(q, o)
		}
	}
	for _, d := range p.ce[cp.e0:cp.e1] {
		a, b := nl.devA[d], nl.devB[d]
		switch {
		case s.source[a] && !s.source[b] && (s.val[a] == v || s.val[a] == VX):
			relax(b, nl.devCap[d])
		case s.source[b] && !s.source[a] && (s.val[b] == v || s.val[b] == VX):
			relax(a, nl.devCap[d])
		}
	}
	for qi := 0; qi < len(q); qi++ {
		m := q[qi]
		for _, d := range nl.chanDev[nl.chanStart[m]:nl.chanStart[m+1]] {
			if s.cond[d] != On {
				continue
			}
			o := nl.devA[d]
			if o == m {
				o = nl.devB[d]
			}
			if !s.source[o] {
				relax(o, min(sv[m], nl.devCap[d]))
			}
		}
	}
	p.order = q[:0]
}
