package switchsim

import (
	"math"
	"slices"
)

// physSingle is physGroup for the commonest group: one node and no device
// of unknown state or partly on. It gives exactly what physParts and
// physLevel, physCharge or physFight and physDelay give for such a group,
// without their per-part scratch, searches and heap: with one node every
// path is a single device to a source. It shares their rules (keepCharge,
// retained, through, better, solveFight, loneDelay) and reports false,
// having done nothing, for a group it does not take. physAlone takes most
// of these groups before they are collected; physSingle takes the rest (a
// fight, and the groups of a Sim whose physAlone is off).
func (s *Sim) physSingle(g *group) bool {
	has := g.srcHas
	if len(g.nodes) != 1 || g.hasUnknown || (s.phys.nLeak > 0 && s.phys.leakAt[g.nodes[0]] > 0) {
		return false
	}
	p := &s.phys
	n := g.nodes[0]
	p.fast, p.fdel = true, math.NaN()
	if memoFight(has) { // a fight (physFight)
		p.gidx[n], p.li[n] = 0, 0
		s.solveFight(g, g.nodes, g.devs, nil, has)
		p.fdel = s.loneDelay(g, n, g.nval[0])
		return true
	}
	o := loneOut{val: g.nval[0], str: g.nstr[0], state: g.nstate[0]}
	shared := s.loneEstimate(n, g.devs, has, &o)
	if shared {
		s.nflag[n] |= nfShared
	}
	g.nval[0], g.nstate[0], g.nvolts[0] = o.val, o.state, o.volts
	p.info[n], p.fdel = o.rec, o.fdel
	return true
}

// loneOut is the estimate of a lone node: its result (the ideal
// resolution's, which the estimate may change), voltage and record, and
// the delay of its change.
type loneOut struct {
	val   Value
	str   Strength
	state State
	volts float64
	rec   physRec
	fdel  float64
}

// loneEstimate is physSingle's estimate of lone node n, not a fight, whose
// devices devs (each on, from a source of a value in has to n) brought it
// to o's value, strength and state: floating (physCharge), reached by X
// alone, or driven by one value (loneDriven). It reads the node's record
// and voltage, writes only o, and reports whether the node shared charge
// earlier in this settle (nfShared: keepCharge).
func (s *Sim) loneEstimate(n int32, devs []int32, has [3]bool, o *loneOut) bool {
	switch {
	case !has[V0] && !has[V1] && !has[VX]:
		return s.loneFloating(n, o)
	case has[VX]:
		o.volts, o.fdel, o.rec = math.NaN(), math.NaN(), noPhysRec()
		return false
	}
	v := V0
	if has[V1] {
		v = V1
	}
	s.loneDriven(n, devs, v, o)
	return false
}

// loneFloating is loneEstimate for a node that floats: a lone node shares
// with nothing (physCharge).
func (s *Sim) loneFloating(n int32, o *loneOut) bool {
	p := &s.phys
	o.rec = noPhysRec()
	if in := &p.info[n]; in.How == howCharge { // floatRecord: the report of its last sharing is kept
		o.rec.Before = in.Before
	}
	o.rec.How = howCharge
	o.volts, o.fdel = s.storedVolts(n), 0 // the delay tree's root
	return p.shareMark[n] == s.settleID
}

// loneDriven is loneEstimate for a node driven by v alone (physLevel).
func (s *Sim) loneDriven(n int32, devs []int32, v Value, o *loneOut) {
	nl := s.nl
	p := &s.phys
	degr := false
	// with the search for a drop, loneDelay's: the least-resistance device fed by v
	dist, par := math.Inf(1), int32(-1)
	for _, d := range devs {
		if k := nl.devKind[d]; k < PullUp && !s.passesFully(d, v) {
			degr = true
		}
		if _, ok := s.fedBy(d, v); ok && p.res[d] < dist {
			dist, par = p.res[d], d
		}
	}
	s.loneLevel(n, devs, v, degr, dist, par, o)
}

// loneLevel is loneDriven once it has looked at every device: whether one
// can drop v (degr), and the least resistance dist, through device par
// (-1: none), from a source of value v.
func (s *Sim) loneLevel(n int32, devs []int32, v Value, degr bool, dist float64, par int32, o *loneOut) {
	nl := s.nl
	p := &s.phys
	o.volts, o.fdel, o.rec = math.NaN(), math.NaN(), noPhysRec()
	if !degr { // the least-resistance device to a source of the node's value sets the delay (delayTree)
		if p.fullHolds[v] { // levelOut's verdict on the full level, worked out once (physInit)
			o.volts, o.rec.How = p.full(v), howLevel
		} else {
			p.levelOut(v, p.full(v), -1, o)
		}
		if o.val == v && par >= 0 {
			o.fdel = dist * nl.capOf(int(n))
		}
		return
	}
	if o.str < Weak {
		return
	}
	lvl := Weak // every driving path counts (physLevel)
	// fullSearch: the least-resistance device passing v fully.
	good, drop, par, dist := -1.0, int32(-1), int32(-1), math.Inf(1)
	for _, d := range devs {
		if nl.devCap[d] < lvl || !s.passesFully(d, v) {
			continue
		}
		if _, ok := s.fedBy(d, v); ok && p.res[d] < dist {
			good, par, dist = p.vdd, d, p.res[d]
		}
	}
	if good < 0 { // levelSearch: the best level, ties to the lower resistance
		for _, d := range devs {
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
	level, ldrop = s.retained(n, v, level, ldrop, p.info[n])
	p.levelOut(v, level, ldrop, o)
	if o.val == v { // the search's tree (searchDelay)
		o.fdel = 0
		if par >= 0 {
			o.fdel = s.edgeResistance(par) * nl.capOf(int(n))
		}
	}
}

// levelOut is decideLevel for a lone node's estimate o.
func (p *physState) levelOut(v Value, level float64, drop int32, o *loneOut) {
	o.volts = level
	o.rec.How, o.rec.Drop = howLevel, drop
	var lost Value
	o.val, o.state, lost = p.levelDecided(v, level, drop, o.val, o.state)
	if lost != VX {
		o.rec.Lost = lost
	}
}

// physAlone solves seed's group in physical mode where it is seed alone,
// with no device of unknown state or partly on: every device not off runs
// from a source to seed, or none does (an inverter's output, a pull's node,
// a floating node, a ratioed stage's fight). Without collecting the group's
// lists, it gives exactly what solveGroup's collection, resolve
// (resolveSingle), physGroup (physSingle, or for a fight the group memo's
// entry; physConverge) and commit (with physDelay) give for such a group;
// it reports false, having changed nothing, for any other group, for a
// fight the memo does not hold, and where the general path is forced
// (physical or ideal).
func (s *Sim) physAlone(seed int32) bool {
	var o loneOut
	flags, kind := s.aloneEstimate(seed, &o)
	switch kind {
	case aloneNot:
		return false
	case aloneFight:
		return s.aloneFight(seed, flags, &o)
	}
	// solveGroup's marks and logs, the results, then commit's
	p := &s.phys
	s.takeAlone(seed)
	s.nflag[seed] = flags
	p.info[seed] = o.rec
	s.aloneCommit(seed, o.val, o.str, o.state, o.volts, o.fdel)
	return true
}

// takeAlone does for seed what solveGroup's collection (and solveAlone)
// does for a node: it marks it taken in this round, logs it before its
// solve and marks it solved in this settle.
func (s *Sim) takeAlone(seed int32) {
	s.mark[seed].round = s.stamp()
	s.logNode(seed)
	if s.rec != nil && s.mark[seed].touch != s.settleID {
		s.touch(seed)
	}
	s.ana.visits++
}

// aloneCommit is physAlone's physConverge and commit, the delay fdel.
func (s *Sim) aloneCommit(seed int32, v Value, st Strength, state State, volts, fdel float64) {
	if int(s.roundNo-s.runStart) > s.limit/2 {
		s.convergeNode(seed, v, st, state, volts)
	}
	if s.write(seed, v, st, state, volts) {
		s.phys.info[seed].Delay = fdel
		if rec := s.rec; rec != nil && rec.delays {
			rec.delay = append(rec.delay, fdel)
		}
	}
}

// aloneFight is physAlone for a fight, o holding the ideal resolution and
// flags its flags: where the group memo holds the solve of seed's group
// from this state (memoLook), it writes that entry's result. It reports
// false, having changed nothing, where the memo does not.
func (s *Sim) aloneFight(seed int32, flags uint8, o *loneOut) bool {
	e := s.aloneEntry(seed, o)
	if e == nil {
		return false
	}
	s.takeAlone(seed)
	s.nflag[seed] = flags
	v, st, state, volts := s.replayNode(e, 0, seed)
	s.aloneCommit(seed, v, st, state, volts, math.Float64frombits(e.out(0)[outDelay]))
	return true
}

// aloneEntry is memoLook's look-up for seed's group, a fight whose ideal
// resolution is o's, its devices in s.g.devs: the entry that holds its
// solve (the look-up noted as a hit), nil where none does.
func (s *Sim) aloneEntry(seed int32, o *loneOut) *memoEntry {
	m := &s.phys.memo
	si := m.slot[seed]
	if m.off || m.vertex != 0 || si < 0 || len(s.g.devs) > memoMaxDevs {
		return nil
	}
	nodes, nval, nstr, nstate := [1]int32{seed}, [1]Value{o.val}, [1]Strength{o.str}, [1]State{o.state}
	if !s.memoKey(nodes[:], s.g.devs, s.aloneSources(seed), nval[:], nstr[:], nstate[:], true) {
		return nil
	}
	return m.slots[si].find(m.key)
}

// aloneSources lists, in s.g's scratch, the sources at the other ends of
// seed's devices in s.g.devs (aloneEstimate's list), in the order
// solveGroup collects them.
func (s *Sim) aloneSources(seed int32) []int32 {
	srcs := s.g.srcs[:0]
	for _, d := range s.g.devs {
		if o := s.nl.other(d, seed); !slices.Contains(srcs, o) {
			srcs = append(srcs, o)
		}
	}
	s.g.srcs = srcs // (scratch: solveGroup starts the list afresh)
	return srcs
}

// What aloneEstimate makes of a group.
const (
	aloneNot   = iota // not seed alone, or the general path is forced
	aloneDone         // estimated into o
	aloneFight        // a fight: o holds the ideal resolution alone
)

// aloneEstimate works out physAlone's result for seed into o and returns
// its flags (nodeFlags) and what physAlone can do with the group
// (aloneNot, aloneDone, aloneFight); it changes nothing but scratch. It is
// resolveSingle and loneEstimate in one pass over seed's devices, with
// loneDriven's look at them.
func (s *Sim) aloneEstimate(seed int32, o *loneOut) (uint8, int) {
	nl := s.nl
	p := &s.phys
	if p.slow || p.noAlone || s.slowIdeal || (p.nLeak > 0 && p.leakAt[seed] > 0) {
		return 0, aloneNot
	}
	in := arrival{nl.nodeCharge[seed], s.val[seed], 1 << s.val[seed]}
	var has uint8   // the values of the boundary's sources, bit 1<<value (group.srcHas)
	var kinds uint8 // the kinds of the devices on, bit 1<<kind
	// for each value, the least-resistance device from a source of it (loneDriven)
	dist, par := [2]float64{math.Inf(1), math.Inf(1)}, [2]int32{-1, -1}
	devs := s.g.devs[:0] // (scratch: solveGroup starts the list afresh)
	for _, d := range nl.chanDev[nl.chanStart[seed]:nl.chanStart[seed+1]] {
		c := s.cond[d]
		if c == Off {
			continue
		}
		o := nl.other(d, seed)
		if c == Unknown || o == seed || !s.source[o] {
			return 0, aloneNot // a device of unknown state, from the node to itself, or to another node
		}
		sv := s.val[o]
		has |= 1 << sv
		kinds |= 1 << nl.devKind[d]
		in.add(nl.pass(d, Supply), sv)
		if sv != VX && p.res[d] < dist[sv] {
			dist[sv], par[sv] = p.res[d], d
		}
		devs = append(devs, d)
	}
	s.g.devs = devs
	// single's result
	const h0, h1, hX = 1 << V0, 1 << V1, 1 << VX
	v := in.v
	contested := (v == V0 && has&(h1|hX) != 0) || (v == V1 && has&(h0|hX) != 0)
	o.val, o.str, o.state = v, in.best, in.state(contested)
	flags := nodeFlags(in.arrived&3 == 3, contested, false)
	switch {
	case has&(h0|h1) == h0|h1 || (has&hX != 0 && has != hX): // a fight (memoFight)
		return flags, aloneFight
	case has == 0:
		if s.loneFloating(seed, o) {
			flags |= nfShared
		}
	case has == hX:
		o.volts, o.fdel, o.rec = math.NaN(), math.NaN(), noPhysRec()
	default:
		dv := V0 // the value that drives it, and the kind of device that can drop it
		drops := DeviceKind(PMOS)
		if has == h1 {
			dv, drops = V1, NMOS
		}
		s.loneLevel(seed, devs, dv, kinds&(1<<drops) != 0, dist[dv], par[dv], o)
	}
	return flags, aloneDone
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
