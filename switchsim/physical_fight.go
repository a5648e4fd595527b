package switchsim

import "math"

// Fights (DEVELOPERS.md, physical mode: a fight): a part where sources of both values
// meet, or a part of one value that a partly-on device pulls on. Its DC
// operating point is solved with the devices' own equations, the level-1
// model of Shichman and Hodges (IEEE JSSC 1968): for an nMOS with Vgs - Vt
// = ov > 0 and Vds = vds >= 0,
//
//	I = beta (ov vds - vds^2 / 2)   below saturation (vds < ov),
//	I = beta ov^2 / 2               in it,
//
// beta = k' W / L, Vt = Vt0 + gamma (sqrt(phi + Vsb) - sqrt(phi)) with the
// body at ground, channel-length modulation left out. The channel is
// symmetric: the lower terminal acts as the source. A pMOS is the mirror
// image (voltages measured down from vdd, body at vdd, |Vtp|). A pull is a
// resistor of Tech.DefaultResistance. The effective resistances of
// physical_device.go stay for the delay estimate only.
//
// The node equations (Kirchhoff's current law at every node of the part,
// sources fixed) are solved by Newton's method with a dense elimination for
// parts of up to physDenseMax nodes, each step at most vdd / 4 and halved
// until the residual falls, at most newtonIters steps of at most 10
// halvings each, from the voltages of the node's last fight (the same fight
// recurs when inputs toggle) and, should that fail, once more from the
// voltages the nodes held. If Newton does not converge, and for larger
// parts, nonlinear Gauss-Seidel
// sweeps solve each node's own equation exactly in turn by a bracketed
// Newton (bisection where a step leaves the bracket): every device current
// rises with its own terminal's voltage, so each node's equation has one
// root in [0, vdd] and the sweeps converge (monotone iteration for
// diagonally dominant systems); they stop after about 4 million element
// visits. A one-node part is solved by that one-node solve alone. A tiny
// conductance (1e-12 of the part's largest, per volt) from every node to
// the voltage it held keeps nodes that no current reaches at their charge.

// inCore marks a node of a network's core (see peel).
const inCore = math.MaxInt32

// physDenseMax is the largest part solved by Newton with the dense method
// (a physNet's denseMax; tests lower it to exercise the sweeps).
const physDenseMax = 48

// newtonIters bounds Newton's method on one part.
const newtonIters = 60

// physElem is one device of a fight's network.
type physElem struct {
	a, b   int32   // local node index, -1 for a source terminal
	va, vb float64 // the source terminal's voltage
	kind   DeviceKind
	beta   float64 // deviceBeta: k' W / L of a transistor, 1 / R of a pull (a resistor)
	vg     float64 // nMOS: the gate's voltage; pMOS: vdd less it (the mirror image)
	lim    float64 // the pass limit for that gate (passLimit): where its current stops
	dev    int32
}

// physNet is the scratch of one fight's solve and the technology it uses.
type physNet struct {
	// quick is set while the vertex solve runs (physical_vertex.go): a
	// network Newton's method does not solve is given up (gaveUp) rather
	// than swept, and the vertex solve keeps the ternary result.
	quick, gaveUp                 bool
	denseMax                      int
	k                             int
	vdd, vtn, vtp, gamma, phi, sp float64 // sp = sqrt(phi)
	gmin                          float64
	el                            []physElem
	start, adj, fill              []int32 // elements at local node j: adj[start[j]:start[j+1]]
	v, hold, trial                []float64
	jac, rhs, res                 []float64
	lo                            []float64 // solution with X sources at 0 (or the only solution)

	// Peeling (see peel): peelAt[j] is node j's place in the order nodes
	// were peeled, inCore for the core; core is the network of the core
	// nodes when there are several.
	peelAt, order, local []int32
	hangsOn              []int32 // the node a set-aside node hangs on

	sig       uint32    // the fight's signature (netBuild)
	up, down  []int32   // strongest: the devices carrying the most current in and out
	bin, bout []float64 // and those currents
	core      *physNet
}

func (nt *physNet) init(t Tech) {
	nt.vdd, nt.vtn, nt.vtp, nt.gamma, nt.phi = t.Vdd, t.Vtn, t.Vtp, t.Gamma, t.Phi
	nt.sp = math.Sqrt(t.Phi)
}

// level1 is the drain current of an nMOS-like device with the gate at vg
// and its channel terminals at xd >= xs (xs the source), body at 0, and its
// derivatives by xd and xs (gd >= 0, gs <= 0).
func (nt *physNet) level1(beta, vt0, vg, xd, xs float64) (i, gd, gs float64) {
	vt, kb := vt0, 0.0
	if nt.gamma != 0 {
		sq := math.Sqrt(nt.phi + max(xs, 0))
		vt += nt.gamma * (sq - nt.sp)
		kb = nt.gamma / (2 * sq) // dVt / dVs
	}
	ov := vg - xs - vt
	if ov <= 0 {
		return 0, 0, 0
	}
	vds := xd - xs
	if vds >= ov { // saturated
		return beta / 2 * ov * ov, 0, -beta * ov * (1 + kb)
	}
	return beta * (ov*vds - vds*vds/2), beta * (ov - vds), -beta * (ov + kb*vds)
}

// nlike is the current from a to b of an nMOS-like device whose terminals
// sit at xa and xb, the source being the lower, with its derivatives.
func (nt *physNet) nlike(beta, vt0, vg, xa, xb float64) (i, da, db float64) {
	if xa >= xb {
		return nt.level1(beta, vt0, vg, xa, xb)
	}
	i, gd, gs := nt.level1(beta, vt0, vg, xb, xa)
	return -i, -gs, -gd
}

// flow is the current through e from terminal a to b with them at xa and
// xb, and its derivatives by xa and xb (da >= 0, db <= 0).
func (nt *physNet) flow(e *physElem, xa, xb float64) (i, da, db float64) {
	switch e.kind {
	case NMOS:
		return nt.nlike(e.beta, nt.vtn, e.vg, xa, xb)
	case PMOS: // the mirror image: voltages down from vdd; the current turns round
		i, da, db = nt.nlike(e.beta, nt.vtp, e.vg, nt.vdd-xa, nt.vdd-xb)
		return -i, da, db
	}
	return e.beta * (xa - xb), e.beta, -e.beta
}

// netBuild fills the network of a part: its nodes (numbered by p.li), the
// devices that are on and the partly-on ones; X sources stand at xv.
func (s *Sim) netBuild(nodes, devs, leaks []int32, xv float64) {
	nl := s.nl
	p := &s.phys
	nt := &p.net
	k := len(nodes)
	nt.k = k
	nt.v, nt.hold, nt.trial = grow(nt.v, k), grow(nt.hold, k), grow(nt.trial, k)
	nt.el = nt.el[:0]
	// The fight's signature names its devices, so that a node fought over
	// by two sets of devices in turn (a select line toggling) starts each
	// fight where the same one last ended.
	nt.sig = fightSig(devs, leaks)
	scale := 0.0
	for _, list := range [2][]int32{devs, leaks} {
		for _, d := range list {
			a, b := nl.devA[d], nl.devB[d]
			if a == b {
				continue
			}
			nt.el = append(nt.el, physElem{})
			e := &nt.el[len(nt.el)-1]
			s.fillElement(e, d, xv)
			if !s.source[a] {
				e.a = p.li[a]
			}
			if !s.source[b] {
				e.b = p.li[b]
			}
			g := e.beta
			if e.kind <= PMOS {
				g *= p.vdd // the conductance of a fully on device, in scale
			}
			scale = max(scale, g)
		}
	}
	for j, n := range nodes {
		h := s.volts[n]
		if math.IsNaN(h) {
			h = p.vdd / 2
		}
		nt.hold[j] = min(max(h, 0), p.vdd)
		nt.v[j] = nt.hold[j]
		if fv := p.fightV[n].find(nt.sig); !math.IsNaN(fv) {
			nt.v[j] = fv // the same fight again: start where it ended
		}
	}
	nt.gmin = 1e-12 * scale
	nt.index()
}

// fightSig is the signature of a fight of devices devs and partly-on devices leaks.
func fightSig(devs, leaks []int32) uint32 {
	sig := uint32(0)
	for _, list := range [2][]int32{devs, leaks} {
		for _, d := range list {
			sig = sigStep(sig, d)
		}
	}
	return sig
}

// sigStep adds device d to a fight's signature.
func sigStep(sig uint32, d int32) uint32 { return sig*0x9e3779b1 + uint32(d) + 1 }

// fightStart keeps where a node's last two fights ended, by the fights'
// signatures, so that the next solve of either starts there.
type fightStart struct {
	sig   [2]uint32
	volts [2]float64
	last  uint8 // the slot written last
}

func noFightStart() fightStart { return fightStart{volts: [2]float64{math.NaN(), math.NaN()}} }

// find returns where the fight of signature sig last ended, NaN if neither slot holds it.
func (f *fightStart) find(sig uint32) float64 {
	for i := range f.sig {
		if f.sig[i] == sig && !math.IsNaN(f.volts[i]) {
			return f.volts[i]
		}
	}
	return math.NaN()
}

// keep records that the fight of signature sig ended at v, over the older
// slot unless one holds the same fight.
func (f *fightStart) keep(sig uint32, v float64) {
	i := 1 - f.last
	if f.sig[f.last] == sig {
		i = f.last
	} else if f.sig[i] != sig && math.IsNaN(f.volts[f.last]) {
		i = f.last
	}
	f.sig[i], f.volts[i], f.last = sig, v, i
}

// index builds the elements' adjacency by node.
func (nt *physNet) index() {
	k := nt.k
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
	for i := range nt.el {
		e := &nt.el[i]
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
	for i := range nt.el {
		e := &nt.el[i]
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

// element is device d's model in a fight (see the top of this file); a
// source terminal gets its voltage (X sources at xv), a node terminal is
// left at -1 for the caller to number.
func (s *Sim) element(d int32, xv float64) physElem {
	var e physElem
	s.fillElement(&e, d, xv)
	return e
}

// fillElement is element into *e.
func (s *Sim) fillElement(e *physElem, d int32, xv float64) {
	nl := s.nl
	p := &s.phys
	a, b := nl.devA[d], nl.devB[d]
	pd := &p.dv[d]
	*e = physElem{a: -1, b: -1, kind: nl.devKind[d], beta: pd.beta, dev: d}
	if s.source[a] {
		e.va, _ = p.sourceVolts(s.val[a], xv)
	}
	if s.source[b] {
		e.vb, _ = p.sourceVolts(s.val[b], xv)
	}
	// The recorded gate voltage is a source's own too: physGateMoved records
	// it when an input changes, and an unknown one (a rail's, never
	// recorded, or an input's before its first change) is the full level of
	// on, which a device in a fight is.
	switch e.kind {
	case NMOS:
		e.vg = s.gateVoltsRecorded(d)
	case PMOS:
		e.vg = p.vdd - s.gateVoltsRecorded(d)
	}
	if e.kind <= PMOS {
		e.lim = s.passLimit(d)
	}
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

// at returns element e's voltage at terminal a (or b) for node voltages x.
func (e *physElem) at(x []float64, a bool) float64 {
	if a {
		if e.a < 0 {
			return e.va
		}
		return x[e.a]
	}
	if e.b < 0 {
		return e.vb
	}
	return x[e.b]
}

// solve finds the node voltages into nt.v, starting from the voltages
// netBuild left there. Dead ends are peeled off first (see peel).
func (nt *physNet) solve() {
	nt.peelAt = grow(nt.peelAt, nt.k)
	for j := range nt.peelAt {
		nt.peelAt[j] = inCore
	}
	if nt.k == 1 { // the one-node solve is exact
		nt.v[0] = nt.solveNode(0)
		return
	}
	if nt.peel() {
		return
	}
	nt.solveCore()
}

// peel solves a network with dead ends: a node that no source reaches
// directly and whose devices all go to one other node carries no current
// at the DC point, so it is set aside (and the nodes that then become such,
// in turn); the rest, the core, is solved without it, and each set-aside
// node afterwards with the node it hangs on fixed (deadEnd), in reverse
// order. The currents a set-aside node would draw (the tiny
// conductance to its held voltage) are left out of the core's equations:
// 1e-12 of the part's conductances. It reports false, having done
// nothing, when no node is a dead end.
func (nt *physNet) peel() bool {
	k := nt.k
	nt.order = nt.order[:0]
	nt.hangsOn = grow(nt.hangsOn, k)
	for j := 0; j < k; j++ {
		nt.peelFrom(int32(j))
	}
	if len(nt.order) == 0 {
		return false
	}
	if nt.core == nil {
		nt.core = &physNet{denseMax: nt.denseMax}
	}
	c := nt.core
	c.denseMax, c.vdd, c.vtn, c.vtp, c.gamma, c.phi, c.sp, c.gmin = nt.denseMax, nt.vdd, nt.vtn, nt.vtp, nt.gamma, nt.phi, nt.sp, nt.gmin
	nt.local = grow(nt.local, k)
	c.k = 0
	last := -1
	for j := 0; j < k; j++ {
		nt.local[j] = -1
		if nt.peelAt[j] == inCore {
			nt.local[j] = int32(c.k)
			c.k++
			last = j
		}
	}
	if c.k == 1 { // one core node: solved in place, its dead ends left out by nodeLaw
		nt.v[last] = nt.solveNode(last)
		nt.unpeel()
		return true
	}
	c.v, c.hold, c.trial = grow(c.v, c.k), grow(c.hold, c.k), grow(c.trial, c.k)
	for j := 0; j < k; j++ {
		if l := nt.local[j]; l >= 0 {
			c.v[l], c.hold[l] = nt.v[j], nt.hold[j]
		}
	}
	c.el = c.el[:0]
	for _, e := range nt.el {
		if (e.a >= 0 && nt.peelAt[e.a] != inCore) || (e.b >= 0 && nt.peelAt[e.b] != inCore) {
			continue
		}
		if e.a >= 0 {
			e.a = nt.local[e.a]
		}
		if e.b >= 0 {
			e.b = nt.local[e.b]
		}
		c.el = append(c.el, e)
	}
	c.index()
	c.peelAt = grow(c.peelAt, c.k)
	for j := range c.peelAt {
		c.peelAt[j] = inCore // a core has no dead ends left
	}
	c.solveCore()
	for j := 0; j < k; j++ {
		if l := nt.local[j]; l >= 0 {
			nt.v[j] = c.v[l]
		}
	}
	nt.unpeel()
	return true
}

// unpeel solves the set-aside nodes in reverse order, each with the node
// it hangs on fixed.
func (nt *physNet) unpeel() {
	for i := len(nt.order) - 1; i >= 0; i-- {
		j := nt.order[i]
		nt.v[j] = nt.deadEnd(j)
	}
}

// deadEnd is the DC voltage of set-aside node j with the node it hangs on
// at V: no current flows through its devices, and of the voltages where
// none flows the one nearest to what it held (the tiny conductance to it
// decides). A pull, or a device that conducts with both ends at V, holds it
// at V; an nMOS that does not (V at or past its pass limit L) carries no
// current anywhere at or above L, a pMOS anywhere at or below its limit.
func (nt *physNet) deadEnd(j int32) float64 {
	pj := nt.peelAt[j]
	v := nt.v[nt.hangsOn[j]]
	lo, hi := 0.0, nt.vdd
	for _, i := range nt.adj[nt.start[j]:nt.start[j+1]] {
		e := &nt.el[i]
		o := e.a
		if o == j {
			o = e.b
		}
		if o >= 0 && nt.peelAt[o] < pj {
			continue // its own dead ends
		}
		switch {
		case e.kind == NMOS && v >= e.lim:
			lo = max(lo, e.lim)
		case e.kind == PMOS && v <= e.lim:
			hi = min(hi, e.lim)
		default:
			return v
		}
	}
	return min(max(nt.hold[j], lo), hi)
}

// peelFrom sets node j aside if it is a dead end, and then the node it
// hangs on if that became one, and so on.
func (nt *physNet) peelFrom(j int32) {
	for j >= 0 && nt.peelAt[j] == inCore {
		on := int32(-1) // the one other node it hangs on
		for _, i := range nt.adj[nt.start[j]:nt.start[j+1]] {
			e := &nt.el[i]
			o := e.a
			if o == j {
				o = e.b
			}
			switch {
			case o < 0: // a source
				return
			case nt.peelAt[o] != inCore || o == j:
			case on < 0:
				on = o
			case on != o:
				return
			}
		}
		if on < 0 { // nothing left to hang on: part of the core
			return
		}
		nt.peelAt[j], nt.hangsOn[j] = int32(len(nt.order)), on
		nt.order = append(nt.order, j)
		j = on
	}
}

// solveCore solves a network without dead ends.
func (nt *physNet) solveCore() {
	if nt.k == 1 {
		nt.v[0] = nt.solveNode(0)
		return
	}
	if nt.k <= nt.denseMax {
		if nt.newton() {
			return
		}
		copy(nt.v, nt.hold) // from a warm start in another fight's state: once more from the charge held
		if nt.newton() {
			return
		}
	}
	if nt.quick {
		nt.gaveUp = true
		return
	}
	// about 4 million element visits at most: a few milliseconds
	budget := max(50, 2000000/max(len(nt.el), 1))
	nt.sweeps(1.6, budget/2)
	nt.sweeps(1, budget/2)
}

// residual fills nt.res with every node's current law at x, the current
// leaving the node (gmin to its held voltage included), and returns the
// residual's squared norm; with jac it also fills the Jacobian.
func (nt *physNet) residual(x []float64, jac bool) float64 {
	k := nt.k
	r := grow(nt.res, k)
	nt.res = r
	if jac {
		clear(nt.jac)
	}
	for j := 0; j < k; j++ {
		r[j] = nt.gmin * (x[j] - nt.hold[j])
		if jac {
			nt.jac[j*k+j] = nt.gmin
		}
	}
	for i := range nt.el {
		e := &nt.el[i]
		cur, da, db := nt.flow(e, e.at(x, true), e.at(x, false))
		if e.a >= 0 {
			r[e.a] += cur
			if jac {
				nt.jac[int(e.a)*k+int(e.a)] += da
				if e.b >= 0 {
					nt.jac[int(e.a)*k+int(e.b)] += db
				}
			}
		}
		if e.b >= 0 {
			r[e.b] -= cur
			if jac {
				nt.jac[int(e.b)*k+int(e.b)] -= db
				if e.a >= 0 {
					nt.jac[int(e.b)*k+int(e.a)] -= da
				}
			}
		}
	}
	sum := 0.0
	for _, f := range r {
		sum += f * f
	}
	return sum
}

// newton runs damped Newton steps on the node equations from nt.v and
// reports whether they converged: a full step below 1e-9 vdd (Newton's next
// error being about its square), which it takes.
func (nt *physNet) newton() bool {
	k := nt.k
	nt.jac, nt.rhs = grow(nt.jac, k*k), grow(nt.rhs, k)
	norm := nt.residual(nt.v, true)
	for it := 0; it < newtonIters; it++ {
		for j := 0; j < k; j++ {
			nt.rhs[j] = -nt.res[j]
		}
		if !gaussSolve(nt.jac, nt.rhs, k) {
			return false
		}
		step := 0.0
		for j := 0; j < k; j++ {
			step = max(step, math.Abs(nt.rhs[j]))
		}
		if step < 1e-9*nt.vdd {
			for j := 0; j < k; j++ {
				nt.v[j] = min(max(nt.v[j]+nt.rhs[j], 0), nt.vdd)
			}
			return true
		}
		// A step is at most a quarter of the supply (where a device is cut
		// off the equations are flat and a full step can be huge), then
		// halved until the residual falls.
		alpha, taken := min(1, nt.vdd/4/step), false
		for h := 0; h < 10; h++ {
			for j := 0; j < k; j++ {
				nt.trial[j] = min(max(nt.v[j]+alpha*nt.rhs[j], 0), nt.vdd)
			}
			// the trial's Jacobian is the next step's when it is taken
			if tn := nt.residual(nt.trial, true); tn < norm || tn == 0 {
				norm, taken = tn, true
				break
			}
			alpha /= 2
		}
		if !taken {
			return norm == 0
		}
		copy(nt.v, nt.trial)
	}
	return false
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

// sweeps runs nonlinear Gauss-Seidel sweeps, over-relaxed by w and kept
// within the rails, until no node moves by more than 1e-12 vdd or the
// sweep budget is spent.
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

// nodeLaw is node j's current law with it at x and the other nodes at
// nt.v: the current leaving j and its derivative by x (positive: every
// device's current rises with its own terminal's voltage).
func (nt *physNet) nodeLaw(j int, x float64, track bool) (f, df float64) {
	f, df = nt.gmin*(x-nt.hold[j]), nt.gmin
	if track {
		nt.up[j], nt.down[j], nt.bin[j], nt.bout[j] = -1, -1, 0, 0
	}
	pj := nt.peelAt[j]
	for _, i := range nt.adj[nt.start[j]:nt.start[j+1]] {
		e := &nt.el[i]
		if o := e.a; o == int32(j) {
			if o = e.b; o >= 0 && nt.peelAt[o] < pj {
				continue // a dead end hanging on j: no current at the DC point
			}
		} else if o >= 0 && nt.peelAt[o] < pj {
			continue
		}
		xa, xb := e.at(nt.v, true), e.at(nt.v, false)
		if e.a == int32(j) {
			xa = x
		}
		if e.b == int32(j) {
			xb = x
		}
		cur, da, db := nt.flow(e, xa, xb)
		if e.a == int32(j) {
			f, df = f+cur, df+da
			if track {
				nt.offer(int32(j), e.dev, -cur)
			}
		}
		if e.b == int32(j) {
			f, df = f-cur, df-db
			if track {
				nt.offer(int32(j), e.dev, cur)
			}
		}
	}
	return f, df
}

// solveNode solves node j's current law for its voltage with the others
// fixed: increasing in the node's voltage, it has one root in [0, vdd],
// found by Newton steps kept inside a bracket (bisection where a step
// leaves it), at most 100.
func (nt *physNet) solveNode(j int) float64 {
	lo, hi := 0.0, nt.vdd
	x := nt.v[j]
	track := nt.k == 1 // the strongest devices of a lone node, from the last evaluation (see strongest)
	if track {
		nt.up, nt.down = grow(nt.up, 1), grow(nt.down, 1)
		nt.bin, nt.bout = grow(nt.bin, 1), grow(nt.bout, 1)
	}
	for it := 0; it < 100; it++ {
		f, df := nt.nodeLaw(j, x, track)
		if f == 0 {
			return x
		}
		if f < 0 {
			lo = x
		} else {
			hi = x
		}
		if hi-lo <= 1e-13*nt.vdd {
			return (lo + hi) / 2
		}
		xn := x - f/df
		if math.Abs(xn-x) <= 1e-9*nt.vdd { // converged: Newton's next error is about the square of this
			return min(max(xn, lo), hi)
		}
		if !(xn > lo && xn < hi) {
			xn = (lo + hi) / 2
		}
		x = xn
	}
	return x
}

// physFight estimates part c: sources of both values (or an X source and a
// value) meet in it, or partly-on devices pull on it. It solves the
// network and decides each node by VIL/VIH. An X source may stand anywhere
// from 0 to vdd; the network is solved with it at both ends (the node
// voltages rise with it), and a node gets a value only if both solutions
// give it, at the end nearer the band.
func (s *Sim) physFight(g *group, c int32) {
	p := &s.phys
	cp := &p.comps[c]
	s.solveFight(g, cp.nodes, cp.devs, cp.leaks, cp.has)
}

// solveFight is physFight on a part given by its nodes (numbered by p.li),
// devices and partly-on devices, and the values of the sources its devices
// touch.
func (s *Sim) solveFight(g *group, nodes, devs, leaks []int32, has [3]bool) {
	p := &s.phys
	nt := &p.net
	k := len(nodes)
	fight := has[VX] || (has[V0] && has[V1])
	xsrc := has[VX] || s.leaksTouchX(leaks)
	s.netBuild(nodes, devs, leaks, 0)
	nt.solve()
	nt.lo = append(nt.lo[:0], nt.v...)
	if xsrc {
		s.netBuild(nodes, devs, leaks, p.vdd)
		nt.solve()
	}
	for j, n := range nodes {
		p.fightV[n].keep(nt.sig, nt.v[j])
	}
	nt.strongest(xsrc)
	reached := false
	for j := 0; j < k; j++ {
		n := nodes[j]
		i := s.groupIndex(g, n)
		p.info[n] = noPhysRec()
		if keepX(g, i) {
			g.nvolts[i] = math.NaN()
			continue
		}
		// A fight is decided by VIL/VIH; a part of one value that partly-on
		// devices move keeps its value by the one rule of levels.
		want := VX
		if !fight {
			want = g.nval[i]
		}
		val, volts, lost := p.levelRange(want, nt.lo[j], nt.v[j])
		p.info[n].How = howFight
		if !fight {
			p.info[n].How = howLeak
		}
		p.info[n].Up, p.info[n].Down, p.info[n].Lost = nt.up[j], nt.down[j], lost
		// The ideal strength is that of the ideal winner, and of both values
		// where they fought; only a value the network turned round needs its
		// own strength.
		if g.nval[i] != val && g.nval[i] != VX {
			if !reached {
				s.reachStrength(nodes, devs, leaks)
				reached = true
			}
			g.nstr[i] = p.sv[V1][n]
			if val == V0 {
				g.nstr[i] = p.sv[V0][n]
			} else if val == VX {
				g.nstr[i] = max(p.sv[V0][n], p.sv[V1][n])
			}
		}
		turned := g.nval[i] != val
		g.nval[i], g.nvolts[i] = val, volts
		switch {
		case val == VX:
			g.nstate[i] = StateX
		case fight || turned || volts != p.full(val):
			g.nstate[i] = StateL + State(val)
		}
		if fight {
			g.contested[i] = true
			s.nflag[n] = s.nflag[n]&^nfFight | nfContest // decided by the network, not a strength fight
		}
	}
}

// strongest leaves in up and down, for every node of the network at its
// solution, the devices carrying the most current into it and out of it
// (-1 where none): a lone node's as its solve's last evaluation tracked
// them, upLater for the others, where X sources made two solutions, or
// where a node carries no current (fightInfo then looks further, on
// demand).
func (nt *physNet) strongest(xsrc bool) {
	k := nt.k
	nt.up, nt.down, nt.bin = grow(nt.up, k), grow(nt.down, k), grow(nt.bin, k)
	for j := 0; j < k; j++ {
		if k > 1 || xsrc || nt.bin[j] == 0 {
			nt.up[j], nt.down[j] = upLater, upLater
		}
	}
}

// offer notes that device d carries cur into local node j (negative: out of it).
func (nt *physNet) offer(j, d int32, cur float64) {
	switch {
	case j < 0:
	case cur > nt.bin[j]:
		nt.bin[j], nt.up[j] = cur, d
	case -cur > nt.bout[j]:
		nt.bout[j], nt.down[j] = -cur, d
	}
}

// leaksTouchX reports whether a partly-on device reaches an X source.
func (s *Sim) leaksTouchX(leaks []int32) bool {
	for _, d := range leaks {
		if a, b := s.nl.devA[d], s.nl.devB[d]; (s.source[a] && s.val[a] == VX) || (s.source[b] && s.val[b] == VX) {
			return true
		}
	}
	return false
}

// partLeaks lists in cp.leaks the partly-on devices from part c's nodes to
// a source or to another node of the part, and reports whether they can
// move its levels: they reach a source of a value the part's devices do not
// bring, or the part holds a device that degrades its level. A partly-on
// device to a node of another group is reported (partialOn) but not solved.
func (s *Sim) partLeaks(g *group, c int32) bool {
	nl := s.nl
	p := &s.phys
	cp := &p.comps[c]
	l0 := len(p.cl)
	var has [3]bool
	p.next()
	for _, n := range cp.nodes {
		if p.leakAt[n] == 0 {
			continue
		}
		for _, d := range nl.chanDev[nl.chanStart[n]:nl.chanStart[n+1]] {
			if !p.leak[d] || p.dmark[d] == p.gen {
				continue
			}
			o := nl.other(d, n)
			switch {
			case s.source[o]:
				has[s.val[o]] = true
			case p.nc[o] == c && int(p.gidx[o]) < len(g.nodes) && g.nodes[p.gidx[o]] == o:
			default:
				continue
			}
			p.dmark[d] = p.gen
			p.cl = append(p.cl, d)
		}
	}
	cp.leaks = p.cl[l0:len(p.cl):len(p.cl)]
	if len(cp.leaks) == 0 {
		return false
	}
	v := V0
	if cp.has[V1] {
		v = V1
	}
	return has[VX] || has[1-v] || cp.degr[v]
}

// fightInfo finds, for a node of a fight (howFight or howLeak) at the
// present voltages, the devices carrying the largest current into it from
// the 1 side and out of it to the 0 side and its effective resistances up
// and down at that operating point: with I the current through the node,
// RUp = (vdd - V) / I and RDown = V / I, so V = vdd RDown / (RUp + RDown).
// A node no current passes (a dead end of the network) takes them from the
// nearest node of the fight that has some. It is computed on demand
// (warnings, explanation), not in the solve.
func (s *Sim) fightInfo(n int32) (up, down int32, rUp, rDown, amps float64) {
	nl := s.nl
	p := &s.phys
	nt := &p.net
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
			if (s.cond[d] != On && !p.leak[d]) || nl.devA[d] == nl.devB[d] {
				continue
			}
			e := s.element(d, xv)
			o, other := nl.other(d, m), e.va
			if o != nl.devA[d] {
				other = e.vb
			}
			if !s.source[o] {
				other = s.volts[o]
				if h := p.info[o].How; p.stamp[o] != p.gen && (h == howFight || h == howLeak) {
					p.stamp[o] = p.gen
					queue = append(queue, o)
				}
			}
			if math.IsNaN(other) || math.IsNaN(v) {
				continue
			}
			cur, _, _ := nt.flow(&e, other, v) // into m
			g := e.beta
			if e.kind <= PMOS {
				g *= p.vdd
			}
			scale = max(scale, g*p.vdd)
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
			return up, down, (p.vdd - v) / i, v / i, i
		}
	}
	return -1, -1, math.NaN(), math.NaN(), math.NaN()
}

// reachStrength fills sv[0] and sv[1] for a part: the strongest strength at
// which each value (an X source counts as both) reaches each node through
// its devices that are on, unblocked (partly-on devices only from a source).
func (s *Sim) reachStrength(nodes, devs, leaks []int32) {
	nl := s.nl
	p := &s.phys
	sv0, sv1 := p.sv[V0], p.sv[V1]
	for _, n := range nodes {
		sv0[n], sv1[n] = HighZ, HighZ
	}
	q := p.order[:0]
	for _, list := range [2][]int32{devs, leaks} {
		for _, d := range list {
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
	}
	if len(nodes) == 1 {
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
