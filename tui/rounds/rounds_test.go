package rounds

import (
	"fmt"
	"math"
	"strings"
	"testing"

	"github.com/charmbracelet/x/exp/golden"

	"railyard/switchsim"
	"railyard/switchsim/gen"
	"railyard/switchsim/session"
	"railyard/tui/internal/paneltest"
	"railyard/tui/panel"
)

func view(names *panel.Names, s Settle, w, h int) Model {
	m := New(names, DefaultStyles(paneltest.Theme(false)))
	m.SetSize(w, h)
	m.Set(s)
	return m
}

func keys(m Model, ks ...string) Model {
	for _, k := range ks {
		m, _ = m.Update(paneltest.Key(k))
	}
	return m
}

// settleOf is a session's last action as the root model gives it.
func settleOf(s *session.Session) Settle {
	hist := s.History()
	e := s.Last()
	st := Settle{Title: "the last action", Rounds: e.Rounds, Oscillated: e.Oscillated, Unsettled: e.Unsettled, Decided: e.Decided}
	if len(hist) > 1 { // the state before each change, as the root model gives it
		st.Before = make([]switchsim.NodeState, s.Netlist().NumNodes())
		for _, c := range e.Changes {
			st.Before[c.Node].State = c.Was
		}
	}
	cond := make([]switchsim.Conduction, s.Netlist().NumDevices())
	for d := range cond {
		cond[d] = s.Conduction(d)
	}
	for _, c := range e.Changes {
		st.Changes = append(st.Changes, Change{Round: c.Round, Node: c.Node, State: c.State, Volts: c.Volts, Delay: c.Delay})
	}
	st.Slowest, st.Arrival = SlowestChain(s.Netlist(), cond, st.Changes)
	return st
}

// A settle that changed nothing says so; so do the empty and one-node
// designs' first settles when nothing moves.
func TestNothingChanged(t *testing.T) {
	for _, nl := range []*switchsim.Netlist{paneltest.Empty(t), paneltest.OneNode(t)} {
		m := view(panel.NewNames(nl), Settle{Title: "set", Rounds: 0}, 60, 10)
		if !strings.Contains(m.View(), "No node changed in this settle.") {
			t.Errorf("%d nodes: %s", nl.NumNodes(), m.View())
		}
		if m = keys(m, "left", "right", "home", "end"); m.Replay() != 0 {
			t.Errorf("replay moved to %d over no rounds", m.Replay())
		}
	}
}

// The replay walks the rounds within 0 .. Rounds, and a cell shows a
// change only from its round on (later rounds are blank).
func TestReplay(t *testing.T) {
	nl := paneltest.Big(t, 40)
	names := panel.NewNames(nl)
	st := Settle{Title: "t", Rounds: 3, Changes: []Change{
		{1, 5, switchsim.State1, math.NaN(), math.NaN()},
		{2, 6, switchsim.State0, math.NaN(), math.NaN()},
		{3, 5, switchsim.StateX, math.NaN(), math.NaN()},
	}}
	m := view(names, st, 60, 12)
	if m.Replay() != 3 {
		t.Fatalf("a new settle shows round %d, want the last (3)", m.Replay())
	}
	m = keys(m, "right")
	if m.Replay() != 3 {
		t.Errorf("past the last round: %d", m.Replay())
	}
	m = keys(m, "left", "left")
	if m.Replay() != 1 || len(m.ChangedIn(1)) != 1 || m.ChangedIn(1)[0] != 5 {
		t.Fatalf("round 1: replay %d changed %v", m.Replay(), m.ChangedIn(1))
	}
	row := func(n int) string {
		for _, l := range strings.Split(m.View(), "\n") {
			if strings.Contains(l, " "+names.Node[n]+" ") {
				return l
			}
		}
		return ""
	}
	// node 5 changed in round 1 (marked) and again in round 3 (not yet shown)
	if r := row(5); !strings.HasPrefix(r, "•") || !strings.HasSuffix(strings.TrimRight(r, " "), "1") {
		t.Errorf("round 1, node 5: %q (want marked, now 1)", r)
	}
	if r := row(6); strings.HasPrefix(r, "•") || !strings.Contains(r, "?") {
		t.Errorf("round 1, node 6 (first changes in round 2): %q", r)
	}
	m = keys(m, "home")
	if m.Replay() != 0 || !strings.Contains(m.View(), "before round 1") {
		t.Errorf("home: %d", m.Replay())
	}
	if m = keys(m, "end"); m.Replay() != 3 || !strings.Contains(m.View(), "settled") {
		t.Errorf("end: %d", m.Replay())
	}
}

// An oscillating settle says so above the grid.
func TestOscillated(t *testing.T) {
	nl := paneltest.OneNode(t)
	y := paneltest.Node(t, nl, "y")
	m := view(panel.NewNames(nl), Settle{Title: "t", Rounds: 1, Oscillated: true,
		Changes: []Change{{1, y, switchsim.StateX, math.NaN(), math.NaN()}}}, 80, 8)
	if !strings.Contains(m.View(), "oscillated: past the round limit") {
		t.Errorf("no oscillation notice:\n%s", m.View())
	}
}

// When the unit-delay rounds reach the limit without settling and race
// analysis decides, the view says so above the grid (the last round is the
// analysis's verdict); rounds that hit the limit undecided say that; a
// settle that settled says neither.
func TestUnsettledAndDecided(t *testing.T) {
	nl := paneltest.OneNode(t)
	y := paneltest.Node(t, nl, "y")
	ch := []Change{{1, y, switchsim.StateH, math.NaN(), math.NaN()}, {19, y, switchsim.State1, math.NaN(), math.NaN()}}
	for _, c := range []struct {
		s    Settle
		want string
	}{
		{Settle{Title: "t", Rounds: 19, Changes: ch, Unsettled: true, Decided: true}, "the rounds did not settle: race analysis decided round 19"},
		{Settle{Title: "t", Rounds: 19, Changes: ch, Unsettled: true}, "the rounds reached the round limit without settling"},
		{Settle{Title: "t", Rounds: 19, Changes: ch}, ""},
	} {
		v := view(panel.NewNames(nl), c.s, 80, 8).View()
		foot := map[bool]string{true: "19/19: decided by race analysis", false: "19/19: settled"}[c.s.Decided]
		if c.s.Unsettled && !c.s.Decided {
			foot = "19/19: at the round limit"
		}
		if !strings.Contains(v, foot) {
			t.Errorf("the foot should say %q:\n%s", foot, v)
		}
		if c.want == "" {
			if strings.Contains(v, "did not settle") || strings.Contains(v, "without settling") {
				t.Errorf("a settled settle says it did not settle:\n%s", v)
			}
		} else if !strings.Contains(v, c.want) {
			t.Errorf("want %q:\n%s", c.want, v)
		}
	}
}

// 4,000 changes in as many rounds: the rows scroll to follow the replayed
// round, and the round columns window around it.
func TestManyChanges(t *testing.T) {
	nl := paneltest.Big(t, 4000)
	var ch []Change
	for n := 0; n < 4000; n++ {
		ch = append(ch, Change{Round: n + 1, Node: n, State: switchsim.State1, Volts: math.NaN(), Delay: math.NaN()})
	}
	m := view(panel.NewNames(nl), Settle{Title: "t", Rounds: 4000, Changes: ch}, 80, 20)
	m = keys(m, "home")
	for i := 0; i < 2500; i++ {
		m = keys(m, "right")
	}
	v := m.View()
	if !strings.Contains(v, "replay round 2500/4000") || !strings.Contains(v, "• "+nl.NodeName(2499)) {
		t.Errorf("round 2500: its node %s is not shown marked:\n%s", nl.NodeName(2499), v)
	}
	if n := len(strings.Split(v, "\n")); n != 20 {
		t.Errorf("%d lines, want 20", n)
	}
}

// The slowest chain of an inverter chain is the chain itself, and its
// arrival the sum of the stages' delays (Elmore delays of stages in series
// add along the path: common practice for a first-order estimate).
func TestSlowestChainOfAnInverterChain(t *testing.T) {
	nl, err := gen.InverterChain(4).Compile()
	if err != nil {
		t.Fatal(err)
	}
	s := paneltest.Session(nl, switchsim.Physical)
	if _, err := s.SetInput(paneltest.Node(t, nl, "in"), switchsim.Drive0); err != nil {
		t.Fatal(err)
	}
	if _, err := s.SetInput(paneltest.Node(t, nl, "in"), switchsim.Drive1); err != nil {
		t.Fatal(err)
	}
	st := settleOf(s)
	var names []string
	sum := 0.0
	for _, i := range st.Slowest {
		names = append(names, nl.NodeName(st.Changes[i].Node))
		sum += st.Changes[i].Delay
	}
	if strings.Join(names, " ") != "x1 x2 x3 x4" {
		t.Fatalf("slowest chain %v, want x1 x2 x3 x4", names)
	}
	if math.Abs(sum-st.Arrival) > 1e-18 || !(st.Arrival > 0) {
		t.Errorf("arrival %g, want the sum of the stage delays %g", st.Arrival, sum)
	}
	// a change that follows nothing in the round before starts its own
	// chain: here the second change is in round 3 with no round 2
	ch := []Change{{1, paneltest.Node(t, nl, "x1"), switchsim.State0, 0, 10e-12}, {3, paneltest.Node(t, nl, "x2"), switchsim.State1, 1.8, 5e-12}}
	cond := make([]switchsim.Conduction, nl.NumDevices())
	if chain, arr := SlowestChain(nl, cond, ch); len(chain) != 1 || chain[0] != 0 || arr != 10e-12 {
		t.Errorf("no round 2: chain %v arrival %g, want x1 alone at 10ps", chain, arr)
	}
	// ideal mode: no delays, no chain
	if chain, arr := SlowestChain(nl, cond, []Change{{1, 3, switchsim.State0, math.NaN(), math.NaN()}}); chain != nil || !math.IsNaN(arr) {
		t.Errorf("no delays: %v %g", chain, arr)
	}
}

// Goldens of demo:static_latch's first step in physical mode (clock high,
// d=0: the latch is transparent), checked by hand: 3 rounds and 5 changes
// (2 1 2 per round); clk_b and s (as L) in round 1, s_b in round 2, s (now
// 0) and q in round 3; "was" X for all (the first settle left them X);
// the volts as of the last round (clk_b, s, q 0.00, s_b 1.80) and each
// node's latest Elmore delay (clk_b 31.3ps, s 17ps, s_b 37.5ps, q 31.3ps);
// the slowest chain s → s_b → q at 100ps (31.3 + 37.5 + 31.3).
func TestGolden(t *testing.T) {
	s := paneltest.Demo(t, "static_latch", switchsim.Physical)
	s.Next()
	st := settleOf(s)
	for _, sz := range paneltest.Sizes {
		t.Run(fmt.Sprintf("%dx%d", sz[0], sz[1]), func(t *testing.T) {
			golden.RequireEqual(t, []byte(view(paneltest.Names(s), st, sz[0], sz[1]).View()))
		})
	}
}
