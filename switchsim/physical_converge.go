package switchsim

import "math"

// Converging rounds (DEVELOPERS.md "Rounds", round limit). Near the point
// where a fight through a feedback loop flips (a keeper sized just strong
// enough to hold its node against a write), the unit-delay rounds approach
// the loop's DC operating point geometrically: each round moves the loop's
// nodes by a fraction of their last move, the fraction nearing 1 as the
// sizes near the flip, while no value, strength or state changes. Such
// rounds are not an oscillation, and counting them towards the round limit
// would let race analysis decide a settle that the rounds do settle. A
// *converging* round is one in which every change is a voltage move alone
// (value, strength and state as before) and every node it moves moved by at
// most convergeRatio times its own previous move in the same run of
// rounds; each one extends that run's round limit by one, up to
// convergeExtend times the limit. The first half of a run's rounds (up to
// limit / 2) count whatever they do, so the bookkeeping costs a settle
// that ends before then (nearly every one) a comparison per group.

const (
	// convergeRatio: a move at most this fraction of the node's previous
	// one. Since moves under a microvolt are no change (voltsMoved), a node
	// makes at most log(1e-6 V / vdd) / log(0.9), about 140 at 1.8 V, such
	// moves in a row.
	convergeRatio = 0.9
	// convergeExtend bounds the extension: at most this many times the
	// round limit more rounds in one run.
	convergeExtend = 16
)

// physConvergeState is the bookkeeping of converging rounds.
type physConvergeState struct {
	last []convMove // node -> its last move

	round int32  // roundNo the flags below describe
	id    uint32 // and settleID
	conv  bool   // every change of that round so far is a shrinking voltage move

	extID    uint32 // the settle and run whose extension ext counts
	extStart int32
	ext      int
}

// convMove is a node's last move: its size (NaN: between known and
// unknown), the round (roundNo) and the settle (settleID) it was made in.
type convMove struct {
	size  float64
	round int32
	id    uint32
}

func (c *physConvergeState) init(nn int) { c.last = make([]convMove, nn) }

// physConverge notes, before g's results are committed, whether each
// change it makes is a shrinking voltage move (physConverging reads the
// round's verdict).
func (s *Sim) physConverge(g *group) {
	if int(s.roundNo-s.runStart) <= s.limit/2 {
		return // the first half of the run counts whatever it does
	}
	for i, n := range g.nodes {
		s.convergeNode(n, g.nval[i], g.nstr[i], g.nstate[i], g.nvolts[i])
	}
}

// convergeNode is physConverge for node n, about to be given value v,
// strength st, state state and voltage vo, past the first half of the run.
func (s *Sim) convergeNode(n int32, v Value, st Strength, state State, vo float64) {
	c := &s.phys.conv
	if c.round != s.roundNo || c.id != s.settleID {
		c.round, c.id, c.conv = s.roundNo, s.settleID, true
	}
	old := s.volts[n]
	logic := s.val[n] != v || s.str[n] != st || s.state[n] != state
	if !logic && !voltsMoved(old, vo) {
		return
	}
	m := math.Abs(vo - old) // NaN where either is unknown
	if logic || math.IsNaN(m) {
		c.conv = false
	} else if l := &c.last[n]; l.id != s.settleID || l.round <= s.runStart || !(m <= convergeRatio*l.size) {
		c.conv = false
	}
	c.last[n] = convMove{m, s.roundNo, s.settleID}
}

// physConverging reports, after a round, whether it was a converging round
// whose run may still extend its limit; it counts the extension.
func (s *Sim) physConverging() bool {
	if s.mode != Physical {
		return false
	}
	c := &s.phys.conv
	if c.round != s.roundNo || c.id != s.settleID || !c.conv {
		return false
	}
	if c.extID != s.settleID || c.extStart != s.runStart {
		c.extID, c.extStart, c.ext = s.settleID, s.runStart, 0
	}
	if c.ext >= convergeExtend*s.limit {
		return false
	}
	c.ext++
	return true
}
