package switchsim

import "math"

// Physical mode (MODEL.md §4). The solver resolves every group by strength
// first (ideal mode, solve.go); physGroup then estimates voltages and lets
// them decide values, one part of the group at a time. A part is a set of
// nodes joined by devices that are on:
//
//   - with sources of one value only: every node takes the best level of the
//     paths of its (ideal) winning strength, each path as good as its worst
//     threshold drop (nMOS: Tech.PassHigh of the gate's voltage, pMOS:
//     Tech.PassLow); a level beyond VIH/VIL that is not full is a degraded
//     H/L, a level inside the band is lost (X); a lone node already past the
//     level keeps its better one (physLevel);
//   - with sources of both values: a resistor network, solved for the node
//     voltages, decides each node by VIL/VIH (L/H, or X inside the band);
//     see physical_net.go;
//   - with no source: if charges at different levels meet they share,
//     sum(C V) / sum(C), and the value is decided by VIL/VIH; otherwise each
//     node keeps its charge and value.
//
// Where the group has devices of unknown state and the ternary method made a
// node X, the node stays X with an unknown voltage. A device's limit uses
// its gate's voltage as of the start of the round (physGateMoved records it),
// so levels drop once per gate cascade. Delays are in physical_delay.go.
// In ideal mode every hook returns at once and volts stay NaN.

// physHow says how a node's estimate was made.
type physHow uint8

const (
	howNone    physHow = iota // no estimate: ideal mode, a source, or X kept from the ternary method
	howLevel                  // driven by one value: best path level
	howDivider                // driven by both values: resistor network
	howCharge                 // floating: charge conservation
)

// physNode is what physical mode knows about one node after its last solve.
// It is kept per node for warnings, snapshots and the explanation (physInfo).
type physNode struct {
	Volts float64 // the estimate; NaN where unknown
	How   physHow
	// Drop is the device that caused the last threshold drop on the best
	// path of the winning value (howLevel), -1 for a full level.
	Drop int32
	// Up and Down are, for a contested node (howDivider), the devices that
	// carry the largest current into the node from the 1 side and out of it
	// to the 0 side; -1 where none. RUp and RDown are the node's effective
	// resistances to the 1 side and to the 0 side (ohms) such that
	// Volts = vdd RDown / (RUp + RDown): for a plain divider, the two branch
	// resistances; NaN unless howDivider. physInfo fills all four (they are
	// worked out on demand from the present voltages, see dividerInfo).
	Up, Down   int32
	RUp, RDown float64
	// Before is the voltage the node held before it last shared charge
	// (howCharge with a charge-sharing event), NaN otherwise.
	Before float64
	// Delay is the Elmore delay estimate of the node's last change, seconds.
	Delay float64
}

// physRec is the part of physNode kept per node between settles; the rest
// is worked out when asked for (physInfo).
type physRec struct {
	How           physHow
	Drop          int32
	Before, Delay float64
}

func noPhysRec() physRec { return physRec{Drop: -1, Before: math.NaN(), Delay: math.NaN()} }

// physState is the Sim's physical-mode state. Every slice is allocated in
// physInit; the scratch grows on first use and is reused afterwards.
type physState struct {
	vil, vih, vm, vdd float64

	// per device
	res []float64 // effective on-resistance, ohms
	con []float64 // 1 / res, siemens
	gv  []float64 // the gate's voltage at the start of the round it last changed
	lim []float64 // pass limit for gv (nMOS: PassHigh, pMOS: PassLow), kept by physGateMoved
	// pass limits of a device gated by a source, by kind and the source's value
	limRail [2][2]float64
	ring    []int32 // the devices between the same two terminals, as a ring (a transmission gate's halves)

	// per node, kept between settles
	info      []physRec
	shareMark []uint32 // settle stamp of the last charge-sharing event

	// per node, scratch of the group being solved
	gidx  []int32   // the node's index in g.nodes
	nc    []int32   // the node's part (component) in the group
	li    []int32   // its index within the part
	good  []float64 // level search: how good the best level is (the level for a 1, vdd - level for a 0)
	drop  []int32   // level search: device of the last drop
	par   []int32   // delay tree: the device to the parent
	dist  []float64 // delay tree: path resistance
	sub   []float64 // delay tree: downstream capacitance
	tdel  [2][]float64
	sv    [2][]Strength // divider: the strength at which each value reaches the node
	stamp []uint32      // node -> gen when visited by the current search
	gen   uint32

	dmark []uint32 // device -> gen when listed in a part

	comps  []physComp
	cn     []int32 // nodes of the parts, part after part (with devices of unknown state)
	ce     []int32 // devices that are on, part after part
	heap   physHeap
	order  []int32
	sorder []int32 // level searches' visiting order, part after part
	dq     []int32 // dividerInfo's queue
	net    physNet

	// physSingle's result for the group just solved: fast is set when it
	// took the group, fdel is the delay of its node's change.
	fast bool
	fdel float64
}

// physComp is one part of a group: nodes joined by devices that are on.
type physComp struct {
	nodes []int32 // in g.nodes or cn
	devs  []int32 // devices that are on, in g.devs or ce
	has   [3]bool // values of the sources it touches
	degr  [2]bool // it holds a device that can degrade a 0 (pMOS) / a 1 (nMOS)
	tree  [2]bool // the delay tree for value v is built
	// the level search's tree serves as the delay tree of value sval
	stree  bool
	sval   Value
	o0, o1 int32 // its nodes in the order reached, sorder[o0:o1]
}

type physSnapshot struct {
	gv   []float64
	info []physRec
}

func (s *Sim) physInit() {
	if s.mode != Physical {
		return
	}
	nl := s.nl
	t := nl.Tech
	p := &s.phys
	p.vil, p.vih, p.vm = t.Thresholds()
	p.vdd = t.Vdd
	p.net.denseMax = physDenseMax
	nn, nd := nl.NumNodes(), nl.NumDevices()
	p.res, p.gv, p.lim = make([]float64, nd), make([]float64, nd), make([]float64, nd)
	p.con = make([]float64, nd)
	p.limRail = [2][2]float64{{t.PassHigh(0), t.PassHigh(t.Vdd)}, {t.PassLow(0), t.PassLow(t.Vdd)}}
	p.dmark = make([]uint32, nd)
	p.ring = make([]int32, nd)
	last := make(map[[2]int32]int32, nd) // channel terminals -> a device between them
	for d := 0; d < nd; d++ {
		p.res[d] = deviceResistance(nl, d)
		p.con[d] = 1 / p.res[d]
		p.gv[d] = math.NaN()
		p.lim[d] = s.limitFor(int32(d))
		key := [2]int32{min(nl.devA[d], nl.devB[d]), max(nl.devA[d], nl.devB[d])}
		if o, ok := last[key]; ok { // join o's ring, just after o
			p.ring[d], p.ring[o] = p.ring[o], int32(d)
		} else {
			p.ring[d] = int32(d)
			last[key] = int32(d)
		}
	}
	p.info = make([]physRec, nn)
	for n := range p.info {
		p.info[n] = noPhysRec()
	}
	p.shareMark = make([]uint32, nn)
	p.gidx, p.nc, p.li = make([]int32, nn), make([]int32, nn), make([]int32, nn)
	p.drop, p.par = make([]int32, nn), make([]int32, nn)
	p.good, p.dist, p.sub = make([]float64, nn), make([]float64, nn), make([]float64, nn)
	p.tdel[0], p.tdel[1] = make([]float64, nn), make([]float64, nn)
	p.sv[0], p.sv[1] = make([]Strength, nn), make([]Strength, nn)
	p.stamp = make([]uint32, nn)
}

func noPhysNode() physNode {
	nan := math.NaN()
	return physNode{Volts: nan, Drop: -1, Up: -1, Down: -1, RUp: nan, RDown: nan, Before: nan, Delay: nan}
}

// deviceResistance is R = r_sq L / W with rn for nMOS and rp for pMOS. Pulls
// have no size and take Tech.DefaultResistance of their strength; so do pull
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
	r := rsq * nl.devL[d] / nl.devW[d]
	if st < Strong && nl.devW[d] == w0 && nl.devL[d] == t.L {
		r = max(r, t.DefaultResistance(st))
	}
	return r
}

func (s *Sim) physSave() physSnapshot {
	if s.mode != Physical {
		return physSnapshot{}
	}
	return physSnapshot{append([]float64(nil), s.phys.gv...), append([]physRec(nil), s.phys.info...)}
}

func (s *Sim) physRestore(sn physSnapshot) {
	if s.mode != Physical || sn.gv == nil {
		return
	}
	copy(s.phys.gv, sn.gv)
	copy(s.phys.info, sn.info)
	for d := range s.phys.lim {
		s.phys.lim[d] = s.limitFor(int32(d))
	}
}

// physGateMoved records device d's gate voltage as of the start of this
// round (the solver calls it for every device whose gate node changed) and
// reports whether the device, not off, must be re-solved because that
// voltage moved: its pass limit follows the gate.
func (s *Sim) physGateMoved(d int32) bool {
	if s.mode != Physical {
		return false
	}
	p := &s.phys
	gn := s.nl.devGate[d]
	if gn < 0 {
		return false
	}
	v := s.volts[gn]
	old := p.gv[d]
	if v == old || (math.IsNaN(v) && math.IsNaN(old)) {
		return false
	}
	p.gv[d] = v
	p.lim[d] = s.limitFor(d)
	return conduction(s.nl.devKind[d], s.val[gn]) != Off && voltsMoved(old, v)
}

// gateVolts is the gate voltage device d works with this round: a source's
// own (sources change only between settles), else the one recorded at the
// start of the round; an unknown voltage counts as the full level of the
// state the device is in.
func (s *Sim) gateVolts(d int32) float64 {
	gn := s.nl.devGate[d]
	var v float64
	if s.source[gn] {
		v = s.volts[gn]
	} else {
		v = s.phys.gv[d]
	}
	if math.IsNaN(v) {
		v = 0
		if s.nl.devKind[d] == NMOS {
			v = s.phys.vdd
		}
	}
	return v
}

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
	return s.phys.lim[d]
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
	case !physFastPath:
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
	v := s.phys.gv[d]
	if math.IsNaN(v) {
		v = 0
		if s.nl.devKind[d] == NMOS {
			v = s.phys.vdd
		}
	}
	return v
}

// physGroup adds the voltage estimates to the ideal resolution of g.
func (s *Sim) physGroup(g *group) {
	if s.mode != Physical {
		return
	}
	p := &s.phys
	if physFastPath && s.physSingle(g) {
		return
	}
	p.fast = false
	p.next()
	s.physParts(g)
	for c := range p.comps {
		cp := &p.comps[c]
		switch {
		case !cp.has[V0] && !cp.has[V1] && !cp.has[VX]:
			s.physCharge(g, int32(c))
		case cp.has[VX] && !cp.has[V0] && !cp.has[V1]:
			for _, n := range cp.nodes {
				i := s.groupIndex(g, n)
				g.nvolts[i] = math.NaN()
				s.phys.info[n] = noPhysRec()
			}
		case cp.has[V0] && cp.has[V1], cp.has[VX]:
			s.physDivider(g, int32(c))
		case cp.has[V1]:
			s.physLevel(g, int32(c), V1)
		default:
			s.physLevel(g, int32(c), V0)
		}
	}
}

func (p *physState) next() {
	p.gen++
	if p.gen == 0 {
		clear(p.stamp)
		clear(p.dmark)
		p.gen = 1
	}
}

// groupIndex returns node n's position in g.nodes (n in the group being solved).
func (s *Sim) groupIndex(g *group, n int32) int { return int(s.phys.gidx[n]) }

// physParts splits g into parts joined by devices that are on. Without
// devices of unknown state the whole group is one part.
func (s *Sim) physParts(g *group) {
	nl := s.nl
	p := &s.phys
	p.comps = p.comps[:0]
	p.cn, p.ce, p.sorder = p.cn[:0], p.ce[:0], p.sorder[:0]
	if !g.hasUnknown {
		cp := physComp{nodes: g.nodes, devs: g.devs, has: g.srcHas}
		for i, n := range g.nodes {
			p.gidx[n], p.nc[n], p.li[n] = int32(i), 0, int32(i)
		}
		for _, d := range g.devs {
			switch nl.devKind[d] {
			case NMOS:
				cp.degr[V1] = true
			case PMOS:
				cp.degr[V0] = true
			}
		}
		p.comps = append(p.comps, cp)
		return
	}
	for i, n := range g.nodes {
		p.gidx[n], p.nc[n] = int32(i), -1
	}
	gen := p.gen
	for _, seed := range g.nodes {
		if p.nc[seed] >= 0 {
			continue
		}
		c := int32(len(p.comps))
		var cp physComp
		n0, e0 := len(p.cn), len(p.ce)
		p.nc[seed] = c
		p.cn = append(p.cn, seed)
		for j := n0; j < len(p.cn); j++ {
			m := p.cn[j]
			p.li[m] = int32(j - n0)
			for _, d := range nl.chanDev[nl.chanStart[m]:nl.chanStart[m+1]] {
				if s.cond[d] != On {
					continue
				}
				if p.dmark[d] != gen {
					p.dmark[d] = gen
					p.ce = append(p.ce, d)
					switch nl.devKind[d] {
					case NMOS:
						cp.degr[V1] = true
					case PMOS:
						cp.degr[V0] = true
					}
				}
				o := nl.devA[d]
				if o == m {
					o = nl.devB[d]
				}
				if s.source[o] {
					cp.has[s.val[o]] = true
				} else if p.nc[o] < 0 {
					p.nc[o] = c
					p.cn = append(p.cn, o)
				}
			}
		}
		cp.nodes, cp.devs = p.cn[n0:len(p.cn):len(p.cn)], p.ce[e0:len(p.ce):len(p.ce)]
		p.comps = append(p.comps, cp)
	}
}

// keepX reports a node the ternary method made X in a group with devices of
// unknown state: physical mode leaves it X, its voltage unknown.
func keepX(g *group, i int) bool { return g.hasUnknown && g.nval[i] == VX }

// physLevel estimates the nodes of a part driven by value v alone.
func (s *Sim) physLevel(g *group, c int32, v Value) {
	p := &s.phys
	cp := &p.comps[c]
	full := 0.0
	if v == V1 {
		full = p.vdd
	}
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
	// One search per winning strength present: a node's level is the best
	// over the paths of its own strength (devices capped at least that strong).
	var present [Supply + 1]bool
	for _, n := range nodes {
		i := s.groupIndex(g, n)
		if !keepX(g, i) && g.nstr[i] >= Weak {
			present[g.nstr[i]] = true
		}
	}
	runs := 0
	for _, pr := range present {
		if pr {
			runs++
		}
	}
	cp.stree, cp.sval = runs == 1, v
	for lvl := Supply; lvl >= Weak; lvl-- {
		if !present[lvl] {
			continue
		}
		s.levelSearch(c, v, lvl)
		for _, n := range nodes {
			i := s.groupIndex(g, n)
			if keepX(g, i) || g.nstr[i] != lvl {
				continue
			}
			old := s.phys.info[n]
			s.phys.info[n] = noPhysRec()
			level, drop := full, int32(-1)
			if p.good[n] >= 0 {
				level, drop = p.good[n], p.drop[n]
				if v == V0 {
					level = p.vdd - p.good[n]
				}
			}
			// A limiting device only stops driving at its limit: a lone node
			// already past it keeps its better level, since nothing can pull
			// it back (charge retention, common practice). With other nodes in
			// the part that charge would be shared; this first-order estimate
			// then keeps the driven level.
			if prev := s.volts[n]; len(nodes) == 1 && drop >= 0 && ((v == V1 && prev > level) || (v == V0 && prev < level)) {
				level, drop = prev, -1
				if prev != full && old.How == howLevel {
					drop = old.Drop
				}
				if prev != full && drop < 0 {
					drop = p.drop[n]
				}
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

// decideLevel applies a path level to node g.nodes[i], driven by v: a level
// past VIH (for a 1) or VIL (for a 0) keeps the value, shown H/L if it is not
// full; a level inside the band loses it (X).
func (s *Sim) decideLevel(g *group, i int, v Value, level float64, drop int32) {
	p := &s.phys
	n := g.nodes[i]
	g.nvolts[i] = level
	in := &p.info[n]
	in.How, in.Drop = howLevel, drop
	if (v == V1 && level < p.vih) || (v == V0 && level > p.vil) {
		g.nval[i], g.nstate[i] = VX, StateX
		return
	}
	if drop >= 0 && g.nstate[i] <= State1 {
		g.nstate[i] = StateL + State(v)
	}
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
		gd, dr := full, int32(-1)
		if lg := s.limitGood(d, v); lg < gd {
			gd, dr = lg, d
		}
		r := p.res[d]
		if gd > p.good[o] || (gd == p.good[o] && r < p.dist[o]) {
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
			o := nl.devA[d]
			if o == m {
				o = nl.devB[d]
			}
			if s.source[o] || p.stamp[o] == gen {
				continue
			}
			gd, dr := gm, p.drop[m]
			if lg := s.limitGood(d, v); lg < gd {
				gd, dr = lg, d
			}
			r := p.dist[m] + p.res[d]
			if gd > p.good[o] || (gd == p.good[o] && r < p.dist[o]) {
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
	fully := NMOS
	if v == V1 {
		fully = PMOS
	}
	o0 := len(p.sorder)
	for _, d := range cp.devs {
		if k := nl.devKind[d]; nl.devCap[d] < lvl || (k != fully && k < PullUp) {
			continue
		}
		a, b := nl.devA[d], nl.devB[d]
		o := b
		if s.source[b] {
			o, a = a, b
		}
		if !s.source[a] || s.source[o] || s.val[a] != v {
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
			if k := nl.devKind[d]; s.cond[d] != On || nl.devCap[d] < lvl || (k != fully && k < PullUp) {
				continue
			}
			o := nl.devA[d]
			if o == m {
				o = nl.devB[d]
			}
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
		v := s.volts[n]
		if math.IsNaN(v) {
			switch s.val[n] {
			case V0:
				v = 0
			case V1:
				v = p.vdd
			}
		}
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
		in := &p.info[n]
		before := in.Before // kept while the node stays floating after its last sharing
		if in.How != howCharge {
			before = math.NaN()
		}
		if shared {
			p.shareMark[n] = s.settleID
			before = s.volts[n]
		}
		*in = noPhysRec()
		in.Before = before
		if keepX(g, i) {
			g.nvolts[i] = math.NaN()
			continue
		}
		in.How = howCharge
		if !shared { // nothing to share: the node keeps its own charge and value
			g.nvolts[i] = p.good[n]
			s.shared[n] = s.shared[n] || p.shareMark[n] == s.settleID // it shared earlier in this settle
			continue
		}
		g.nval[i], g.nvolts[i] = val, volts
		s.shared[n] = true
	}
}

// physSourceVolts is a driven source's voltage: 0 or vdd, NaN for X or in ideal mode.
func (s *Sim) physSourceVolts(v Value) float64 {
	if s.mode != Physical || v == VX {
		return math.NaN()
	}
	if v == V1 {
		return s.nl.Tech.Vdd
	}
	return 0
}

// physWarnings adds physical-mode warnings for node n after a settle.
func (s *Sim) physWarnings(n int, add func(kind WarnKind, n, d, o int)) {
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
	case howDivider:
		win, lose, _, _ := s.dividerInfo(int32(n))
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
func (s *Sim) partialOn(n int, add func(kind WarnKind, n, d, o int)) {
	nl := s.nl
	vg := s.volts[n]
	if math.IsNaN(vg) {
		return
	}
	t := &nl.Tech
	sp := math.Sqrt(t.Phi)
	for _, d := range nl.gateDev[nl.gateStart[n]:nl.gateStart[n+1]] {
		if s.cond[d] != Off {
			continue
		}
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
	if in.How == howDivider {
		in.Up, in.Down, in.RUp, in.RDown = s.dividerInfo(int32(n))
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

// physDeviceLimit returns device d's gate voltage as physical mode uses it
// and the level it passes at most (nMOS: highest 1, pMOS: lowest 0); NaN
// for pulls and in ideal mode.
func (s *Sim) physDeviceLimit(d int) (vg, limit float64) {
	if s.mode != Physical || s.nl.devKind[d] >= PullUp {
		return math.NaN(), math.NaN()
	}
	return s.gateVolts(int32(d)), s.passLimit(int32(d))
}

// physResistance returns device d's effective on-resistance in ohms (NaN in ideal mode).
func (s *Sim) physResistance(d int) float64 {
	if s.mode != Physical {
		return math.NaN()
	}
	return s.phys.res[d]
}

// physFastPath lets physSingle take the groups it can, and limitFor use
// limRail (tests turn it off to compare against the general path).
var physFastPath = true

// physSingle is physGroup for the commonest group: one node, no device of
// unknown state, sources of one value (or an X source alone, or none). It
// gives exactly what physParts and physLevel or physCharge and physDelay
// give for such a group, without their per-part scratch, searches and heap:
// with one node every path is a single device to a source. It reports
// false, having done nothing, for a group it does not take.
func (s *Sim) physSingle(g *group) bool {
	has := g.srcHas
	if len(g.nodes) != 1 || g.hasUnknown || (has[VX] && (has[V0] || has[V1])) || (has[V0] && has[V1]) {
		return false
	}
	nl := s.nl
	p := &s.phys
	n := g.nodes[0]
	in := &p.info[n]
	p.fast, p.fdel = true, math.NaN()
	switch {
	case !has[V0] && !has[V1] && !has[VX]: // floating: a lone node shares with nothing (physCharge)
		v := s.volts[n]
		if math.IsNaN(v) {
			switch s.val[n] {
			case V0:
				v = 0
			case V1:
				v = p.vdd
			}
		}
		before := in.Before
		if in.How != howCharge {
			before = math.NaN()
		}
		*in = noPhysRec()
		in.How, in.Before = howCharge, before
		g.nvolts[0] = v
		s.shared[n] = s.shared[n] || p.shareMark[n] == s.settleID
		p.fdel = 0 // the delay tree's root
		return true
	case has[VX]:
		g.nvolts[0] = math.NaN()
		*in = noPhysRec()
		return true
	}
	v, full, fully := V0, 0.0, NMOS
	if has[V1] {
		v, full, fully = V1, p.vdd, PMOS
	}
	degr := false
	for _, d := range g.devs {
		if k := nl.devKind[d]; (v == V1 && k == NMOS) || (v == V0 && k == PMOS) {
			degr = true
			break
		}
	}
	if !degr { // the least-resistance device to a source of the node's value sets the delay (delayTree)
		*in = noPhysRec()
		s.decideLevel(g, 0, v, full, -1)
		if g.nval[0] != v {
			return true
		}
		dist, par := math.Inf(1), int32(-1)
		for _, d := range g.devs {
			a, b := nl.devA[d], nl.devB[d]
			if s.source[b] {
				a, b = b, a
			}
			if !s.source[a] || s.source[b] || s.val[a] != v {
				continue
			}
			if r := p.res[d]; r < dist {
				dist, par = r, d
			}
		}
		if par >= 0 {
			p.fdel = dist * nl.nodeCap[n]
		}
		return true
	}
	lvl := g.nstr[0]
	if lvl < Weak {
		*in = noPhysRec()
		g.nvolts[0] = math.NaN()
		return true
	}
	// fullSearch: the least-resistance device passing v fully.
	good, drop, par, dist := -1.0, int32(-1), int32(-1), math.Inf(1)
	for _, d := range g.devs {
		if k := nl.devKind[d]; nl.devCap[d] < lvl || (k != fully && k < PullUp) {
			continue
		}
		a, o := nl.devA[d], nl.devB[d]
		if s.source[o] {
			o, a = a, o
		}
		if !s.source[a] || s.source[o] || s.val[a] != v {
			continue
		}
		if r := p.res[d]; r < dist {
			good, par, dist = p.vdd, d, r
		}
	}
	if good < 0 { // levelSearch: the best level, ties to the lower resistance
		for _, d := range g.devs {
			if nl.devCap[d] < lvl {
				continue
			}
			a, b := nl.devA[d], nl.devB[d]
			switch {
			case s.source[a] && !s.source[b] && s.val[a] == v:
			case s.source[b] && !s.source[a] && s.val[b] == v:
			default:
				continue
			}
			gd, dr := p.vdd, int32(-1)
			if lg := s.limitGood(d, v); lg < gd {
				gd, dr = lg, d
			}
			if r := p.res[d]; gd > good || (gd == good && r < dist) {
				good, drop, par, dist = gd, dr, d, r
			}
		}
	}
	old := *in
	*in = noPhysRec()
	level, ldrop := full, int32(-1)
	if good >= 0 {
		level, ldrop = good, drop
		if v == V0 {
			level = p.vdd - good
		}
	}
	if prev := s.volts[n]; ldrop >= 0 && ((v == V1 && prev > level) || (v == V0 && prev < level)) {
		level, ldrop = prev, -1 // charge retention, as in physLevel
		if prev != full && old.How == howLevel {
			ldrop = old.Drop
		}
		if prev != full && ldrop < 0 {
			ldrop = drop
		}
	}
	s.decideLevel(g, 0, v, level, ldrop)
	if g.nval[0] == v { // the search's tree (searchDelay)
		p.fdel = 0
		if par >= 0 {
			p.fdel = s.edgeResistance(par) * nl.nodeCap[n]
		}
	}
	return true
}

// fedBy returns the end of device d that is not a source when its other end
// is a source of value v: where v enters a part through d.
func (s *Sim) fedBy(d int32, v Value) (int32, bool) {
	a, b := s.nl.devA[d], s.nl.devB[d]
	switch {
	case s.source[a] && !s.source[b] && s.val[a] == v:
		return b, true
	case s.source[b] && !s.source[a] && s.val[b] == v:
		return a, true
	}
	return -1, false
}
