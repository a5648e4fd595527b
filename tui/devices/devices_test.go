package devices

import (
	"fmt"
	"math"
	"strings"
	"testing"

	tea "github.com/charmbracelet/bubbletea"
	"github.com/charmbracelet/x/exp/golden"

	"railyard/switchsim"
	"railyard/switchsim/session"
	"railyard/tui/internal/paneltest"
	"railyard/tui/panel"
)

func table(s *session.Session, w, h int) Model {
	nl := s.Netlist()
	m := New(nl, paneltest.Names(s), DefaultStyles(paneltest.Theme(false)))
	m.SetSize(w, h)
	cond := make([]switchsim.Conduction, nl.NumDevices())
	for d := range cond {
		cond[d] = s.Conduction(d)
	}
	st := paneltest.States(s)
	m.SetStates(cond, st, st[nl.Power()].Volts)
	m.Focus()
	return m
}

func keys(m Model, ks ...string) (Model, tea.Msg) { return paneltest.Feed(m, Model.Update, ks...) }

func row(v, name string) string {
	for _, l := range strings.Split(v, "\n") {
		// after the cursor and the group mark cells
		if r := []rune(l); len(r) > 2 && strings.HasPrefix(string(r[2:]), name+" ") {
			return l
		}
	}
	return ""
}

// An empty design has no devices; a one-node design's pull is on, has no
// gate and no size, and enter on it asks about the node it pulls.
func TestEmptyAndOneNode(t *testing.T) {
	m := table(paneltest.Session(paneltest.Empty(t), switchsim.Ideal), 80, 10)
	if !strings.Contains(m.View(), "no devices") || m.Selected() != -1 {
		t.Errorf("empty:\n%s", m.View())
	}
	if _, msg := keys(m, "enter"); msg != (panel.Note{Text: "no device selected"}) {
		t.Errorf("enter on no device: %v", msg)
	}
	s := paneltest.Session(paneltest.OneNode(t), switchsim.Ideal)
	s.Next()
	m = table(s, 80, 10)
	if r := row(m.View(), "up"); !strings.Contains(r, "pullup -") || !strings.Contains(r, "on ") || !strings.Contains(r, "vdd─y") && !strings.Contains(r, "y─vdd") {
		t.Errorf("the pull's row: %q", r)
	}
	if _, msg := keys(m, "enter"); msg != (panel.Inspect{Node: paneltest.Node(t, s.Netlist(), "y")}) {
		t.Errorf("enter on a pull: %v, want the node it pulls", msg)
	}
}

// Enter on a transistor asks why its gate holds its value; / filters by
// device, gate or terminal name; o shows only the marked group.
func TestInspectFilterGroup(t *testing.T) {
	s := paneltest.Selector(t, switchsim.Ideal)
	nl := s.Netlist()
	m := table(s, 100, 16)
	_, msg := keys(m, "enter") // the first device: selinv.p, gated by sel
	if d := nl.Device(m.Selected()); msg != (panel.Inspect{Node: d.Gate}) {
		t.Errorf("enter on %s: %v, want its gate %d", d.Name, msg, d.Gate)
	}
	m, _ = keys(m, "/", "s", "e", "l", "_", "b", "enter")
	// sel_b gates ta.n and tb.p, and is the channel end of selinv's two
	if m.Shown() != 4 || m.FilterText() != "sel_b" {
		t.Errorf("filter sel_b: %d shown (%q), want 4", m.Shown(), m.FilterText())
	}
	group := make([]bool, nl.NumDevices())
	ta, _ := nl.LookupDevice("ta.n")
	group[ta] = true
	m.SetGroup("y", group)
	m, _ = keys(m, "o")
	if m.Shown() != 1 || !strings.Contains(m.View(), "group of y only") {
		t.Errorf("o with the filter: %d shown:\n%s", m.Shown(), m.View())
	}
	if !m.ClearFilter() || m.Shown() != nl.NumDevices() {
		t.Errorf("ClearFilter: %d shown", m.Shown())
	}
}

// The on-resistance column appears only once estimates are given
// (SetOhms), and the selected device's line gives the estimate too.
func TestOhmsColumn(t *testing.T) {
	s := paneltest.Selector(t, switchsim.Physical)
	m := table(s, 120, 12)
	if strings.Contains(m.View(), "R on") {
		t.Fatal("an R on column without estimates")
	}
	ohms := make([]float64, s.Netlist().NumDevices())
	for d := range ohms {
		ohms[d] = math.NaN()
	}
	ohms[0] = 4700
	m.SetOhms(ohms)
	v := m.View()
	if !strings.Contains(v, "R on") || !strings.Contains(row(v, s.Netlist().Device(0).Name), "4.7 kohm") {
		t.Errorf("R on column:\n%s", v)
	}
	lines := strings.Split(v, "\n")
	if last := lines[len(lines)-1]; !strings.Contains(last, "R on 4.7 kohm") {
		t.Errorf("the selected device's line %q lacks its R on", last)
	}
}

// 4,000 nodes: the table scrolls to the last device and keeps its height;
// W/L shows at 120 columns, not at 60 (the selected device's line has it).
func TestManyDevices(t *testing.T) {
	nl := paneltest.Big(t, 4000)
	s := paneltest.Session(nl, switchsim.Ideal)
	m := table(s, 120, 20)
	m, _ = keys(m, "end")
	last := nl.NumDevices() - 1
	v := m.View()
	if m.Selected() != last || len(strings.Split(v, "\n")) != 20 || row(v, nl.Device(last).Name) == "" {
		t.Errorf("end: selected %d of %d:\n%s", m.Selected(), last, v)
	}
	if !strings.Contains(v, "W/L um") {
		t.Errorf("no W/L at 120 columns")
	}
	m.SetSize(60, 20)
	v = m.View()
	lines := strings.Split(v, "\n")
	if strings.Contains(v, "W/L um") || !strings.Contains(lines[len(lines)-1], "W/L ") {
		t.Errorf("at 60 columns: the W/L column shows, or the selected line lacks it:\n%s", v)
	}
}

// Goldens of demo:strong_keeper after its second step, with s_b's group
// marked, checked by hand: ten devices in the file's order with their
// kinds, gates and values; fwd.p and fwd.n gated by s at 0.20 V (not a
// full 0, so the volts are shown), every other gate at a full level and
// without volts; on/off as the gates give them (keep.n on, keep.p off);
// W/L as the design file draws them (keeper 1.44/0.18, input gate
// 0.36/0.36; the inverters' defaults 0.72/0.18 and 0.36/0.18); fwd.p marked as the one device of
// s_b's group; the selected first device spelled out on the last line.
func TestGolden(t *testing.T) {
	s := paneltest.Demo(t, "strong_keeper", switchsim.Physical)
	s.Next()
	s.Next()
	nl := s.Netlist()
	e := s.Explain(paneltest.Node(t, nl, "s_b"))
	group := make([]bool, nl.NumDevices())
	for _, d := range e.Devices {
		group[d] = true
	}
	for _, sz := range paneltest.Sizes {
		t.Run(fmt.Sprintf("%dx%d", sz[0], sz[1]), func(t *testing.T) {
			m := table(s, sz[0], sz[1])
			m.SetGroup("s_b", group)
			golden.RequireEqual(t, []byte(m.View()))
		})
	}
}

// In the narrow list a pull shows as "pull" (its channel names its rail),
// and a tran as "tran": it joins two nodes and has no rail.
func TestKindNames(t *testing.T) {
	for _, c := range []struct {
		k    switchsim.DeviceKind
		w    int
		want string
	}{
		{switchsim.PullUp, 4, "pull"}, {switchsim.PullDown, 4, "pull"}, {switchsim.Tran, 4, "tran"},
		{switchsim.PullUp, 6, "pullup"}, {switchsim.PullDown, 6, "pulldn"}, {switchsim.Tran, 6, "tran"}, {switchsim.NMOS, 4, "nmos"},
	} {
		if got := kindName(c.k, c.w); got != c.want {
			t.Errorf("kindName(%s, %d) = %q, want %q", c.k, c.w, got, c.want)
		}
	}
}

// W on a transistor asks for a size to try; on a pull it says why not.
// A device with a size tried shows its size as loaded in its line.
func TestTrySize(t *testing.T) {
	s := paneltest.Selector(t, switchsim.Ideal)
	m := table(s, 100, 16)
	if _, msg := keys(m, "W"); msg != (panel.AskSize{Device: m.Selected()}) {
		t.Errorf("W on %s: %#v", s.Netlist().Device(m.Selected()).Name, msg)
	}
	d := m.Selected()
	loaded := s.Netlist().Device(d)
	m.SetTried(map[int]switchsim.Device{d: loaded})
	if v := m.View(); !strings.Contains(v, "(tried; loaded "+size(loaded)+")") {
		t.Errorf("the tried size's line:\n%s", v)
	}
	p := table(paneltest.Session(paneltest.OneNode(t), switchsim.Ideal), 80, 10)
	_, msg := keys(p, "W")
	if n, ok := msg.(panel.Note); !ok || !strings.Contains(n.Text, "up is a pullup: it has no W/L to try") {
		t.Errorf("W on a pull: %#v", msg)
	}
}
