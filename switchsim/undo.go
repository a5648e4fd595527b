package switchsim

import "math"

// The undo log: the first change of every node and device since a mark,
// so that the race and case analyses can go back to an earlier state at
// the cost of what changed since, not of the whole design. A settle opens
// segment 0 at its start (the state before the step); case analysis opens a
// segment per branch on top of it. Within a segment each node and device is
// logged once, before its first change.

// nodeSave is a node's state as the log keeps it; physical mode's part is
// in the parallel physSave, kept in physical mode only.
// Its drive and four flags share one byte (saveBits): 8 bytes an entry,
// and the log is written on every step that race analysis may look back on.
type nodeSave struct {
	n     int32
	val   Value
	str   Strength
	state State
	bits  uint8 // drive in bits 0-1, the node's flags (nflag) in 2-4, source in 5
}

func saveBits(d Drive, flags uint8, source bool) uint8 {
	b := uint8(d) | flags<<2
	if source {
		b |= 1 << 5
	}
	return b
}

type physSave struct {
	volts float64
	phys  physRec    // physical mode's record of the node
	share uint32     // physical mode's charge-sharing stamp
	start fightStart // where the node's next fight solve starts
}

// devSave is a device's state as the log keeps it; physical mode's part is
// in the parallel physDevSave.
type devSave struct {
	d    int32
	cond Conduction
}

type physDevSave struct {
	dv   physDev // the gate voltage recorded and the pass limit for it
	leak bool    // partly on
}

type undoLog struct {
	on    bool     // logging: off where nothing can go back (no race analysis can run in this settle)
	devOn bool     // logging devices too; in ideal mode with no fan-out queued a device's state is its gate's function, recomputed on going back
	id    uint32   // the open segment's stamp
	at    []int32  // node -> its entry in segment 0 (valid where that entry names it), set by index
	nmark []uint32 // node -> stamp of the segment that logged it; made when a segment first opens
	dmark []uint32 // device -> the same; made when devices are first logged
	nn    int
	nd    int
	nodes []nodeSave
	phys  []physSave // parallel to nodes in physical mode
	devs  []devSave
	pdevs []physDevSave // parallel to devs in physical mode
}

// undoMark is a position in the log: going back to it restores everything
// logged after it.
type undoMark struct{ nodes, devs int }

func (u *undoLog) init(nn, nd int) {
	u.nn, u.nd = nn, nd
}

// logDevices turns the logging of devices on or off for the open segment.
// Ideal mode logs them only where fan-out was left queued, so their stamps
// are made on first use.
func (u *undoLog) logDevices(on bool) {
	u.devOn = on
	if on && u.dmark == nil {
		u.dmark = make([]uint32, u.nd)
	}
}

// open starts a segment: from here on every node and device is logged
// again before its first change. It returns the segment's start.
func (u *undoLog) open() undoMark {
	u.on = true
	u.nmark = perNode(u.nmark, u.nn) // made on first use: a Sim with race analysis off may never log
	u.id++
	if u.id == 0 { // wrapped: clear the stamps
		clear(u.nmark)
		clear(u.dmark)
		u.id = 1
	}
	return undoMark{len(u.nodes), len(u.devs)}
}

// reset empties the log and opens segment 0, logging or not, and logging
// devices or not.
func (u *undoLog) reset(on, devOn bool) {
	u.nodes, u.phys, u.devs, u.pdevs = u.nodes[:0], u.phys[:0], u.devs[:0], u.pdevs[:0]
	u.on = false
	if on {
		u.open()
	}
	u.logDevices(on && devOn)
}

// index records where each node's entry of segment 0 is, for before; the
// hot path leaves it to the analysis that needs it.
func (u *undoLog) index() {
	u.at = perNode(u.at, u.nn)
	for i := range u.nodes {
		u.at[u.nodes[i].n] = int32(i)
	}
}

// before returns the index of node n's entry in segment 0, -1 where it has
// none (it did not change since the settle began). index must have run
// since the last entry was added.
func (u *undoLog) before(n int32) int {
	if u.at == nil {
		return -1 // index never ran: no analysis has looked
	}
	if i := int(u.at[n]); i < len(u.nodes) && u.nodes[i].n == n {
		return i
	}
	return -1
}

// logNode saves node n before its first change in the open segment and
// reports whether it did (false: already logged).
func (s *Sim) logNode(n int32) bool {
	u := &s.undo
	if !u.on || u.nmark[n] == u.id {
		return false
	}
	s.saveNode(n)
	return true
}

// saveNode appends node n's entry (logNode's checks passed).
func (s *Sim) saveNode(n int32) {
	u := &s.undo
	u.nmark[n] = u.id
	u.nodes = append(u.nodes, nodeSave{n, s.val[n], s.str[n], s.state[n],
		saveBits(s.drive[n], s.nflag[n], s.source[n])})
	if s.mode == Physical {
		u.phys = append(u.phys, physSave{s.volts[n], s.phys.info[n], s.phys.shareMark[n], s.phys.fightV[n]})
	}
}

// logDevice saves device d before its first change in the open segment.
func (s *Sim) logDevice(d int32) {
	u := &s.undo
	if !u.devOn || u.dmark[d] == u.id {
		return
	}
	u.dmark[d] = u.id
	u.devs = append(u.devs, devSave{d, s.cond[d]})
	if s.mode == Physical {
		u.pdevs = append(u.pdevs, physDevSave{s.phys.dv[d], s.phys.leak[d]})
	}
}

// restoreNode puts back log entry i.
func (s *Sim) restoreNode(i int) {
	e := &s.undo.nodes[i]
	n := e.n
	s.val[n], s.str[n], s.state[n], s.drive[n] = e.val, e.str, e.state, Drive(e.bits&3)
	s.nflag[n], s.source[n] = e.bits>>2&7, e.bits&(1<<5) != 0
	if s.mode == Physical {
		p := &s.undo.phys[i]
		s.volts[n], s.phys.info[n], s.phys.shareMark[n], s.phys.fightV[n] = p.volts, p.phys, p.share, p.start
	}
}

// undoTo restores every node and device logged since m. With drop the
// entries are removed and a new segment is opened (the state is as at m,
// and the log starts afresh from there); without, they stay: the log still
// says what each node was at m, which is where the state now is.
func (s *Sim) undoTo(m undoMark, drop bool) {
	u := &s.undo
	for i := len(u.nodes) - 1; i >= m.nodes; i-- {
		s.restoreNode(i)
	}
	for i := len(u.devs) - 1; i >= m.devs; i-- {
		e := &u.devs[i]
		s.cond[e.d] = e.cond
		if s.mode == Physical {
			s.phys.dv[e.d] = u.pdevs[i].dv
			s.setLeak(e.d, u.pdevs[i].leak)
		}
	}
	if !u.devOn {
		// The devices were not logged: each one a restored node gates takes
		// the state its gate gives (no fan-out was queued at the mark).
		nl := s.nl
		for i := m.nodes; i < len(u.nodes); i++ {
			n := u.nodes[i].n
			for _, d := range nl.gateDev[nl.gateStart[n]:nl.gateStart[n+1]] {
				s.cond[d] = s.condOf(int(d))
			}
		}
	}
	if drop {
		u.nodes, u.devs = u.nodes[:m.nodes], u.devs[:m.devs]
		if s.mode == Physical {
			u.phys, u.pdevs = u.phys[:m.nodes], u.pdevs[:m.devs]
		}
		u.open()
	}
	// Work queued for the state just left does not apply to this one.
	s.gates, s.seeds = s.gates[:0], s.seeds[:0]
	s.nextEpoch()
}

// saved returns log entry i's node state.
func (s *Sim) saved(i int) NodeState {
	e := &s.undo.nodes[i]
	v := math.NaN() // ideal mode: no voltages
	if s.mode == Physical {
		v = s.undo.phys[i].volts
	}
	return NodeState{e.val, e.str, e.state, e.str.IsCharge(), v}
}
