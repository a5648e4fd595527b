package switchsim

import (
	"math"
	"slices"
)

// The group memo: a group's physical estimate, replayed when the group is
// solved again from exactly the same state. A select line or a clock
// toggling brings the same fights and the same level searches back step
// after step; where everything the estimate reads is as it was at one of
// the group's last solves, the result is the one that solve gave, bit for
// bit, and is copied rather than worked out again.
//
// The key is everything physGroup and physDelay read for a group without
// devices of unknown state, partly-on devices or floating parts: its
// devices in order with their conduction and recorded gate voltage (and a
// gate source's value: passLimit and gateVoltsRecorded read nothing else,
// the limit kept with the voltage being a function of it),
// its nodes in order (each node's value, strength, state and voltage, the
// ideal resolution's value, strength and state, and for a fight where it
// starts: fightStart.find of the fight's signature), and its sources with
// their values. Every comparison is exact (the floats bit for bit), so a
// hit gives what the solve would give, delays included: a node moves in
// commit exactly when it moved then. Lone nodes driven by one value are
// left to physSingle, which is as cheap as a look-up (and the only reader
// of a node's old record, through retained).
//
// An entry is one slice: the key, then memoOutWords words per node of what
// the solve left (memoOut), so that a hit reads one run of memory.

const (
	// entries per group seed: a toggle's two steps of two rounds, and the
	// phases of race analysis where it runs
	memoWays = 8
	// larger groups are solved every time
	memoMaxNodes, memoMaxDevs = 32, 128
	// memoBudget bounds the memo's size in 8-byte words (about 32 MB); past
	// it no new seed gets entries, and the rest are solved every time.
	memoBudget = 1 << 22
	// memoOutWords is a node's record in an entry, in words (memoOut).
	memoOutWords = 8
)

// physMemo is the Sim's group memo.
type physMemo struct {
	off  bool    // turned off (export_test.go), or the general path is forced (slow)
	slot []int32 // node -> its seed's entries in slots, -1 none
	// vslot is slot for the parts of vertex solves, by seed and vertex
	// (vertexKey): a group's up to 256 vertices would cycle through one
	// seed's ways. Made on first use.
	vslot map[uint64]int32
	// vertex is the vertex being solved plus one (physical_vertex.go), 0 outside the vertex solve
	vertex uint64
	slots  []memoSlot
	words  int      // size so far, in 8-byte words
	key    []uint64 // the key of the group being solved
	sig    uint32   // and its fight's signature (fightSig), for a fight
	// hit is the entry replayed for the group being solved, rec the entry
	// its solve is recorded into (nil: none).
	hit, rec *memoEntry
}

type memoSlot struct {
	ents [memoWays]memoEntry
	next uint8 // the entry the next record replaces
	last int8  // the entry last hit or recorded, -1 none
}

// follow notes that entry w is the one hit or recorded after the last.
func (sl *memoSlot) follow(w int8) {
	if sl.last >= 0 {
		sl.ents[sl.last].succ = w
	}
	sl.last = w
}

type memoEntry struct {
	succ  int8 // the entry hit or recorded after this one last time, -1 none
	fight bool
	klen  int32    // the key's length in data; 0: the entry is empty
	data  []uint64 // the key, then each node's memoOut
}

// memoOut is what the solve left for one node of the group, as the words
// of an entry: its value, strength and state with its record's kind and
// lost value; its voltage; the record's devices (Drop, Up, Down) and
// voltages (Before, Delay); a fight's end point, kept for the node's next
// fight (fightStart.keep); physDelay's result, where commit asked for it.
const (
	outLogic, outVolts, outDrop, outDown, outBefore, outInfoDelay, outKept, outDelay = 0, 1, 2, 3, 4, 5, 6, 7
)

// out returns node i's words in e.
func (e *memoEntry) out(i int) []uint64 {
	o := int(e.klen) + i*memoOutWords
	return e.data[o : o+memoOutWords : o+memoOutWords]
}

func (m *physMemo) init(nn int) {
	m.slot = make([]int32, nn)
	for n := range m.slot {
		m.slot[n] = -1
	}
}

func newMemoSlot() memoSlot {
	sl := memoSlot{last: -1}
	for w := range sl.ents {
		sl.ents[w].succ = -1
	}
	return sl
}

// memoFight reports whether a group without devices of unknown state, whose
// sources have the values has, is a fight (physGroup, physSingle): both
// values, or an X source with a value.
func memoFight(has [3]bool) bool { return (has[V0] && has[V1]) || (has[VX] && (has[V0] || has[V1])) }

// memoLook looks group g up. It returns true, having replayed the entry,
// on a hit; otherwise it leaves in m.rec the entry to record the solve
// into, if g may be memoised.
func (s *Sim) memoLook(g *group) bool {
	p := &s.phys
	m := &p.memo
	m.hit, m.rec = nil, nil
	has := g.srcHas
	fight := memoFight(has)
	if m.off || p.slow || g.hasUnknown || !(has[V0] || has[V1] || has[VX]) || len(g.nodes) > memoMaxNodes ||
		len(g.devs) > memoMaxDevs || (len(g.nodes) == 1 && !fight) {
		return false
	}
	if !s.memoKey(g.nodes, g.devs, g.srcs, g.nval, g.nstr, g.nstate, fight) {
		return false
	}
	seed := g.nodes[0]
	si := int32(-1)
	if m.vertex == 0 {
		si = m.slot[seed]
	} else if i, ok := m.vslot[uint64(seed)<<16|m.vertex]; ok {
		si = i
	}
	if si < 0 {
		if m.words >= memoBudget {
			return false
		}
		si = int32(len(m.slots))
		m.slots = append(m.slots, newMemoSlot())
		if m.vertex == 0 {
			m.slot[seed] = si
		} else {
			if m.vslot == nil {
				m.vslot = map[uint64]int32{}
			}
			m.vslot[uint64(seed)<<16|m.vertex] = si
		}
	}
	sl := &m.slots[si]
	if e := sl.find(m.key); e != nil {
		s.memoReplay(g, e)
		m.hit = e
		return true
	}
	m.rec = sl.take()
	return false
}

// memoKey builds into m.key (and m.sig) the key of the group of nodes,
// devs and srcs, which the ideal resolution gave nval, nstr and nstate, a
// fight or not; it reports false where a node touches a partly-on device
// (no key: the group is solved every time).
func (s *Sim) memoKey(nodes, devs, srcs []int32, nval []Value, nstr []Strength, nstate []State, fight bool) bool {
	p := &s.phys
	m := &p.memo
	// the devices first: their conduction and gates tell a toggle's solves apart soonest
	k := grow(m.key, 2+2*len(devs)+(2+b2i(fight))*len(nodes)+len(srcs))
	// A vertex solve's part (physical_vertex.go) gives up where Newton's
	// method fails, where a group's solve sweeps on: the two never share entries.
	k[0], k[1] = uint64(len(nodes))|uint64(len(devs))<<32, uint64(len(srcs))|uint64(b2i(p.net.quick))<<32
	j := 2 + 2*len(devs)
	s.memoDevices(k[2:j], devs)
	sig := uint32(0) // fightSig(devs, nil), as netBuild names the fight
	for _, d := range devs {
		sig = sigStep(sig, d)
	}
	m.sig = sig
	for i, n := range nodes {
		if p.leakAt[n] > 0 {
			m.key = k
			return false
		}
		// Value, Strength and State each fit in 4 bits (value.go). A node's
		// old record is read only by a lone node's level (retained), which
		// the memo leaves to physSingle.
		k[j] = uint64(uint32(n)) | uint64(s.val[n])<<32 | uint64(s.str[n])<<36 | uint64(s.state[n])<<40 |
			uint64(nval[i])<<44 | uint64(nstr[i])<<48 | uint64(nstate[i])<<52
		k[j+1] = math.Float64bits(s.volts[n])
		j += 2
		if fight { // where the fight starts (netBuild)
			k[j] = math.Float64bits(p.fightV[n].find(m.sig))
			j++
		}
	}
	for _, src := range srcs {
		k[j] = uint64(uint32(src)) | uint64(s.val[src])<<32
		j++
	}
	m.key = k
	return true
}

// find returns the entry of sl whose key is k, nil if none is.
func (sl *memoSlot) find(k []uint64) *memoEntry {
	// The solves of a seed's group recur in the same order (a toggle's
	// steps and rounds): the entry that followed the last one hit comes first.
	first := int8(-1)
	if sl.last >= 0 {
		first = sl.ents[sl.last].succ
	}
	for j := -1; j < memoWays; j++ {
		w := j
		if j < 0 {
			w = int(first)
		} else if j == int(first) {
			continue
		}
		if w < 0 {
			continue
		}
		if e := &sl.ents[w]; e.klen > 0 && slices.Equal(e.data[:e.klen], k) {
			sl.follow(int8(w))
			return e
		}
	}
	return nil
}

// take returns the entry of sl to record a solve into, emptied (the
// oldest; find having found none).
func (sl *memoSlot) take() *memoEntry {
	e := &sl.ents[sl.next]
	sl.follow(int8(sl.next))
	sl.next = (sl.next + 1) % memoWays
	e.klen, e.succ = 0, -1 // empty until recorded
	return e
}

// memoDevices writes the key words of devs into k, two a device: its
// conduction, and what passLimit and gateVoltsRecorded read, the recorded
// gate voltage (the limit kept with it is a function of it) and a source
// gate's value.
func (s *Sim) memoDevices(k []uint64, devs []int32) {
	nl := s.nl
	for i, d := range devs {
		w := uint64(uint32(d)) | uint64(s.cond[d])<<32
		if gn := nl.devGate[d]; gn >= 0 && s.source[gn] {
			w |= uint64(1+s.val[gn]) << 40
		}
		k[2*i], k[2*i+1] = w, math.Float64bits(s.phys.dv[d].gv)
	}
}

// memoReplay writes entry e's results for group g, as the solve wrote them.
func (s *Sim) memoReplay(g *group, e *memoEntry) {
	for i, n := range g.nodes {
		g.nval[i], g.nstr[i], g.nstate[i], g.nvolts[i] = s.replayNode(e, i, n)
		if e.fight {
			g.contested[i] = true
		}
	}
}

// replayNode writes what entry e holds for node n, the group's node i: its
// record and, for a fight, its end point and flags; it returns the node's
// value, strength, state and voltage.
func (s *Sim) replayNode(e *memoEntry, i int, n int32) (Value, Strength, State, float64) {
	p := &s.phys
	o := e.out(i)
	w := o[outLogic]
	p.info[n] = physRec{How: physHow(w >> 24), Lost: Value(w >> 32), Drop: int32(uint32(o[outDrop])),
		Up: int32(uint32(o[outDrop] >> 32)), Down: int32(uint32(o[outDown])),
		Before: math.Float64frombits(o[outBefore]), Delay: math.Float64frombits(o[outInfoDelay])}
	if e.fight { // as solveFight keeps it
		p.fightV[n].keep(p.memo.sig, math.Float64frombits(o[outKept]))
		s.nflag[n] = s.nflag[n]&^nfFight | nfContest
	}
	return Value(w), Strength(w >> 8), State(w >> 16), math.Float64frombits(o[outVolts])
}

// memoRecord records the solve of group g into m.rec; commit's physDelay
// adds the delays.
func (s *Sim) memoRecord(g *group) {
	p := &s.phys
	m := &p.memo
	e := m.rec
	if e == nil {
		return
	}
	if p.net.gaveUp { // the vertex solve keeps the ternary result: nothing to replay
		m.rec = nil
		return
	}
	before := cap(e.data)
	e.fight = memoFight(g.srcHas)
	e.klen = int32(len(m.key))
	e.data = append(e.data[:0], m.key...)
	nan := math.Float64bits(math.NaN())
	for i, n := range g.nodes {
		in := &p.info[n]
		kept := nan
		if e.fight { // the fight just solved (solveFight): its node i is the net's node i
			kept = math.Float64bits(p.net.v[i])
		}
		e.data = append(e.data,
			uint64(g.nval[i])|uint64(g.nstr[i])<<8|uint64(g.nstate[i])<<16|uint64(in.How)<<24|uint64(in.Lost)<<32,
			math.Float64bits(g.nvolts[i]),
			uint64(uint32(in.Drop))|uint64(uint32(in.Up))<<32,
			uint64(uint32(in.Down)),
			math.Float64bits(in.Before), math.Float64bits(in.Delay), kept, nan)
	}
	m.words += cap(e.data) - before
}

func b2i(b bool) int {
	if b {
		return 1
	}
	return 0
}

// The vertex solve's memo: the whole physical solve of a group that is
// solved at its vertices (physical_vertex.go; vertexWanted said yes), the
// ternary solve and every vertex, replayed when the group is solved again
// from exactly the same state. A clock edge's phase A brings the same latch
// groups back step after step, each worth up to 64 solves of its parts.
//
// The key is everything the ternary solve and the parts' solves read, as
// for a group (memoLook) over the whole group: its devices with their
// conduction (which are of unknown state), recorded gate voltage and a gate
// source's value; its nodes with their value, strength, state and voltage,
// the ideal resolution, and the state every solve starts from (the solve's
// flags, whether the node shared charge in this settle, its whole record
// and where its fights start); its sources with their values. An entry
// holds what the solve left for each node: its result, flags, record
// (delay included), fight starts, and whether it shared charge.

// vertexOutWords is a node's result in a vertex solve's entry, in words.
const vertexOutWords = 9

// vertexMemoLook looks g's solve up (vertexWanted having kept the state
// before it, g holding the ideal resolution). On a hit it writes what the
// solve wrote and returns true; otherwise it leaves in v.memoSlot the slot
// to record the solve into (-1: none).
func (s *Sim) vertexMemoLook(g *group) bool {
	p := &s.phys
	m := &p.memo
	v := &p.vert
	v.memoSlot = -1
	if m.off || p.slow || len(g.nodes) > memoMaxNodes || len(g.devs) > memoMaxDevs {
		return false
	}
	nl := s.nl
	k := grow(v.key, 2+2*len(g.devs)+10*len(g.nodes)+len(g.srcs))
	k[0], k[1] = uint64(len(g.nodes))|uint64(len(g.devs))<<32, uint64(len(g.srcs))
	j := 2 + 2*len(g.devs)
	s.memoDevices(k[2:j], g.devs)
	for i, n := range g.nodes {
		if p.leakAt[n] > 0 {
			return false
		}
		in, fv := &v.info0[i], &v.fv0[i]
		k[j] = uint64(uint32(n)) | uint64(s.val[n])<<32 | uint64(s.str[n])<<36 | uint64(s.state[n])<<40 |
			uint64(g.nval[i])<<44 | uint64(g.nstr[i])<<48 | uint64(g.nstate[i])<<52 | uint64(b2i(g.contested[i]))<<56 |
			uint64(b2i(v.mark0[i] == s.settleID))<<57
		k[j+1] = math.Float64bits(s.volts[n])
		k[j+2] = uint64(in.How) | uint64(in.Lost)<<8 | uint64(b2i(in.Vertex))<<16 | uint64(fv.last)<<24 | uint64(v.flag0[i])<<32
		k[j+3], k[j+4] = uint64(uint32(in.Drop))|uint64(uint32(in.Up))<<32, uint64(uint32(in.Down))
		k[j+5], k[j+6] = math.Float64bits(in.Before), math.Float64bits(in.Delay)
		k[j+7] = uint64(fv.sig[0]) | uint64(fv.sig[1])<<32
		k[j+8], k[j+9] = math.Float64bits(fv.volts[0]), math.Float64bits(fv.volts[1])
		j += 10
	}
	for _, src := range g.srcs {
		k[j] = uint64(uint32(src)) | uint64(s.val[src])<<32
		j++
	}
	v.key = k
	if v.slot == nil {
		v.slot = make([]int32, nl.NumNodes())
		for n := range v.slot {
			v.slot[n] = -1
		}
	}
	seed := g.nodes[0]
	si := v.slot[seed]
	if si < 0 {
		if m.words >= memoBudget {
			return false
		}
		si = int32(len(m.slots))
		m.slots = append(m.slots, newMemoSlot())
		v.slot[seed] = si
	}
	v.memoSlot = si
	e := m.slots[si].find(k)
	if e == nil {
		return false
	}
	for i, n := range g.nodes {
		o := e.data[int(e.klen)+i*vertexOutWords:][:vertexOutWords]
		w := o[0]
		g.nval[i], g.nstr[i], g.nstate[i], g.contested[i] = Value(w&15), Strength(w>>4&15), State(w>>8&15), w>>12&1 == 1
		g.nvolts[i] = math.Float64frombits(o[1])
		s.setSolveFlags(n, uint8(w>>16))
		p.info[n] = physRec{How: physHow(w >> 24 & 15), Lost: Value(w >> 28 & 15), Vertex: w>>32&1 == 1,
			Drop: int32(uint32(o[2])), Up: int32(uint32(o[2] >> 32)), Down: int32(uint32(o[3])),
			Before: math.Float64frombits(o[4]), Delay: math.Float64frombits(o[5])}
		p.fightV[n] = fightStart{sig: [2]uint32{uint32(o[6]), uint32(o[6] >> 32)},
			volts: [2]float64{math.Float64frombits(o[7]), math.Float64frombits(o[8])}, last: uint8(w >> 40)}
		if w>>33&1 == 1 {
			p.shareMark[n] = s.settleID
		}
	}
	v.memoSlot = -1
	return true
}

// vertexMemoRecord records g's solve, just made, into the slot
// vertexMemoLook left.
func (s *Sim) vertexMemoRecord(g *group) {
	p := &s.phys
	m := &p.memo
	v := &p.vert
	if v.memoSlot < 0 {
		return
	}
	e := m.slots[v.memoSlot].take()
	before := cap(e.data)
	e.klen = int32(len(v.key))
	e.data = append(e.data[:0], v.key...)
	for i, n := range g.nodes {
		in, fv := &p.info[n], &p.fightV[n]
		w := uint64(g.nval[i]) | uint64(g.nstr[i])<<4 | uint64(g.nstate[i])<<8 | uint64(b2i(g.contested[i]))<<12 |
			uint64(s.solveFlags(n))<<16 | uint64(in.How)<<24 | uint64(in.Lost)<<28 | uint64(b2i(in.Vertex))<<32 |
			uint64(b2i(p.shareMark[n] == s.settleID))<<33 | uint64(fv.last)<<40
		e.data = append(e.data, w, math.Float64bits(g.nvolts[i]),
			uint64(uint32(in.Drop))|uint64(uint32(in.Up))<<32, uint64(uint32(in.Down)),
			math.Float64bits(in.Before), math.Float64bits(in.Delay),
			uint64(fv.sig[0])|uint64(fv.sig[1])<<32, math.Float64bits(fv.volts[0]), math.Float64bits(fv.volts[1]))
	}
	m.words += cap(e.data) - before
	v.memoSlot = -1
}
