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
// devices of unknown state, partly-on devices or floating parts: its nodes
// in order (each node's value, strength, state, voltage, the ideal
// resolution's value, strength and state, the kind and last-drop device of
// its record, and for a fight where its last two fights ended), its
// devices in order with their conduction, recorded gate voltage and pass
// limit, and its sources with their values. Every comparison is exact (the
// floats bit for bit), so a hit gives what the solve would give, delays
// included: a node moves in commit exactly when it moved then. Lone nodes
// driven by one value are left to physSingle, which is as cheap as a look-up.

const (
	memoWays     = 8   // entries per group seed: a toggle's two steps of two rounds
	memoMaxNodes = 32  // larger groups are solved every time
	memoMaxDevs  = 128 //
	// memoBudget bounds the memo's size in 8-byte words (about 32 MB); past
	// it no new seed gets entries, and the rest are solved every time.
	memoBudget = 1 << 22
	// memoOutWords is a memoOut's size in words, near enough.
	memoOutWords = 9
)

// physMemo is the Sim's group memo.
type physMemo struct {
	off   bool    // turned off (export_test.go), or the general path is forced (slow)
	slot  []int32 // node -> its seed's entries in slots, -1 none
	slots []memoSlot
	words int      // size so far, in 8-byte words
	key   []uint64 // the key of the group being solved
	sig   uint32   // and its fight's signature (fightSig), for a fight
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
	key   []uint64
	out   []memoOut // per node of the group
	fight bool
}

// memoOut is what the solve left for one node of the group.
type memoOut struct {
	val   Value
	str   Strength
	state State
	volts float64
	info  physRec
	kept  float64 // a fight's end point, kept for the node's next fight (fightStart.keep)
	delay float64 // physDelay's result, where commit asked for it
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
	// the devices first: their conduction and gates tell a toggle's solves apart soonest
	k := grow(m.key, 2+2*len(g.devs)+(2+b2i(fight))*len(g.nodes)+len(g.srcs))
	k[0], k[1] = uint64(len(g.nodes))|uint64(len(g.devs))<<32, uint64(len(g.srcs))
	j := 2
	nl := s.nl
	for _, d := range g.devs {
		// passLimit and gateVoltsRecorded read the recorded gate voltage
		// (the limit kept with it is a function of it) and a source gate's value
		w := uint64(uint32(d)) | uint64(s.cond[d])<<32
		if gn := nl.devGate[d]; gn >= 0 && s.source[gn] {
			w |= uint64(1+s.val[gn]) << 40
		}
		k[j], k[j+1] = w, math.Float64bits(p.dv[d].gv)
		j += 2
	}
	if fight {
		m.sig = fightSig(g.devs, nil)
	}
	for i, n := range g.nodes {
		if p.leakAt[n] > 0 {
			m.key = k
			return false
		}
		// Value, Strength and State each fit in 4 bits (value.go). A node's
		// old record is read only by a lone node's level (retained), which
		// the memo leaves to physSingle.
		k[j] = uint64(uint32(n)) | uint64(s.val[n])<<32 | uint64(s.str[n])<<36 | uint64(s.state[n])<<40 |
			uint64(g.nval[i])<<44 | uint64(g.nstr[i])<<48 | uint64(g.nstate[i])<<52
		k[j+1] = math.Float64bits(s.volts[n])
		j += 2
		if fight { // where the fight starts (netBuild)
			k[j] = math.Float64bits(p.fightV[n].find(m.sig))
			j++
		}
	}
	for _, src := range g.srcs {
		k[j] = uint64(uint32(src)) | uint64(s.val[src])<<32
		j++
	}
	m.key = k
	seed := g.nodes[0]
	si := m.slot[seed]
	if si < 0 {
		if m.words >= memoBudget {
			return false
		}
		si = int32(len(m.slots))
		m.slots = append(m.slots, newMemoSlot())
		m.slot[seed] = si
	}
	sl := &m.slots[si]
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
		if e := &sl.ents[w]; len(e.key) > 0 && slices.Equal(e.key, k) {
			sl.follow(int8(w))
			s.memoReplay(g, e)
			m.hit = e
			return true
		}
	}
	e := &sl.ents[sl.next]
	sl.follow(int8(sl.next))
	sl.next = (sl.next + 1) % memoWays
	e.key, e.succ = e.key[:0], -1 // incomplete until memoRecord
	m.rec = e
	return false
}

// memoReplay writes entry e's results for group g, as the solve wrote them.
func (s *Sim) memoReplay(g *group, e *memoEntry) {
	p := &s.phys
	for i, n := range g.nodes {
		o := &e.out[i]
		g.nval[i], g.nstr[i], g.nstate[i], g.nvolts[i] = o.val, o.str, o.state, o.volts
		p.info[n] = o.info
		if e.fight { // as solveFight keeps it
			p.fightV[n].keep(p.memo.sig, o.kept)
			g.contested[i] = true
			s.contest[n], s.fight[n] = true, false
		}
	}
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
	before := cap(e.key) + cap(e.out)*memoOutWords
	e.key = append(e.key[:0], m.key...)
	e.out = grow(e.out, len(g.nodes))
	e.fight = memoFight(g.srcHas)
	for i, n := range g.nodes {
		e.out[i] = memoOut{val: g.nval[i], str: g.nstr[i], state: g.nstate[i], volts: g.nvolts[i],
			info: p.info[n], kept: math.NaN(), delay: math.NaN()}
		if e.fight { // the fight just solved (solveFight): its node i is the net's node i
			e.out[i].kept = p.net.v[i]
		}
	}
	m.words += cap(e.key) + cap(e.out)*memoOutWords - before
}

func b2i(b bool) int {
	if b {
		return 1
	}
	return 0
}
