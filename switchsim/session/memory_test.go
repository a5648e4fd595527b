package session

import (
	"fmt"
	"io/fs"
	"math"
	"runtime"
	"strings"
	"testing"

	"railyard/designs"
	"railyard/switchsim"
	"railyard/switchsim/netfile"
	"railyard/switchsim/steps"
)

// tape records every event as the session first settles it, with every
// node's state just after it: the oracle for what rebuilding must give.
type tape struct {
	events []*Event
	states [][]switchsim.NodeState
}

func (t *tape) Record(s *Session, e *Event) {
	t.events = append(t.events, e)
	row := make([]switchsim.NodeState, s.Netlist().NumNodes())
	for n := range row {
		row[n] = s.Node(n)
	}
	t.states = append(t.states, row)
}

func openTaped(t testing.TB, design string, opt Options) (*Session, *tape) {
	t.Helper()
	s, err := Open(design, "", opt)
	if err != nil {
		t.Fatal(err)
	}
	tp := &tape{}
	if err := s.Attach(tp); err != nil {
		t.Fatal(err)
	}
	return s, tp
}

func sameFloat(a, b float64) bool { return a == b || (math.IsNaN(a) && math.IsNaN(b)) }

func sameState(a, b switchsim.NodeState) bool {
	return a.Value == b.Value && a.State == b.State && a.Strength == b.Strength && a.Floating == b.Floating && sameFloat(a.Volts, b.Volts)
}

// sameEvent words the first difference between two events' detail.
func sameEvent(got, want *Event) string {
	switch {
	case got.Rounds != want.Rounds:
		return fmt.Sprintf("rounds %d, want %d", got.Rounds, want.Rounds)
	case got.Oscillated != want.Oscillated, got.Failed() != want.Failed():
		return "oscillated or failed differ"
	case len(got.Changes) != len(want.Changes):
		return fmt.Sprintf("%d changes, want %d", len(got.Changes), len(want.Changes))
	case len(got.Checks) != len(want.Checks):
		return fmt.Sprintf("%d checks, want %d", len(got.Checks), len(want.Checks))
	case len(got.Warnings) != len(want.Warnings):
		return fmt.Sprintf("%d warnings, want %d", len(got.Warnings), len(want.Warnings))
	}
	for i, c := range got.Changes {
		w := want.Changes[i]
		if c.Round != w.Round || c.Node != w.Node || c.Was != w.Was || !sameState(c.NodeState, w.NodeState) || !sameFloat(c.Delay, w.Delay) {
			return fmt.Sprintf("change %d: %+v, want %+v", i, c, w)
		}
	}
	for i, c := range got.Checks {
		w := want.Checks[i]
		if c.Node != w.Node || c.Want != w.Want || c.Pass != w.Pass || !sameState(c.Got, w.Got) {
			return fmt.Sprintf("check %d: %+v, want %+v", i, c, w)
		}
	}
	for i, c := range got.Warnings {
		w := want.Warnings[i]
		if c.Kind != w.Kind || c.Node != w.Node || c.Message != w.Message {
			return fmt.Sprintf("warning %d: %+v, want %+v", i, c, w)
		}
	}
	return ""
}

func (s *Session) keptSnapshots() int {
	k := 0
	for _, e := range s.hist {
		if e.snap != nil {
			k++
		}
	}
	return k
}

// Going back past dropped snapshots rebuilds the state by re-simulation:
// every node must equal what it was when that step was first applied.
func TestGoBackPastDroppedSnapshots(t *testing.T) {
	s, tp := openTaped(t, "demo:flipflop", Options{Mode: switchsim.Physical, SnapshotBudget: 1})
	s.RunToEnd(false)
	if k, max := s.keptSnapshots(), s.maxSnapshots(); k > max {
		t.Fatalf("%d snapshots kept with a budget of one byte, want at most %d", k, max)
	}
	nn := s.Netlist().NumNodes()
	for i := s.Len() - 2; i >= 0; i-- {
		if !s.GoBack() {
			t.Fatalf("GoBack refused at history %d", i+1)
		}
		for n := 0; n < nn; n++ {
			if got, w := s.Node(n), tp.states[i][n]; !sameState(got, w) {
				t.Fatalf("back to history %d: %s is %+v, was %+v", i, s.Netlist().NodeName(n), got, w)
			}
		}
		if d := sameEvent(s.Last(), tp.events[i]); d != "" {
			t.Fatalf("back to history %d: the last event %s", i, d)
		}
	}
}

// With a detail budget of one byte only the last two events keep their
// detail; Detail rebuilds any other, equal to what was first recorded.
func TestDetailDroppedAndRebuilt(t *testing.T) {
	for _, demo := range []string{"demo:flipflop", "demo:lost_level", "demo:mux4_tgate"} {
		s, tp := openTaped(t, demo, Options{Mode: switchsim.Physical, DetailBudget: 1, SnapshotBudget: 1})
		s.RunToEnd(false)
		hist := s.History()
		for i, e := range hist {
			if keep := i >= len(hist)-2; e.Dropped() == keep {
				t.Errorf("%s: event %d dropped=%v with a budget of one byte", demo, i, e.Dropped())
			}
			if e.Dropped() && (e.Changes != nil || e.Checks != nil || e.Warnings != nil) {
				t.Errorf("%s: event %d is dropped but holds detail", demo, i)
			}
			if e.Failed() != tp.events[i].Failed() || e.NumWarnings() != len(tp.events[i].Warnings) {
				t.Errorf("%s: event %d lost its counts", demo, i)
			}
			if d := sameEvent(s.Detail(i), tp.events[i]); d != "" {
				t.Errorf("%s: event %d rebuilt: %s", demo, i, d)
			}
		}
		if s.detailBytes < 0 {
			t.Errorf("%s: detail bytes %d", demo, s.detailBytes)
		}
	}
}

// Walk re-simulates the history in force and gives every event as it was
// recorded, with the states after it.
func TestWalkMatchesTheRun(t *testing.T) {
	for _, e := range designs.List() {
		for _, mode := range []switchsim.Mode{switchsim.Ideal, switchsim.Physical} {
			s, tp := openTaped(t, "demo:"+e.Name, Options{Mode: mode})
			s.RunToEnd(false)
			i := 0
			s.Walk(func(ev *Event, node func(int) switchsim.NodeState) error {
				if d := sameEvent(ev, tp.events[i]); d != "" {
					t.Errorf("%s %s event %d: %s", e.Name, mode, i, d)
				}
				for n := range tp.states[i] {
					if !sameState(node(n), tp.states[i][n]) {
						t.Errorf("%s %s event %d: node %d differs", e.Name, mode, i, n)
						break
					}
				}
				i++
				return nil
			})
			if i != s.Len() {
				t.Errorf("%s: walked %d events, %d in force", e.Name, i, s.Len())
			}
		}
	}
}

// MaxHistory bounds the actions in force: the oldest fold away, going back
// stops at the oldest kept, and its state is still right.
func TestHistoryFolds(t *testing.T) {
	s, tp := openTaped(t, "demo:static_latch", Options{Mode: switchsim.Physical, MaxHistory: 8, SnapshotBudget: 1})
	for i := 0; i < 5; i++ {
		s.JumpTo(-1) // back to before the first step, then all steps again
		s.RunToEnd(false)
	}
	for i := 0; i < 40; i++ {
		s.Toggle(s.Netlist().Inputs()[i%2])
	}
	if s.Len() > 9 || s.Folded() == 0 {
		t.Fatalf("%d actions in force, %d folded; want at most 9 with MaxHistory 8", s.Len(), s.Folded())
	}
	// Every action reached the recorder, backs included.
	if got := s.Actions(); got != len(tp.events) {
		t.Errorf("Actions() = %d, the recorder saw %d", got, len(tp.events))
	}
	for s.GoBack() {
	}
	if s.Len() != 1 {
		t.Fatalf("after going back as far as possible %d in force, want 1", s.Len())
	}
	// The oldest kept entry: find it in the tape by its sequence number.
	at := seqIndex(tp, s.Last().Seq)
	for n := range tp.states[0] {
		if got, w := s.Node(n), tp.states[at][n]; !sameState(got, w) {
			t.Fatalf("at the oldest kept action node %d is %+v, was %+v", n, got, w)
		}
	}
}

func seqIndex(tp *tape, seq int) int {
	for i, e := range tp.events {
		if e.Seq == seq {
			return i
		}
	}
	return -1
}

// Track gives the watched nodes' states after every event in force, kept
// up to date as actions and backs come.
func TestTrack(t *testing.T) {
	s, tp := openTaped(t, "demo:flipflop", Options{Mode: switchsim.Physical})
	nl := s.Netlist()
	nodes := []int{nl.Inputs()[0], nl.Outputs()[0]}
	s.Track(nodes) // rebuilt now, then kept by each action
	s.RunToEnd(false)
	s.GoBack()
	s.GoBack()
	s.Next()
	check := func(what string) {
		tr := s.Track(nodes)
		if len(tr) != s.Len() {
			t.Fatalf("%s: %d rows for %d events", what, len(tr), s.Len())
		}
		for i, e := range s.History() {
			for k, n := range nodes {
				if want := tp.states[seqIndex(tp, e.Seq)][n].State; tr[i][k] != want {
					t.Errorf("%s: event %d node %s: %s, want %s", what, i, nl.NodeName(n), tr[i][k], want)
				}
			}
		}
	}
	check("kept")
	s.trk = nil // rebuilt from the events' changes
	check("rebuilt")
}

// trimming snapshots is amortised constant per action: the strided ones
// stay within the budget and the number of history walks grows with the
// logarithm of the length.
func TestSnapshotsWithinBudget(t *testing.T) {
	s, err := Open("demo:static_latch", "", Options{Mode: switchsim.Physical, SnapshotBudget: 64 << 10})
	if err != nil {
		t.Fatal(err)
	}
	for i := 0; i < 5000; i++ {
		s.Toggle(s.Netlist().Inputs()[i%2])
		if k, max := s.keptSnapshots(), s.maxSnapshots(); k > max {
			t.Fatalf("after %d actions %d snapshots, the budget holds %d", i+1, k, max)
		}
	}
	if s.stride < 2 {
		t.Errorf("stride %d after 5000 actions with room for %d snapshots", s.stride, s.maxSnapshots())
	}
}

// latchSteps writes n rows of static_latch's own steps.
func latchSteps(tb testing.TB, nl *switchsim.Netlist, n int) *steps.Steps {
	tb.Helper()
	src, err := fs.ReadFile(designs.FS, "static_latch.steps")
	if err != nil {
		tb.Fatal(err)
	}
	var rows []string
	for _, l := range strings.Split(string(src), "\n") {
		if l = strings.TrimSpace(l); l != "" && !strings.HasPrefix(l, "#") && !strings.HasPrefix(l, "apply") && !strings.HasPrefix(l, "check") {
			rows = append(rows, l)
		}
	}
	var b strings.Builder
	b.WriteString("apply clk d\ncheck s q\n")
	for i := 0; i < n; i++ {
		b.WriteString(rows[i%len(rows)] + "\n")
	}
	st, err := steps.ReadLimits("latch.steps", []byte(b.String()), nl, steps.Limits{FileSize: 64 << 20})
	if err != nil {
		tb.Fatal(err)
	}
	return st
}

func latchDesign(tb testing.TB) *netfile.Design {
	tb.Helper()
	sw, err := fs.ReadFile(designs.FS, "static_latch.sw")
	if err != nil {
		tb.Fatal(err)
	}
	d, err := netfile.Read("latch.sw", sw)
	if err != nil {
		tb.Fatal(err)
	}
	return d
}

// retained is the live heap a session holds after running its steps.
func retained(d *netfile.Design, st *steps.Steps, opt Options) (live uint64, s *Session) {
	runtime.GC()
	var m0, m1 runtime.MemStats
	runtime.ReadMemStats(&m0)
	s = New(d, "latch.sw", st, opt)
	s.RunToEnd(false)
	runtime.GC()
	runtime.ReadMemStats(&m1)
	return m1.HeapAlloc - min(m0.HeapAlloc, m1.HeapAlloc), s
}

// Nothing is kept per step beyond MaxHistory: ten times the steps, about
// the same memory (a heap measurement, not a timing).
func TestMemoryDoesNotGrowWithSteps(t *testing.T) {
	if testing.Short() {
		t.Skip("runs 22,000 steps")
	}
	d := latchDesign(t)
	opt := Options{Mode: switchsim.Physical, MaxHistory: 1000}
	small, s1 := retained(d, latchSteps(t, d.Netlist, 2000), opt)
	runtime.KeepAlive(s1)
	s1 = nil
	big, s2 := retained(d, latchSteps(t, d.Netlist, 20000), opt)
	runtime.KeepAlive(s2)
	// The steps files themselves differ by 18,000 rows of some 100 bytes
	// each; the session must add nothing per step on top.
	t.Logf("retained: %d KiB after 2,000 steps, %d KiB after 20,000", small>>10, big>>10)
	if big > small+4<<20 {
		t.Errorf("retained %d KiB after 20,000 steps against %d KiB after 2,000 (MaxHistory 1000)", big>>10, small>>10)
	}
}
