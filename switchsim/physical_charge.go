package switchsim

import "math"

// physCharge estimates a floating part: its nodes share their charge
// (shareCharge: charge conservation, each pass device conducting only until
// its lower side reaches its limit, DEVELOPERS.md (physical mode)), and each node's value
// follows the one rule of levels (physState.level): the value the
// switch-level model gives it (the larger charge class wins) holds while
// its level does, and is lost (X) where the level left it; where that model
// has no value (equal classes, different values) the level decides, by
// VIL/VIH. The state stays Z. A node whose voltage is unknown may hold
// anything from 0 to vdd: the sharing is then worked out with it at both
// ends, and a node gets a value only if both ends give it, at the end
// nearer the band.
func (s *Sim) physCharge(g *group, c int32) {
	p := &s.phys
	cp := &p.comps[c]
	nodes := cp.nodes
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
	// Sharing happens when charges at different levels meet (1 mV apart),
	// or charge of an unknown level meets a known one. Only then is the
	// value decided afresh: a node that shares with nothing keeps what it
	// stores, so a lost level is never read back as the other value.
	shared := len(nodes) > 1 && (vmax-vmin > 1e-3 || (unknown > 0 && unknown < len(nodes)))
	var lo, hi []float64
	if shared {
		p.shLo = s.shareCharge(nodes, cp.devs, 0, p.shLo[:0])
		lo, hi = p.shLo, p.shLo
		if unknown > 0 {
			p.shHi = s.shareCharge(nodes, cp.devs, p.vdd, p.shHi[:0])
			hi = p.shHi
		}
	}
	for j, n := range nodes {
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
		val, volts, lost := p.levelRange(g.nval[i], lo[j], hi[j])
		in.Lost = lost
		g.nval[i], g.nvolts[i] = val, volts
		s.nflag[n] |= nfShared
	}
}

// shareCharge works out where the charges of a floating part settle, its
// nodes starting at their stored voltages (an unknown one at unknownAt), and
// returns the voltages by the nodes' order, appended to out. Devices that
// conduct across the whole range of voltages present (one that passes its
// level fully there, or the two halves of a transmission gate) join their
// nodes into one reservoir, V = sum(C V) / sum(C). Between reservoirs, an
// nMOS carries charge from the higher side only while the lower one is
// below its pass limit L (Tech.PassHigh of its gate), so the two end either
// equal or with the lower at L; a pMOS mirrors this (the higher side stops
// at its limit). Those transfers are repeated device by device until no
// charge moves (1e-12 V), at most 1000 times over: charge is conserved at
// every transfer and flows only downhill, so this settles (common practice).
func (s *Sim) shareCharge(nodes, devs []int32, unknownAt float64, out []float64) []float64 {
	nl := s.nl
	p := &s.phys
	k := len(nodes)
	sh := &p.share
	sh.root, sh.v, sh.c = grow(sh.root, k), grow(sh.v, k), grow(sh.c, k)
	vmin, vmax := math.Inf(1), math.Inf(-1)
	for j, n := range nodes {
		v := p.good[n]
		if math.IsNaN(v) {
			v = unknownAt
		}
		sh.root[j], sh.v[j], sh.c[j] = int32(j), v, nl.capOf(int(n))
		vmin, vmax = min(vmin, v), max(vmax, v)
	}
	// Voltages are kept about the lowest, so that nodes already at one
	// level keep it exactly.
	for j := range sh.v {
		sh.v[j] -= vmin
	}
	// Reservoirs: nodes joined by devices that conduct over [vmin, vmax].
	sh.clamps = sh.clamps[:0]
	for _, d := range devs {
		a, b := nl.devA[d], nl.devB[d]
		if a == b || s.source[a] || s.source[b] {
			continue
		}
		la, lb := p.li[a], p.li[b]
		if s.conductsAcross(d, vmin, vmax) {
			sh.union(la, lb)
		} else {
			sh.clamps = append(sh.clamps, d)
		}
	}
	// Each reservoir's charge and capacitance, kept at its root.
	for j := 0; j < k; j++ {
		if r := sh.find(int32(j)); r != int32(j) {
			q := sh.v[r]*sh.c[r] + sh.v[j]*sh.c[j]
			sh.c[r] += sh.c[j]
			sh.v[r] = q / sh.c[r]
		}
	}
	for sweep := 0; sweep < 1000 && len(sh.clamps) > 0; sweep++ {
		moved := 0.0
		for _, d := range sh.clamps {
			ra, rb := sh.find(p.li[nl.devA[d]]), sh.find(p.li[nl.devB[d]])
			if ra == rb {
				continue
			}
			if sh.v[ra] < sh.v[rb] {
				ra, rb = rb, ra // ra the higher side
			}
			ha, lb := sh.v[ra], sh.v[rb]
			ca, cb := sh.c[ra], sh.c[rb]
			lim := s.passLimit(d) - vmin
			x := (ca*ha + cb*lb) / (ca + cb)
			na, nb := x, x
			switch nl.devKind[d] {
			case NMOS: // conducts while the lower side is below lim
				if lb >= lim {
					continue
				}
				if x > lim {
					na, nb = ha-cb*(lim-lb)/ca, lim
				}
			case PMOS: // conducts while the higher side is above lim
				if ha <= lim {
					continue
				}
				if x < lim {
					na, nb = lim, lb+ca*(ha-lim)/cb
				}
			}
			moved = max(moved, math.Abs(na-ha), math.Abs(nb-lb))
			sh.v[ra], sh.v[rb] = na, nb
		}
		if moved < 1e-12 {
			break
		}
	}
	for j := 0; j < k; j++ {
		out = append(out, vmin+sh.v[sh.find(int32(j))])
	}
	return out
}

// conductsAcross reports whether device d, with the devices that are on
// between the same two nodes, conducts with both ends at any one voltage in
// [lo, hi]: an nMOS below its pass limit, a pMOS above its own.
func (s *Sim) conductsAcross(d int32, lo, hi float64) bool {
	p := &s.phys
	nLim, pLim := math.Inf(-1), math.Inf(1)
	for e := d; ; {
		if s.cond[e] == On {
			switch s.nl.devKind[e] {
			case NMOS:
				nLim = max(nLim, s.passLimit(e))
			case PMOS:
				pLim = min(pLim, s.passLimit(e))
			default:
				return true
			}
		}
		if e = p.ring[e]; e == d {
			break
		}
	}
	// Not conducting at x means nLim <= x <= pLim: conducting across the
	// range unless that interval meets it.
	return nLim > pLim || nLim > hi || pLim < lo
}

// physShareScratch is shareCharge's scratch: a union-find of the part's
// nodes into reservoirs with their voltages and capacitances.
type physShareScratch struct {
	root   []int32
	v, c   []float64
	clamps []int32 // devices between reservoirs that stop at their limit
}

func (sh *physShareScratch) find(j int32) int32 {
	for sh.root[j] != j {
		sh.root[j] = sh.root[sh.root[j]]
		j = sh.root[j]
	}
	return j
}

// union joins the reservoirs of a and b, the lower index as the root (so
// that the charges fold in node order).
func (sh *physShareScratch) union(a, b int32) {
	ra, rb := sh.find(a), sh.find(b)
	if ra > rb {
		ra, rb = rb, ra
	}
	sh.root[rb] = ra
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
	if s.phys.shareMark[n] == s.settleID {
		s.nflag[n] |= nfShared
	}
}
