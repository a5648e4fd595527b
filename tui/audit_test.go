package tui

import (
	"bytes"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/charmbracelet/x/exp/golden"

	"railyard/switchsim"
	"railyard/switchsim/gen"
	"railyard/switchsim/netfile"
	"railyard/switchsim/reach"
	"railyard/switchsim/session"
	"railyard/switchsim/trace"
	"railyard/tui/panel"
	"railyard/tui/prompt"
)

// testdata/fight.sw: a strong pull-up (pMOS up, on while b=0) and a
// strong pull-down (nMOS dn, on while a=1) of equal transconductance on y, and a pull resistor pz
// that nz overpowers on z while a=1. From every input 0: a=1 makes up and
// dn fight on y (a conflict: two driven transistors meeting, common
// practice), a=0 b=1 leaves y floating (a floating output): both fail
// `check`; on z the pull-down wins over the pull resistor (a contention,
// ratioed logic as meant) and z is never a strong full level (it rests on
// the pull's H): both are reported but fail nothing.
func openFight(t testing.TB, mode switchsim.Mode) *session.Session {
	t.Helper()
	s, err := session.Open(filepath.Join("testdata", "fight.sw"), "", session.Options{Mode: mode})
	if err != nil {
		t.Fatal(err)
	}
	return s
}

// findingIndex is the Audit view's row of the finding of kind on node in
// the model's last report, or -1.
func findingIndex(m *Model, kind reach.Kind, node string) int {
	if m.found == nil {
		return -1
	}
	for row, i := range m.auditOrder {
		f := m.found.Findings[i]
		if f.Kind == kind && f.Node >= 0 && m.sess.Netlist().NodeName(f.Node) == node {
			return row
		}
	}
	return -1
}

// a runs the search in the background and lists each finding once with
// its glyph: the failed-check glyph for the two that fail check, the
// warning glyph for the two that do not; enter on the conflict makes its
// shortest sequence the steps, and n walks it to the conflict, where the
// check the sequence carries (y as the search saw it, X) passes.
func TestAuditFindsAndOpens(t *testing.T) {
	for _, mode := range []switchsim.Mode{switchsim.Ideal, switchsim.Physical} {
		t.Run(mode.String(), func(t *testing.T) {
			s := openFight(t, mode)
			m := New(s, 120, 40, Options{})
			press(m, "a")
			if m.view != ViewAudit || m.focus != focusDetail || m.search != nil || m.found == nil {
				t.Fatalf("after a: view %s, focus %d, search running %v, report %v", m.view, m.focus, m.search != nil, m.found != nil)
			}
			all, failing := m.audit.Findings()
			if all != 4 || failing != 2 {
				t.Fatalf("%d findings, %d failing; want 4 and 2", all, failing)
			}
			for _, c := range []struct {
				kind    reach.Kind
				node    string
				failing bool
			}{{reach.Conflict, "y", true}, {reach.FloatingOutput, "y", true}, {reach.Contention, "z", false}, {reach.DegradedOutput, "z", false}} {
				i := findingIndex(m, c.kind, c.node)
				if i < 0 {
					t.Fatalf("no %s on %s", c.kind, c.node)
				}
				glyph := m.th.G.Warn
				if c.failing {
					glyph = m.th.G.Fail
				}
				if lineWith(m.View(), glyph+" "+string(c.kind), c.node) == "" {
					t.Errorf("%s on %s is not listed with %q:\n%s", c.kind, c.node, glyph, m.View())
				}
			}
			if !strings.Contains(m.viewBar(), "Audit"+m.th.G.Fail+"2") {
				t.Errorf("the view bar does not count the failing findings: %q", m.viewBar())
			}
			if m.statusAs != statusFail || !strings.Contains(m.Status(), "search done: 5 states, 4 findings, 2 failing check") {
				t.Errorf("status %q", m.Status())
			}

			i := findingIndex(m, reach.Conflict, "y")
			press(m, "home")
			for k := 0; k < i; k++ {
				press(m, "down")
			}
			press(m, "enter")
			if m.sess == s || m.sess.NumSteps() != 2 || m.sess.Len() != 1 || m.view != ViewVectors {
				t.Fatalf("enter: steps %d, actions %d, view %s; want the 2-row sequence from the start in Vectors",
					m.sess.NumSteps(), m.sess.Len(), m.view)
			}
			if !strings.Contains(m.Status(), "shortest sequence to conflict on y, 2 rows, the last checks y is X") || !strings.Contains(m.View(), "the sequence to conflict on y") {
				t.Errorf("status %q; Vectors:\n%s", m.Status(), m.View())
			}
			y := node(t, m.sess, "y")
			press(m, "n")
			if v := m.sess.Node(y).Value; v != switchsim.V1 {
				t.Errorf("row 1 (every input 0): y = %s, want 1 (only up conducts)", v)
			}
			press(m, "n")
			if st := m.sess.Node(y); st.Value != switchsim.VX || m.sess.Last().Failed() {
				t.Errorf("row 2 (a=1): y = %s, failed %v; want X and the sequence's check passing", st.State, m.sess.Last().Failed())
			}
			if !strings.Contains(m.Status(), "step 2") || !strings.Contains(m.Status(), "the check passes") {
				t.Errorf("status after walking it: %q", m.Status())
			}
			// the same design and mode: the findings still stand
			if all, _ := m.audit.Findings(); all != 4 {
				t.Errorf("opening a finding dropped the report: %d findings", all)
			}
			if w := trace.Of(m.sess); w == nil || w.Actions() != 3 {
				t.Error("the session of the sequence records no trace of its own from its start")
			}
			// another mode drops the findings; shown again, Audit searches
			// again in that mode, keeping the status line's news of the switch
			press(m, "a", "i")
			if m.foundOf.mode != m.sess.Options().Mode || m.found == nil || !strings.Contains(m.Status(), " mode: ") {
				t.Errorf("after i in Audit: findings of %s in a %s session; status %q", m.foundOf.mode, m.sess.Options().Mode, m.Status())
			}
		})
	}
}

// A design with no finding says so: opsel is a transmission-gate selector
// whose output every input vector drives (common practice: a full
// transmission gate passes both levels).
func TestAuditNoFinding(t *testing.T) {
	m := New(openFixture(t), 80, 24, Options{})
	press(m, "a")
	if all, _ := m.audit.Findings(); all != 0 || m.found == nil || m.found.Stopped != reach.Done {
		t.Fatalf("opsel: %d findings", all)
	}
	if !strings.Contains(m.View(), "no finding: every reachable state passes") || !strings.Contains(m.Status(), "search done: 8 states, no finding") {
		t.Errorf("status %q:\n%s", m.Status(), m.View())
	}
	if strings.Contains(m.viewBar(), "Audit"+m.th.G.Fail) || strings.Contains(m.viewBar(), "Audit"+m.th.G.Warn) {
		t.Errorf("the bar marks Audit with nothing found: %q", m.viewBar())
	}
	press(m, "enter")
	// nothing to open: enter searches again, and finds nothing again
	if m.statusAs == statusFail || m.sess.Len() != 1 {
		t.Errorf("enter with no finding: %q", m.Status())
	}
}

// A design the search refuses (more than reach.MaxInputs inputs) is said
// to be refused, in the view and on the status line, and nothing runs.
func TestAuditRefused(t *testing.T) {
	var b strings.Builder
	b.WriteString("design wide\noutput y\n")
	for i := 0; i <= reach.MaxInputs; i++ {
		b.WriteString("input i" + string(rune('a'+i)) + "\nnmos n" + string(rune('a'+i)) + " i" + string(rune('a'+i)) + " y gnd\n")
	}
	d, err := netfile.Read("wide.sw", []byte(b.String()))
	if err != nil {
		t.Fatal(err)
	}
	m := New(session.New(d, "wide.sw", nil, session.Options{Mode: switchsim.Ideal}), 120, 40, Options{})
	press(m, "a")
	if m.search != nil || !strings.Contains(m.Status(), "takes at most 20") || !strings.Contains(m.View(), "cannot take this design") {
		t.Errorf("status %q:\n%s", m.Status(), m.View())
	}
}

// The search never blocks the explorer: while a long one runs (16 inputs
// of gen.Sized(47), far more states than a moment takes), keys work and
// frames draw; x stops it, and its end comes as a message with the
// findings so far; quitting stops a search too.
func TestAuditRunsInTheBackground(t *testing.T) {
	nl, err := gen.Sized(47).Compile()
	if err != nil {
		t.Fatal(err)
	}
	s := session.New(&netfile.Design{Name: "sized", Netlist: nl}, "sized.sw", nil, session.Options{Mode: switchsim.Ideal})
	m := New(s, 120, 40, Options{})
	_, cmd := m.Update(keyMsg("a"))
	if cmd == nil || m.search == nil || !m.audit.Running() {
		t.Fatal("a did not start a search in the background")
	}
	if v := m.View(); !strings.Contains(v, "searching") || !strings.Contains(m.viewBar(), "Audit"+m.th.G.Ellipsis) {
		t.Errorf("a running search is not shown:\n%s", v)
	}
	press(m, "r")
	if m.view != ViewRounds || m.search == nil {
		t.Fatalf("keys while searching: view %s", m.view)
	}
	press(m, "a")
	send(m, panel.Search{Stop: true})
	run(m, cmd) // the search's news, until its end
	if m.search != nil || m.found == nil || m.found.Stopped != reach.Canceled {
		t.Fatalf("after x: running %v, report %v", m.search != nil, m.found)
	}
	if !strings.Contains(m.Status(), "search stopped") || !strings.Contains(m.View(), "not every state was seen") {
		t.Errorf("a stopped search: %q\n%s", m.Status(), m.View())
	}

	q := New(s, 120, 40, Options{})
	_, cmd = q.Update(keyMsg("a"))
	if !send(q, keyMsg("q")) {
		t.Fatal("q did not quit")
	}
	run(q, cmd)
	if q.found == nil || q.found.Stopped != reach.Canceled {
		t.Errorf("quitting left the search running")
	}
}

// Whole screens of the Audit view on fight.sw at both sizes, colour off,
// checked by hand: the head says the mode, the 5 states and 10
// transitions, done, and "4 findings, 2 failing check"; the rows list
// first those that fail check, with ✗: conflict on y and floating-output
// on y (1 move each), then with ! degraded-output on z (0 moves: it holds
// from the start) and contention on z (1 move),
// with the states and transitions counted as `railyard check
// --exhaustive` reports them; the last lines give the selected finding's
// message whole and say how many steps enter walks; the bar reads
// Audit✗2, and the status line the failing count.
func TestGoldenAudit(t *testing.T) {
	for _, sz := range [][2]int{{80, 24}, {120, 40}} {
		t.Run(fmt.Sprintf("%dx%d", sz[0], sz[1]), func(t *testing.T) {
			m := New(openFight(t, switchsim.Physical), sz[0], sz[1], Options{})
			press(m, "a")
			v := m.View()
			checkScreen(t, v, sz[0], sz[1])
			golden.RequireEqual(t, []byte(v))
		})
	}
}

// i switches ideal and physical mode on the live session: the history in
// force is re-simulated, the header and the status line say the mode, and
// the board marks the nodes whose logic value differs (on strong_keeper
// after step 2: s, s_b and q, see switchsim/session's
// TestRemodeStrongKeeperDiffers for why) with the other mode's value,
// until the next action.
func TestModeSwitch(t *testing.T) {
	s := openDemo(t, "strong_keeper", switchsim.Physical)
	m := New(s, 120, 40, Options{})
	press(m, "n", "n", "i")
	if m.sess.Options().Mode != switchsim.Ideal || m.sess.Len() != 3 {
		t.Fatalf("after i: mode %s, %d actions", m.sess.Options().Mode, m.sess.Len())
	}
	v := m.View()
	if !strings.Contains(m.header(), "ideal") || !strings.Contains(m.Status(), "ideal mode: 3 nodes differ from physical: q s s_b") {
		t.Errorf("header %q, status %q", m.header(), m.Status())
	}
	if !strings.Contains(v, "≠ 3 vs physical") {
		t.Errorf("the board's title has no legend:\n%s", v)
	}
	for _, n := range []string{"q ", "s ", "s_b "} {
		// ideal has 1 1 0 where physical had 0 0 1: the mark shows physical's
		if l := lineWith(v, " "+n, "strong"); !strings.Contains(l, "≠") {
			t.Errorf("%s is not marked: %q", n, l)
		}
	}
	if l := lineWith(v, "clk_b"); strings.Contains(l, "≠") {
		t.Errorf("clk_b is marked though clk alone sets it: %q", l)
	}
	if l := lineWith(v, " s ", "strong"); !strings.Contains(l, "≠0") {
		t.Errorf("s's mark should give physical's value 0: %q", l)
	}
	press(m, "n")
	if strings.Contains(m.View(), "≠") {
		t.Error("the marks outlive the next action")
	}
	press(m, "i")
	if m.sess.Options().Mode != switchsim.Physical || !strings.Contains(m.header(), "physical") {
		t.Errorf("i again: %s", m.sess.Options().Mode)
	}
	if w := trace.Of(m.sess); w == nil || w.Actions() != 4 {
		t.Fatal("the re-simulated session records no trace of its own")
	}
	// that trace is the re-simulated history's: it replays and matches
	tr := filepath.Join(t.TempDir(), "keeper.trace")
	if _, err := trace.Save(m.sess, tr); err != nil {
		t.Fatal(err)
	}
	f, err := os.Open(tr)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	if rep, err := trace.Replay(tr, f, trace.ReplayOptions{}); err != nil || !rep.Match() || rep.Actions != 4 {
		t.Errorf("replay after two switches: %v %+v", err, rep)
	}
}

// W on a device row asks for a size in the design format and tries it:
// on strong_keeper, keep.n at 100n (below the width where the write flips,
// worked out in switchsim/session's TestResizeKeeperFlipsTheWrite) lets
// step 2's write through; the header says the design is edited, Devices
// shows the size as loaded, and s saves the edited design as .sw, through
// the overwrite question, never under another extension.
func TestTrySizeAndSave(t *testing.T) {
	s := openDemo(t, "strong_keeper", switchsim.Physical)
	m := New(s, 120, 40, Options{})
	press(m, "n", "n", "W")
	if m.prompt.Active() || !strings.Contains(m.Status(), "W tries a size on a transistor's row of Devices") {
		t.Errorf("W on the inputs: %q", m.Status())
	}
	press(m, "d", "tab", "tab")
	kn, _ := s.Netlist().LookupDevice("keep.n")
	press(m, "home")
	for m.devices.Selected() != kn {
		press(m, "down")
	}
	press(m, "W")
	if !strings.Contains(m.View(), "keep.n: try W (now 1.44u)") {
		t.Fatalf("W opens no size prompt:\n%s", m.View())
	}
	typeText(m, "0.1")
	press(m, "enter")
	if !m.prompt.Active() || !strings.Contains(m.View(), "0.1u?") {
		t.Fatalf("0.1 (metres) was taken: %q", m.Status())
	}
	press(m, "backspace", "backspace", "backspace")
	typeText(m, "0.1u")
	press(m, "enter")
	if !m.sess.Edited() || m.sess.Last().Failed() || m.sess.Netlist().Device(kn).W != 0.1e-6 {
		t.Fatalf("after 0.1u: edited %v, failed %v", m.sess.Edited(), m.sess.Last().Failed())
	}
	if !strings.Contains(m.Status(), "keep.n W 1.44u -> 100n: step 2 passes") || !strings.Contains(m.header(), "edited (1 size)") {
		t.Errorf("status %q, header %q", m.Status(), m.header())
	}
	if !strings.Contains(m.View(), "(tried; loaded 1.44/0.18)") {
		t.Errorf("Devices does not show the size as loaded:\n%s", m.View())
	}

	dir := t.TempDir()
	press(m, "s", "tab", "tab")
	if m.prompt.Value() != "strong_keeper-edited.sw" {
		t.Fatalf("the design's default name: %q", m.prompt.Value())
	}
	path := filepath.Join(dir, "keeper.sw")
	press(m, "ctrl+u")
	typeText(m, path)
	press(m, "enter")
	got, err := os.ReadFile(path)
	if err != nil || !bytes.Equal(got, m.sess.Design().Source) {
		t.Fatalf("saved %v: %q", err, m.Status())
	}
	d, err := netfile.Read(path, got)
	if err != nil {
		t.Fatal(err)
	}
	if k, _ := d.Netlist.LookupDevice("keep.n"); d.Netlist.Device(k).W != 0.1e-6 {
		t.Errorf("the saved design has keep.n at %g", d.Netlist.Device(k).W)
	}
	if m.sess.DesignPath() != path {
		t.Errorf("after the save the session names its design %s, not the file", m.sess.DesignPath())
	}
	// a trace saved now replays on the saved design and matches
	tr := filepath.Join(dir, "keeper.trace")
	press(m, "s", "ctrl+u")
	typeText(m, tr)
	press(m, "enter")
	f, err := os.Open(tr)
	if err != nil {
		t.Fatalf("no trace: %q", m.Status())
	}
	rep, err := trace.Replay(tr, f, trace.ReplayOptions{})
	f.Close()
	if err != nil || !rep.Match() || rep.Design != path {
		t.Fatalf("replay of the edited session: %v, design %s, differences %v", err, rep.Design, rep.Differences)
	}
	// another file that is there: asked first, and n keeps it
	other := filepath.Join(dir, "other.sw")
	os.WriteFile(other, []byte("keep me"), 0o644)
	press(m, "s", "tab", "tab", "ctrl+u")
	typeText(m, other)
	press(m, "enter")
	if m.prompt.Kind() != prompt.Confirm {
		t.Fatalf("no question before replacing %s: %q", other, m.Status())
	}
	press(m, "n")
	if b, _ := os.ReadFile(other); string(b) != "keep me" {
		t.Error("n replaced the file")
	}
	press(m, "s", "tab", "tab", "ctrl+u")
	typeText(m, filepath.Join(dir, "keeper.txt"))
	press(m, "enter")
	if _, err := os.Stat(filepath.Join(dir, "keeper.txt")); err == nil || !strings.Contains(m.Status(), "saved as .sw") {
		t.Errorf("a design saved under .txt: %q", m.Status())
	}

	// back to the size as loaded: no longer edited, and s offers no design
	press(m, "W")
	typeText(m, "1.44u")
	press(m, "enter")
	if m.sess.Edited() || !m.sess.Last().Failed() || !strings.Contains(m.Status(), "the design is the one loaded again") {
		t.Errorf("1.44u again: edited %v, %q", m.sess.Edited(), m.Status())
	}
	press(m, "s", "tab", "tab")
	if m.prompt.Kind() != prompt.SaveTrace { // after trace, VCD: the cycle has no design in it
		t.Errorf("an unedited design is offered for saving")
	}
}

// W on a pull says it has no size; with Options.Save the design is one of
// the files the owner keeps.
func TestTrySizeNeedsATransistor(t *testing.T) {
	s := openFight(t, switchsim.Physical)
	f := &fakeSave{}
	m := New(s, 120, 40, Options{Save: f.save})
	pz, _ := s.Netlist().LookupDevice("pz")
	press(m, "d", "tab", "tab", "home")
	for m.devices.Selected() != pz {
		press(m, "down")
	}
	press(m, "W")
	if m.prompt.Active() || !strings.Contains(m.Status(), "pz is a pullup: it has no W/L to try") {
		t.Errorf("W on a pull: %q", m.Status())
	}
	dn, _ := s.Netlist().LookupDevice("dn")
	send(m, panel.Resize{Device: dn, W: 0.72e-6, L: 0.18e-6})
	press(m, "s", "tab", "tab", "enter")
	if len(f.kinds) != 1 || f.kinds[0] != SaveDesign || !bytes.Equal(f.files[0], m.sess.Design().Source) {
		t.Errorf("the owner was not handed the design: %v", f.kinds)
	}
	if !strings.Contains(m.Status(), "as kept-1.sw") {
		t.Errorf("status %q", m.Status())
	}
}

// At 80 columns the key line of every view keeps "? keys" and "q quit" in
// sight, dropping first the keys that work everywhere (tab, esc, n, p),
// and keeps what the view itself adds (W in Devices, enter in Audit).
func TestHintsKeepHelpInSight(t *testing.T) {
	m := New(openDemo(t, "strong_keeper", switchsim.Physical), 80, 24, Options{})
	press(m, "n", "tab", "tab")
	for _, c := range []struct{ key, own string }{{"r", "replay"}, {"v", "go to step"}, {"w", "scroll"}, {"d", "W size"}, {"t", "unwatch"}, {"l", "scroll"}} {
		press(m, c.key)
		m.focus = focusDetail
		m.applyFocus()
		h := m.hints()
		if !strings.Contains(h, "? keys") || !strings.Contains(h, "q quit") || !strings.Contains(h, c.own) {
			t.Errorf("view %s: %q", m.view, h)
		}
	}
}
