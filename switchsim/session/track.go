package session

import (
	"slices"

	"railyard/switchsim"
)

// Unknown marks a tracked state the session no longer knows (the detail of
// an event before it was dropped for the memory budget).
const Unknown = switchsim.State(255)

// track is the states of a few watched nodes after every action in force,
// one byte a node an action: what a timeline draws.
type track struct {
	nodes []int
	rows  []switchsim.State // len(hist) rows of len(nodes)
}

// Track returns the state letter of each of nodes just after every event
// in force: Track(nodes)[i][k] is nodes[k] after History()[i], or Unknown.
// The session keeps the rows of the last node list asked for up to date as
// actions come (a byte a node an action); asking for another list rebuilds
// them from the events' changes, at the cost of reading every change in
// force once. The rows are shared: read them, do not change them.
func (s *Session) Track(nodes []int) [][]switchsim.State {
	if s.trk == nil || !slices.Equal(nodes, s.trk.nodes) {
		s.rebuildTrack(nodes)
	}
	w := len(nodes)
	out := make([][]switchsim.State, len(s.hist))
	for i := range out {
		out[i] = s.trk.rows[i*w : (i+1)*w : (i+1)*w]
	}
	return out
}

// trackPush appends the row of the action just recorded (s.letters is
// the state after it).
func (s *Session) trackPush() {
	if s.trk == nil {
		return
	}
	for _, n := range s.trk.nodes {
		s.trk.rows = append(s.trk.rows, s.letters[n])
	}
}

// trackTrim keeps the rows of entries [lo, len(hist)) after a back or a fold.
func (s *Session) trackTrim(lo, n int) {
	if s.trk == nil {
		return
	}
	w := len(s.trk.nodes)
	if lo == 0 {
		s.trk.rows = s.trk.rows[:n*w] // a back: the next push overwrites the row
		return
	}
	s.trk.rows = append([]switchsim.State(nil), s.trk.rows[lo*w:(lo+n)*w]...) // a fold: free the old rows
}

// rebuildTrack recomputes the rows for nodes from the first entry's
// snapshot forward through each event's changes and drives. Past an event
// whose detail was dropped the states are Unknown until the next entry
// that kept a snapshot.
func (s *Session) rebuildTrack(nodes []int) {
	t := &track{nodes: slices.Clone(nodes), rows: make([]switchsim.State, 0, len(s.hist)*len(nodes))}
	s.trk = t
	if len(nodes) == 0 {
		return
	}
	cur := make([]switchsim.State, len(nodes))
	pos := map[int][]int{} // node -> its positions in nodes
	for k, n := range nodes {
		pos[n] = append(pos[n], k)
	}
	sim := s.scratchSim()
	fromSnap := func(i int) {
		sim.Restore(s.hist[i].snap)
		for k, n := range nodes {
			cur[k] = sim.Node(n).State
		}
	}
	set := func(n int, st switchsim.State) {
		for _, k := range pos[n] {
			cur[k] = st
		}
	}
	stale := false
	for i := range s.hist {
		e := s.hist[i].ev
		switch {
		case s.hist[i].snap != nil:
			fromSnap(i)
			stale = false
		case e.dropped || stale:
			stale = true
			for k := range cur {
				cur[k] = Unknown
			}
		default:
			switch a := e.Action; a.Kind {
			case Set:
				if a.Drive != switchsim.DriveZ {
					set(a.Node, driveState(a.Drive))
				}
			case Step:
				for _, in := range a.Drives {
					if in.Drive != switchsim.DriveZ {
						set(in.Node, driveState(in.Drive))
					}
				}
			}
			for _, c := range e.Changes {
				set(c.Node, c.State)
			}
		}
		t.rows = append(t.rows, cur...)
	}
}

// driveState is the state letter a driven input takes (IEEE 1164 letters
// for a supply-strength source).
func driveState(d switchsim.Drive) switchsim.State {
	return [...]switchsim.State{switchsim.State0, switchsim.State1, switchsim.StateX, switchsim.StateZ}[d]
}
