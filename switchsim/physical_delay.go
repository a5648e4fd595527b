package switchsim

import "math"

// Delay estimates (DEVELOPERS.md, physical mode): the Elmore delay (Elmore 1948; Rubinstein,
// Penfield and Horowitz 1983) of each node change along its driving path.
// The driving paths of a part form a tree: for a node driven to v, the path
// of least resistance from the sources of value v through devices that are
// on. Then delay(n) = sum over the tree's resistances R on the way to n of
// R times the capacitance downstream of R (the subtree it feeds). A floating
// part is treated the same way from its largest node, the reservoir the
// others share charge with. Trees are built only when a node of the part
// changed, once per value.

// physDelay is the Elmore delay of the change of g.nodes[i], in seconds;
// NaN in ideal mode, for X and where no estimate was made.
func (s *Sim) physDelay(g *group, i int) float64 {
	if s.mode != Physical {
		return math.NaN()
	}
	p := &s.phys
	m := &p.memo
	if m.hit != nil { // the memo's entry holds it (physical_memo.go)
		d := math.Float64frombits(m.hit.out(i)[outDelay])
		p.info[g.nodes[i]].Delay = d
		return d
	}
	d := s.groupDelay(g, i)
	if m.rec != nil {
		m.rec.out(i)[outDelay] = math.Float64bits(d)
	}
	return d
}

// groupDelay is physDelay worked out from the group's solve.
func (s *Sim) groupDelay(g *group, i int) float64 {
	p := &s.phys
	n := g.nodes[i]
	in := &p.info[n]
	if p.vert.done {
		return in.Delay // each vertex's part set it (vertexSolve)
	}
	if p.fast {
		in.Delay = p.fdel
		return in.Delay
	}
	in.Delay = math.NaN()
	c := p.nc[n]
	v := g.nval[i]
	if c < 0 || in.How == howNone || (v == VX && in.How != howCharge) {
		return math.NaN()
	}
	if in.How == howCharge {
		v = V0 // one tree per floating part
	}
	cp := &p.comps[c]
	if !cp.tree[v] {
		if cp.stree && cp.sval == v && in.How == howLevel {
			s.searchDelay(c, v)
		} else {
			s.delayTree(c, v, in.How == howCharge)
		}
		cp.tree[v] = true
	}
	in.Delay = p.tdel[v][n]
	return in.Delay
}

// delayTree builds the least-resistance tree of part c from the sources of
// value v (or, floating, from its largest node) and the Elmore delay of
// every node on it into tdel[v].
func (s *Sim) delayTree(c int32, v Value, floating bool) {
	nl := s.nl
	p := &s.phys
	cp := &p.comps[c]
	nodes := cp.nodes
	tdel := p.tdel[v]
	inf := math.Inf(1)
	for _, n := range nodes {
		p.dist[n], p.par[n], p.sub[n], tdel[n] = inf, -1, nl.capOf(int(n)), math.NaN()
	}
	p.next()
	gen := p.gen
	h := &p.heap
	h.items = h.items[:0]
	if floating {
		root := nodes[0]
		for _, n := range nodes {
			if nl.capOf(int(n)) > nl.capOf(int(root)) {
				root = n
			}
		}
		p.dist[root] = 0
		h.push(0, root)
	} else {
		for _, d := range cp.devs {
			o, ok := s.fedBy(d, v)
			if !ok {
				continue
			}
			if r := p.res[d]; r < p.dist[o] {
				p.dist[o], p.par[o] = r, d
				h.push(-r, o)
			}
		}
	}
	if len(nodes) == 1 { // a lone node: R C through its least-resistance source device
		if n := nodes[0]; p.par[n] >= 0 || floating {
			tdel[n] = 0
			if p.par[n] >= 0 {
				tdel[n] = p.dist[n] * nl.capOf(int(n))
			}
		}
		return
	}
	order := p.order[:0]
	for len(h.items) > 0 {
		it := h.pop()
		m := it.n
		if p.stamp[m] == gen || -it.key > p.dist[m] {
			continue
		}
		p.stamp[m] = gen
		order = append(order, m)
		for _, d := range nl.chanDev[nl.chanStart[m]:nl.chanStart[m+1]] {
			if s.cond[d] != On {
				continue
			}
			o := nl.other(d, m)
			if s.source[o] || p.stamp[o] == gen {
				continue
			}
			if r := p.dist[m] + p.res[d]; r < p.dist[o] {
				p.dist[o], p.par[o] = r, d
				h.push(-r, o)
			}
		}
	}
	s.elmore(order, tdel)
	p.order = order[:0]
}

// searchDelay takes the delay tree of part c from its level search (the
// best-level paths, preferring lower resistance).
func (s *Sim) searchDelay(c int32, v Value) {
	p := &s.phys
	cp := &p.comps[c]
	for _, n := range cp.nodes {
		p.sub[n], p.tdel[v][n] = s.nl.capOf(int(n)), math.NaN()
	}
	s.elmore(p.sorder[cp.o0:cp.o1], p.tdel[v])
}

// elmore computes the Elmore delays of a tree given by par (the device to
// each node's parent, -1 at the root) over order (parents first), with sub
// holding each node's own capacitance: it accumulates the capacitance
// downstream of every node, then sums R times it from the root down.
func (s *Sim) elmore(order []int32, tdel []float64) {
	nl := s.nl
	p := &s.phys
	parent := func(m int32) int32 { // the parent node, -1 for a source or the root
		d := p.par[m]
		if d < 0 {
			return -1
		}
		o := nl.other(d, m)
		if s.source[o] {
			return -1
		}
		return o
	}
	for j := len(order) - 1; j >= 0; j-- {
		if pn := parent(order[j]); pn >= 0 {
			p.sub[pn] += p.sub[order[j]]
		}
	}
	for _, m := range order {
		d := p.par[m]
		if d < 0 {
			tdel[m] = 0
			continue
		}
		base := 0.0
		if pn := parent(m); pn >= 0 {
			base = tdel[pn]
		}
		tdel[m] = base + s.edgeResistance(d)*p.sub[m]
	}
}

// edgeResistance is the resistance across device d's channel with
// every device that is on between the same two terminals in parallel (the
// two halves of a transmission gate, for instance).
func (s *Sim) edgeResistance(d int32) float64 {
	p := &s.phys
	if p.ring[d] == d {
		return p.res[d]
	}
	g := 0.0
	for e := d; ; {
		if s.cond[e] == On {
			g += p.con[e]
		}
		if e = p.ring[e]; e == d {
			break
		}
	}
	return 1 / g
}

// physHeap is a binary max-heap of nodes by key, with stale entries skipped
// by the caller (no decrease-key).
type physHeap struct{ items []heapItem }

type heapItem struct {
	key float64
	n   int32
}

func (h *physHeap) push(key float64, n int32) {
	h.items = append(h.items, heapItem{key, n})
	it := h.items
	for i := len(it) - 1; i > 0; {
		up := (i - 1) / 2
		if it[up].key >= it[i].key {
			break
		}
		it[up], it[i] = it[i], it[up]
		i = up
	}
}

func (h *physHeap) pop() heapItem {
	it := h.items
	top := it[0]
	last := len(it) - 1
	it[0] = it[last]
	it = it[:last]
	for i := 0; ; {
		l, r, big := 2*i+1, 2*i+2, i
		if l < len(it) && it[l].key > it[big].key {
			big = l
		}
		if r < len(it) && it[r].key > it[big].key {
			big = r
		}
		if big == i {
			break
		}
		it[i], it[big] = it[big], it[i]
		i = big
	}
	h.items = it
	return top
}
