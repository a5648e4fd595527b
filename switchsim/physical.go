package switchsim

import "math"

// Physical mode (DEVELOPERS.md, physical mode). The solver resolves every group by strength
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
//   - with sources of both values, a fight: a resistor network, solved for
//     the node voltages, decides each node by VIL/VIH (L/H, or X inside the
//     band); see physical_fight.go;
//   - with no source: if charges at different levels meet they share,
//     sum(C V) / sum(C), and the value is decided by VIL/VIH; otherwise each
//     node keeps its charge and value.
//
// Where the group has devices of unknown state and the ternary method made a
// node X, the node stays X with an unknown voltage. A device's limit uses
// its gate's voltage as of the start of the round (physGateMoved records it),
// so levels drop once per gate cascade.
//
// The files: this one holds the state and splits groups into parts;
// physical_level.go the parts of one value, physical_charge.go the floating
// ones, physical_fight.go the fights, physical_single.go the one-node fast
// path (the same rules without the per-part scratch), physical_warnings.go
// the warnings and what the explanation reads, physical_delay.go the delays.
// In ideal mode every hook returns at once and volts stay NaN.

// physHow says how a node's estimate was made.
type physHow uint8

const (
	howNone   physHow = iota // no estimate: ideal mode, a source, or X kept from the ternary method
	howLevel                 // driven by one value: best path level
	howFight                 // a fight: driven by both values, its DC point solved (physical_fight.go)
	howLeak                  // driven by one value and moved by partly-on devices: solved as a fight
	howCharge                // floating: charge conservation
)

// physNode is what physical mode knows about one node after its last solve.
// It is kept per node for warnings, snapshots and the explanation (physInfo).
type physNode struct {
	Volts float64 // the estimate; NaN where unknown
	How   physHow
	// Drop is the device that caused the last threshold drop on the best
	// path of the winning value (howLevel), -1 for a full level.
	Drop int32
	// Up and Down are, for a contested node (howFight), the devices that
	// carry the largest current into the node from the 1 side and out of it
	// to the 0 side; -1 where none. RUp and RDown are the node's effective
	// resistances to the 1 side and to the 0 side (ohms) such that
	// Volts = vdd RDown / (RUp + RDown): for a plain divider, the two branch
	// resistances; NaN unless howFight. physInfo fills all four (they are
	// worked out on demand from the present voltages, see fightInfo).
	Up, Down   int32
	RUp, RDown float64
	Amps       float64 // the current through a node of a fight, A
	// Before is the voltage the node held before it last shared charge
	// (howCharge with a charge-sharing event), NaN otherwise.
	Before float64
	// Delay is the Elmore delay estimate of the node's last change, seconds.
	Delay float64
}

// physRec is the part of physNode kept per node between settles; the rest
// is worked out when asked for (physInfo). The group memo writes every
// field into its entries (memoRecord, memoReplay): a new field goes there too.
type physRec struct {
	How physHow
	// Lost is the value whose level the estimate lost (the node is X), VX
	// where none was: a degraded path's value, or a stored value that
	// charge sharing took out of its band.
	Lost Value
	// Vertex is set where the vertex solve decided the node
	// (physical_vertex.go): its value holds at every on/off assignment of
	// the devices of unknown state, its level is the worst of them.
	Vertex bool
	Drop   int32
	// Up and Down are, for a node of a fight, the devices carrying the most
	// current into it from the 1 side and out of it to the 0 side, as the
	// solve left them (-1: none); upLater where fightInfo must work them out.
	Up, Down      int32
	Before, Delay float64
}

// upLater marks a fight's devices as not recorded by the solve.
const upLater = -2

func noPhysRec() physRec { return blankRec }

// blankRec is the record of a node with no estimate, made once: a copy is
// cheaper than building it with its NaNs at every solve.
var blankRec = physRec{Lost: VX, Drop: -1, Up: -1, Down: -1, Before: math.NaN(), Delay: math.NaN()}

// physState is the Sim's physical-mode state. Every slice is allocated in
// physInit; the scratch grows on first use and is reused afterwards.
type physState struct {
	vil, vih, vm, vdd float64
	// fullHolds[v]: the full level of v holds v (levelRange), as it does
	// unless the design moves VIL or VIH past a rail
	fullHolds [2]bool

	// per device
	res []float64 // effective on-resistance, ohms (the delay estimate)
	con []float64 // 1 / res, siemens
	dv  []physDev // what a fight reads of a device, together
	// pass limits of a device gated by a source, by kind and the source's value
	limRail [2][2]float64
	ring    []int32 // the devices between the same two terminals, as a ring (a transmission gate's halves)

	// per node, kept between settles
	info      []physRec
	watch     []bool       // outputs and the nodes Watch named: their levels matter
	shareMark []uint32     // settle stamp of the last charge-sharing event
	fightV    []fightStart // where the node's next fight solve starts

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

	// Partly-on devices (off by logic, but the gate's voltage passes the
	// threshold from a rail): leak[d] marks one, leakAt[n] counts those whose
	// channel touches node n, so that a part without any is not searched.
	leak    []bool
	leakAt  []int32
	nLeak   int     // how many devices are partly on: none, and partialOn has nothing to look for
	cl      []int32 // the leaking devices of the parts, part after part
	anyLeak bool    // the group being solved touches a partly-on device

	comps  []physComp
	cn     []int32 // nodes of the parts, part after part (with devices of unknown state)
	ce     []int32 // devices that are on, part after part
	heap   physHeap
	order  []int32
	sorder []int32 // level searches' visiting order, part after part
	dq     []int32 // fightInfo's queue
	net    physNet
	share  physShareScratch
	shLo   []float64 // shareCharge's voltages with unknown charges at 0
	shHi   []float64 // and at vdd

	// physSingle's result for the group just solved: fast is set when it
	// took the group, fdel is the delay of its node's change.
	fast bool
	fdel float64

	conv physConvergeState // converging rounds (physical_converge.go)
	memo physMemo          // the group memo (physical_memo.go)
	vert vertexState       // the vertex solve of devices of unknown state (physical_vertex.go)

	// slow turns the one-node fast path (physSingle) and the precomputed
	// rail limits and conductances off, so that tests can compare the
	// general path with them (export_test.go).
	slow bool
	// noAlone turns physAlone alone off, so that tests can compare it with
	// the group's path (export_test.go).
	noAlone bool
	// logAll keeps the undo log on every step that race analysis may look
	// back on, the steps settlesAlone would spare included, so that tests
	// can compare the two (export_test.go).
	logAll bool
}

// physDev is what physical mode keeps per device and reads together.
type physDev struct {
	gv   float64 // the gate's voltage at the start of the round it last changed
	lim  float64 // pass limit for gv (nMOS: PassHigh, pMOS: PassLow), kept by physGateMoved
	beta float64 // the fight's device equations: k' W / L of a transistor (A/V^2), 1 / R of a pull (S)
}

// physComp is one part of a group: nodes joined by devices that are on.
type physComp struct {
	nodes []int32 // in g.nodes or cn
	devs  []int32 // devices that are on, in g.devs or ce
	leaks []int32 // partly-on devices from its nodes to a source or to each other, in cl
	has   [3]bool // values of the sources it touches
	degr  [2]bool // it holds a device that can degrade a 0 (pMOS) / a 1 (nMOS)
	tree  [2]bool // the delay tree for value v is built
	// the level search's tree serves as the delay tree of value sval
	stree  bool
	sval   Value
	o0, o1 int32 // its nodes in the order reached, sorder[o0:o1]
}

type physSnapshot struct {
	dv     []physDev
	fightV []fightStart
	info   []physRec
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
	for v := V0; v <= V1; v++ {
		val, _, _ := p.levelRange(v, p.full(v), p.full(v))
		p.fullHolds[v] = val == v
	}
	p.net.denseMax = physDenseMax
	nn, nd := nl.NumNodes(), nl.NumDevices()
	p.res, p.con, p.dv = make([]float64, nd), make([]float64, nd), make([]physDev, nd)
	p.leak, p.leakAt = make([]bool, nd), make([]int32, nn)
	p.net.init(t)
	p.limRail = [2][2]float64{{t.PassHigh(0), t.PassHigh(t.Vdd)}, {t.PassLow(0), t.PassLow(t.Vdd)}}
	p.dmark = make([]uint32, nd)
	p.ring = make([]int32, nd)
	last := make(map[[2]int32]int32, nd) // channel terminals -> a device between them
	for d := 0; d < nd; d++ {
		p.res[d] = deviceResistance(nl, d)
		p.con[d] = 1 / p.res[d]
		p.dv[d].beta = deviceBeta(nl, d)
		p.dv[d].gv = math.NaN()
		p.dv[d].lim = s.limitFor(int32(d))
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
	p.watch = make([]bool, nn)
	for _, o := range nl.outputs {
		p.watch[o] = true
	}
	p.fightV = make([]fightStart, nn)
	for n := range p.fightV {
		p.fightV[n] = noFightStart()
	}
	p.gidx, p.nc, p.li = make([]int32, nn), make([]int32, nn), make([]int32, nn)
	p.drop, p.par = make([]int32, nn), make([]int32, nn)
	p.good, p.dist, p.sub = make([]float64, nn), make([]float64, nn), make([]float64, nn)
	p.tdel[0], p.tdel[1] = make([]float64, nn), make([]float64, nn)
	p.sv[0], p.sv[1] = make([]Strength, nn), make([]Strength, nn)
	p.stamp = make([]uint32, nn)
	p.conv.init(nn)
	p.memo.init(nn)
}

func noPhysNode() physNode {
	nan := math.NaN()
	return physNode{Volts: nan, Drop: -1, Up: -1, Down: -1, RUp: nan, RDown: nan, Amps: nan, Before: nan, Delay: nan}
}

func (s *Sim) physSave() physSnapshot {
	if s.mode != Physical {
		return physSnapshot{}
	}
	p := &s.phys
	return physSnapshot{append([]physDev(nil), p.dv...), append([]fightStart(nil), p.fightV...), append([]physRec(nil), p.info...)}
}

func (s *Sim) physRestore(sn physSnapshot) {
	if s.mode != Physical || sn.dv == nil {
		return
	}
	p := &s.phys
	copy(p.dv, sn.dv)
	copy(p.fightV, sn.fightV)
	copy(p.info, sn.info)
	clear(p.leakAt)
	p.nLeak = 0
	for d := range p.dv {
		p.dv[d].lim = s.limitFor(int32(d))
		p.leak[d] = false
		s.setLeak(int32(d), s.cond[d] == Off && s.leakyGate(int32(d), p.dv[d].gv))
	}
}

// physLeak reports whether device d, off by logic, is partly on: a source
// at its channel then still reaches the nodes on the other side.
func (s *Sim) physLeak(d int32) bool { return s.mode == Physical && s.phys.leak[d] }

// leakyGate reports whether a gate at vg lets device d conduct from a
// channel terminal at the rail it is body-tied to (nMOS: vg > Vtn, pMOS:
// vdd - vg > |Vtp|): the widest condition for a partly-on device, since the
// source at the rail has the largest Vgs and no body effect.
func (s *Sim) leakyGate(d int32, vg float64) bool { return s.leakyAt(s.nl.devKind[d], vg) }

// leakyAt is leakyGate for a device of kind k.
func (s *Sim) leakyAt(k DeviceKind, vg float64) bool {
	switch k {
	case NMOS:
		return vg > s.nl.Tech.Vtn
	case PMOS:
		return s.phys.vdd-vg > s.nl.Tech.Vtp
	}
	return false
}

// setLeak records whether device d is partly on.
func (s *Sim) setLeak(d int32, on bool) {
	p := &s.phys
	if p.leak[d] == on {
		return
	}
	p.leak[d] = on
	inc := int32(1)
	if !on {
		inc = -1
	}
	p.nLeak += int(inc)
	a, b := s.nl.devA[d], s.nl.devB[d]
	p.leakAt[a] += inc
	if b != a {
		p.leakAt[b] += inc
	}
}

// physGateMoved records device d's gate voltage as of the start of this
// round (the solver calls it for every device whose gate node changed) and
// reports whether the device must be re-solved because that voltage moved:
// a device not off, since its pass limit and its current follow the gate,
// and a device off by logic that is or was partly on.
func (s *Sim) physGateMoved(d int32) bool {
	p := &s.phys
	k := s.nl.devKind[d]
	gn := s.nl.devGate[d]
	v := s.volts[gn]
	off := conduction(k, s.val[gn]) == Off
	pd := &p.dv[d]
	old := pd.gv
	was := p.leak[d]
	if v == old || (math.IsNaN(v) && math.IsNaN(old)) {
		if was != (off && s.leakyAt(k, v)) { // it switched between on and partly on
			s.setLeak(d, !was)
			return true
		}
		return false
	}
	pd.gv = v
	switch { // limitFor, its commonest cases without the call
	case k > PMOS || p.slow:
		pd.lim = s.limitFor(d)
	case v == 0:
		pd.lim = p.limRail[k][V0]
	case v == p.vdd:
		pd.lim = p.limRail[k][V1]
	default:
		pd.lim = s.limitFor(d)
	}
	leaky := off && s.leakyAt(k, v)
	if leaky != was {
		s.setLeak(d, leaky)
	}
	return voltsMoved(old, v) && (!off || was || leaky)
}

// physGroup adds the voltage estimates to the ideal resolution of g: at
// every vertex of its devices of unknown state where the ternary pass left
// a node X (physical_vertex.go), else at once.
func (s *Sim) physGroup(g *group) {
	if s.mode != Physical {
		return
	}
	p := &s.phys
	p.vert.done = false
	switch {
	case !g.hasUnknown || !s.vertexWanted(g):
		s.physSolve(g)
	case s.vertexMemoLook(g): // solved at its vertices from this state before
		p.fast, p.memo.hit, p.memo.rec = false, nil, nil
		p.vert.done = true
	default:
		s.physSolve(g)
		s.physVertices(g)
	}
	s.physConverge(g)
}

// physSolve is physGroup's estimate of g, its devices' states known or not.
func (s *Sim) physSolve(g *group) {
	p := &s.phys
	if len(g.nodes) == 1 && !memoFight(g.srcHas) { // a lone node driven by one value or floating: memoLook leaves it to physSingle
		p.memo.hit, p.memo.rec = nil, nil
	} else if s.memoLook(g) {
		p.fast = false
		return
	}
	if !p.slow && s.physSingle(g) {
		s.memoRecord(g)
		return
	}
	p.fast = false
	p.next()
	s.physParts(g)
	for c := range p.comps {
		cp := &p.comps[c]
		switch {
		case cp.has[V0] != cp.has[V1] && !cp.has[VX] && p.anyLeak && s.partLeaks(g, int32(c)):
			s.physFight(g, int32(c)) // partly-on devices pull on it
		case !cp.has[V0] && !cp.has[V1] && !cp.has[VX]:
			s.physCharge(g, int32(c))
		case cp.has[VX] && !cp.has[V0] && !cp.has[V1]:
			for _, n := range cp.nodes {
				i := s.groupIndex(g, n)
				g.nvolts[i] = math.NaN()
				s.phys.info[n] = noPhysRec()
			}
		case cp.has[V0] && cp.has[V1], cp.has[VX]:
			if p.anyLeak {
				s.partLeaks(g, int32(c)) // partly-on devices join the fight
			}
			s.physFight(g, int32(c))
		case cp.has[V1]:
			s.physLevel(g, int32(c), V1)
		default:
			s.physLevel(g, int32(c), V0)
		}
	}
	s.memoRecord(g)
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
	p.cn, p.ce, p.sorder, p.cl = p.cn[:0], p.ce[:0], p.sorder[:0], p.cl[:0]
	if !g.hasUnknown {
		cp := physComp{nodes: g.nodes, devs: g.devs, has: g.srcHas}
		p.anyLeak = false
		for i, n := range g.nodes {
			p.gidx[n], p.nc[n], p.li[n] = int32(i), 0, int32(i)
			p.anyLeak = p.anyLeak || p.leakAt[n] > 0
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
	p.anyLeak = false
	for i, n := range g.nodes {
		p.gidx[n], p.nc[n] = int32(i), -1
		p.anyLeak = p.anyLeak || p.leakAt[n] > 0
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
				o := nl.other(d, m)
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
