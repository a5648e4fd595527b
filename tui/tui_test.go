package tui

import (
	"bytes"
	"flag"
	"io"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	tea "github.com/charmbracelet/bubbletea"
	"github.com/charmbracelet/lipgloss"
	"github.com/charmbracelet/x/ansi"
	"github.com/charmbracelet/x/exp/golden"
	"github.com/muesli/termenv"

	"railyard/switchsim"
	"railyard/switchsim/session"
	"railyard/tui/internal/paneltest"
)

// The fixture testdata/opsel.sw is a 2:1 selector, y = sel ? b : a (common
// practice for a transmission-gate selector); its steps file's rows 1-3
// hold and row 4 fails on purpose.

func TestMain(m *testing.M) {
	flag.Parse()
	// colour off: goldens and substring checks see plain text
	lipgloss.SetColorProfile(termenv.Ascii)
	os.Exit(m.Run())
}

func openFixture(t testing.TB) *session.Session {
	t.Helper()
	s, err := session.Open(filepath.Join("testdata", "opsel.sw"), "", session.Options{Mode: switchsim.Ideal})
	if err != nil {
		t.Fatal(err)
	}
	if s.NumSteps() != 4 {
		t.Fatalf("fixture steps: got %d rows, the file has 4", s.NumSteps())
	}
	return s
}

// keyMsg turns a key name into the message a terminal would send.
func keyMsg(k string) tea.KeyMsg { return paneltest.Key(k) }

// send gives the model a message and then the messages its commands send
// (the panels' intents), as the program would; it reports whether a
// command asked to quit.
func send(m *Model, msg tea.Msg) (quit bool) {
	_, cmd := m.Update(msg)
	return run(m, cmd)
}

func run(m *Model, cmd tea.Cmd) (quit bool) {
	if cmd == nil {
		return false
	}
	switch msg := cmd().(type) {
	case nil:
	case tea.QuitMsg:
		return true
	case tea.BatchMsg:
		for _, c := range msg {
			quit = run(m, c) || quit
		}
	default:
		// tea.Sequence's message is a list of commands run in order.
		if v := reflect.ValueOf(msg); v.Kind() == reflect.Slice && v.Type().Elem() == reflect.TypeOf(tea.Cmd(nil)) {
			for i := 0; i < v.Len(); i++ {
				quit = run(m, v.Index(i).Interface().(tea.Cmd)) || quit
			}
			return quit
		}
		quit = send(m, msg)
	}
	return quit
}

func press(m *Model, keys ...string) {
	for _, k := range keys {
		send(m, keyMsg(k))
	}
}

func typeText(m *Model, s string) {
	for _, r := range s {
		send(m, tea.KeyMsg{Type: tea.KeyRunes, Runes: []rune{r}})
	}
}

// checkScreen asserts the frame has h lines of at most w cells (trailing
// spaces are trimmed), and that the two columns line up: the divider is in
// the same cell on every body line.
func checkScreen(t *testing.T, view string, w, h int) {
	t.Helper()
	lines := strings.Split(view, "\n")
	if len(lines) != h {
		t.Fatalf("screen has %d lines, want %d", len(lines), h)
	}
	for i, l := range lines {
		if n := ansi.StringWidth(l); n > w {
			t.Fatalf("line %d is %d cells wide, more than %d: %q", i+1, n, w, l)
		}
	}
	col := func(l string) int {
		p := strings.Index(ansi.Strip(l), "│")
		if p < 0 {
			return -1
		}
		return ansi.StringWidth(ansi.Strip(l)[:p])
	}
	if h < 4 || col(lines[1]) < 0 {
		return // the help page or the too-small notice: no columns
	}
	want := col(lines[1])
	for i := 1; i < h-2; i++ {
		if c := col(lines[i]); c != want {
			t.Fatalf("line %d has the divider at cell %d, line 2 at %d:\n%s", i+1, c, want, view)
		}
	}
}

func node(t testing.TB, s *session.Session, name string) int {
	t.Helper()
	n, ok := s.Netlist().Lookup(name)
	if !ok {
		t.Fatalf("no node %s", name)
	}
	return n
}

func TestStartScreen(t *testing.T) {
	s := openFixture(t)
	m := New(s, 80, 24, Options{})
	v := m.View()
	checkScreen(t, v, 80, 24)
	for _, want := range []string{"opsel", "Inputs", "Nodes", "sel", "y", "Rounds", "step 0/4"} {
		if !strings.Contains(v, want) {
			t.Errorf("start screen lacks %q", want)
		}
	}
}

func TestToggleAndSet(t *testing.T) {
	s := openFixture(t)
	m := New(s, 80, 24, Options{})
	sel, a := node(t, s, "sel"), node(t, s, "a")
	// inputs start driven x; toggling anything but 0 gives 0 (session.Toggle)
	press(m, "space")
	if d := s.InputDrive(sel); d != switchsim.Drive0 {
		t.Fatalf("after space sel is driven %s, want 0", d)
	}
	press(m, "down", "1")
	if d := s.InputDrive(a); d != switchsim.Drive1 {
		t.Fatalf("after 1 a is driven %s, want 1", d)
	}
	// sel = 0 selects a (the fixture's function): y = 1, strong through a full transmission gate
	y := s.Node(node(t, s, "y"))
	if y.Value != switchsim.V1 || y.State != switchsim.State1 {
		t.Fatalf("y = %s/%s, want 1/1 (sel=0 selects a=1)", y.Value, y.State)
	}
	if !strings.Contains(m.Status(), "set a=1") {
		t.Errorf("status %q does not report the set", m.Status())
	}
	press(m, "z")
	if d := s.InputDrive(a); d != switchsim.DriveZ {
		t.Fatalf("after z a is %s, want z", d)
	}
	press(m, "x")
	if d := s.InputDrive(a); d != switchsim.DriveX {
		t.Fatalf("after x a is %s, want x", d)
	}
	// the rounds view shows the last settle: y changed
	press(m, "r")
	if v := m.View(); !strings.Contains(v, "set a=x") {
		t.Errorf("rounds view does not name the last action:\n%s", v)
	}
}

func TestStepForwardBackAndFailure(t *testing.T) {
	s := openFixture(t)
	m := New(s, 80, 24, Options{})
	press(m, "n")
	if s.NextStep() != 1 {
		t.Fatalf("after n the next step is %d, want 1", s.NextStep())
	}
	y := node(t, s, "y")
	// row 1: sel=0 a=1 -> y=1 (selector function)
	if v := s.Node(y).Value; v != switchsim.V1 {
		t.Fatalf("after step 1 y=%s, want 1", v)
	}
	press(m, "n")
	// row 2: sel=1 b=0 -> y=0
	if v := s.Node(y).Value; v != switchsim.V0 {
		t.Fatalf("after step 2 y=%s, want 0", v)
	}
	press(m, "p")
	if s.NextStep() != 1 || s.Node(y).Value != switchsim.V1 {
		t.Fatalf("after p: next step %d y=%s, want 1 and 1 (restored from the snapshot)", s.NextStep(), s.Node(y).Value)
	}
	// f runs to the first failing check: row 4 wants y=1 but a=0 is selected
	press(m, "f")
	if s.NextStep() != 4 || !s.Last().Failed() {
		t.Fatalf("after f: next step %d, last failed %v; want 4 and true", s.NextStep(), s.Last().Failed())
	}
	v := m.View()
	if !strings.Contains(v, "FAIL y") {
		t.Errorf("header does not flag the failing check:\n%s", v)
	}
	if !strings.Contains(m.Status(), "CHECK FAILED") {
		t.Errorf("status %q does not spell out the failure", m.Status())
	}
	press(m, "v")
	v = m.View()
	if !strings.Contains(v, "y want 1 got 0") || !strings.Contains(v, "FAIL") {
		t.Errorf("vectors view does not show the failed check:\n%s", v)
	}
	// g jumps: to step 2
	press(m, "g", "2", "enter")
	if s.NextStep() != 2 {
		t.Fatalf("after g 2 the next step is %d, want 2", s.NextStep())
	}
	press(m, "e")
	if s.NextStep() != 4 {
		t.Fatalf("after e the next step is %d, want 4 (the end)", s.NextStep())
	}
}

func TestInspect(t *testing.T) {
	s := openFixture(t)
	m := New(s, 120, 40, Options{})
	press(m, "n")   // sel=0 a=1: y comes from a through ta
	press(m, "tab") // to the node board; y is the first node (outputs first)
	press(m, "enter")
	if m.ShownView() != ViewWhy {
		t.Fatalf("enter on a node shows %s, want Why", m.ShownView())
	}
	v := m.View()
	for _, want := range []string{"y is 1", "a (input)", "ta.n", "gate sel_b=1"} {
		if !strings.Contains(v, want) {
			t.Errorf("why view lacks %q:\n%s", want, v)
		}
	}
	// the devices view marks y's group: ta's two devices are on, tb's off
	press(m, "d")
	v = m.View()
	if !strings.Contains(v, "group of y") {
		t.Errorf("devices view does not name the group:\n%s", v)
	}
	marked := 0
	for _, l := range strings.Split(v, "\n") {
		if strings.Contains(l, "◇ta.") {
			marked++
		}
		if strings.Contains(l, "◇tb.") {
			t.Errorf("tb is off and not in y's group, but is marked: %q", l)
		}
	}
	if marked != 2 {
		t.Errorf("%d of ta's devices marked, want 2 (ta.n and ta.p are on)", marked)
	}
}

func TestFilter(t *testing.T) {
	s := openFixture(t)
	m := New(s, 80, 24, Options{})
	press(m, "tab", "/") // on the board: / filters the nodes
	typeText(m, "sel")
	v := m.View()
	if !strings.Contains(v, "sel_b") {
		t.Errorf("filter sel hides sel_b:\n%s", v)
	}
	if m.nodes.Shown() != 1 {
		t.Errorf("filter sel shows %d nodes, want 1 (sel_b; sel is an input)", m.nodes.Shown())
	}
	press(m, "enter") // keep it
	press(m, "n")     // keys work again
	if s.NextStep() != 1 {
		t.Errorf("n after the filter: next step %d, want 1", s.NextStep())
	}
	press(m, "esc")
	if m.nodes.Shown() != 2 {
		t.Errorf("after esc %d nodes shown, want 2 (y, sel_b)", m.nodes.Shown())
	}
}

func TestSaveTraceAndVCD(t *testing.T) {
	s := openFixture(t)
	dir := t.TempDir()
	m := New(s, 80, 24, Options{})
	press(m, "n", "n", "s")
	if !strings.Contains(m.View(), "save trace as opsel.trace") {
		t.Fatalf("save prompt does not offer the default name:\n%s", m.View())
	}
	trace := filepath.Join(dir, "run.trace")
	press(m, "ctrl+u")
	typeText(m, trace)
	press(m, "enter")
	b, err := os.ReadFile(trace)
	if err != nil {
		t.Fatalf("trace not written: %v (status %q)", err, m.Status())
	}
	// the trace format's magic line and the two steps (switchsim/trace)
	if !bytes.Contains(b, []byte("railyard-trace 2")) || bytes.Count(b, []byte("\naction ")) != 3 {
		t.Errorf("trace lacks the magic line or the start and two steps:\n%s", b)
	}
	vcd := filepath.Join(dir, "run.vcd")
	press(m, "s", "tab")
	if !strings.Contains(m.View(), "export VCD as opsel.vcd") {
		t.Fatalf("tab does not switch the prompt to VCD:\n%s", m.View())
	}
	press(m, "ctrl+u")
	typeText(m, vcd)
	press(m, "enter")
	b, err = os.ReadFile(vcd)
	if err != nil {
		t.Fatalf("VCD not written: %v (status %q)", err, m.Status())
	}
	// IEEE 1364-2005 §18.2: a VCD declares its variables and ends the header with $enddefinitions
	if !bytes.HasPrefix(b, []byte("$date")) || !bytes.Contains(b, []byte("$enddefinitions $end")) {
		t.Errorf("not a VCD:\n%s", b)
	}
	// esc cancels without writing
	press(m, "s", "ctrl+u")
	typeText(m, filepath.Join(dir, "never.trace"))
	press(m, "esc")
	if _, err := os.Stat(filepath.Join(dir, "never.trace")); err == nil {
		t.Error("esc wrote the file anyway")
	}
}

func TestHelpAndEscape(t *testing.T) {
	s := openFixture(t)
	m := New(s, 80, 24, Options{})
	press(m, "?")
	// at 80x24 the keys take more than one page; read them all
	v := m.View()
	checkScreen(t, v, 80, 24)
	pages := m.helpPages()
	if pages < 2 {
		t.Fatalf("the help takes %d page at 80x24: the test expects to turn pages", pages)
	}
	for i := 1; i < pages; i++ {
		press(m, "right")
		checkScreen(t, m.View(), 80, 24)
		v += "\n" + m.View()
	}
	for _, want := range []string{"Everywhere", "next step", "toggle input", "filter nodes", "Waveforms", "quit", "release (float)",
		"ideal / physical mode", "try another W or L", "walk its sequence", "audit: every reachable state"} {
		if !strings.Contains(v, want) {
			t.Errorf("help lacks %q:\n%s", want, v)
		}
	}
	press(m, "esc")
	if strings.Contains(m.View(), "Everywhere") {
		t.Error("esc did not close the help")
	}
}

func TestResize(t *testing.T) {
	s := openFixture(t)
	m := New(s, 80, 24, Options{})
	m.Update(tea.WindowSizeMsg{Width: 60, Height: 20})
	v := m.View()
	checkScreen(t, v, 60, 20)
	if !strings.Contains(v, "needs 80x24") {
		t.Errorf("below the minimum it does not say so:\n%s", v)
	}
	press(m, "n") // ignored while too small
	if s.NextStep() != 0 {
		t.Error("a key acted while the screen was too small to show it")
	}
	for _, sz := range [][2]int{{80, 24}, {100, 30}, {120, 40}, {200, 60}} {
		m.Update(tea.WindowSizeMsg{Width: sz[0], Height: sz[1]})
		checkScreen(t, m.View(), sz[0], sz[1])
	}
}

// Every view at both sizes, in ASCII mode, has no byte outside ASCII.
func TestASCII(t *testing.T) {
	s := openFixture(t)
	for _, sz := range [][2]int{{80, 24}, {120, 40}} {
		m := New(s, sz[0], sz[1], Options{ASCII: true})
		press(m, "n", "tab", "m")
		for _, k := range []string{"r", "v", "w", "d", "t", "l", "?"} {
			press(m, k)
			v := m.View()
			checkScreen(t, v, sz[0], sz[1])
			for i := 0; i < len(v); i++ {
				if v[i] >= 0x80 {
					t.Fatalf("view %s at %dx%d has a non-ASCII byte near %q", k, sz[0], sz[1], v[max(i-20, 0):min(i+20, len(v))])
				}
			}
			press(m, "esc")
		}
	}
}

func TestEveryViewFits(t *testing.T) {
	s := openFixture(t)
	for _, sz := range [][2]int{{80, 24}, {120, 40}} {
		m := New(s, sz[0], sz[1], Options{})
		press(m, "n", "n", "f")
		for _, k := range []string{"r", "v", "w", "d", "t", "l"} {
			press(m, k)
			checkScreen(t, m.View(), sz[0], sz[1])
			press(m, "tab", "tab", "tab")
			checkScreen(t, m.View(), sz[0], sz[1])
		}
	}
}

// Goldens: whole screens, colour off. Update with go test ./tui -update
// after checking the new screens by eye. Checked by hand: the header (name,
// description, mode, step N/4, the FAIL badge after row 4), the columns
// lined up, the timeline watching the output y first, then the inputs in
// their order (y follows sel ? b : a on every action), and the Vectors view
// spelling out row 4: what it applies and its failed check.
func TestGolden(t *testing.T) {
	for _, c := range []struct {
		name string
		w, h int
		keys []string
	}{
		{"rounds_80x24", 80, 24, []string{"n", "n", "space"}},
		{"rounds_120x40", 120, 40, []string{"n", "n", "space"}},
		{"why_80x24", 80, 24, []string{"n", "tab", "enter"}},
		{"vectors_120x40", 120, 40, []string{"f", "v"}},
		{"timeline_120x40", 120, 40, []string{"n", "n", "n", "t"}},
	} {
		t.Run(c.name, func(t *testing.T) {
			s := openFixture(t)
			m := New(s, c.w, c.h, Options{})
			press(m, c.keys...)
			v := m.View()
			checkScreen(t, v, c.w, c.h)
			golden.RequireEqual(t, []byte(v))
		})
	}
}

// With NoColor on a 256-colour renderer, no colour sequence is written
// (NO_COLOR, no-color.org: "prevent the addition of ANSI color"); with colour
// on, the states are coloured.
func TestNoColor(t *testing.T) {
	s := openFixture(t)
	r := lipgloss.NewRenderer(io.Discard)
	r.SetColorProfile(termenv.ANSI256) // explicit: a renderer on a non-terminal detects no colour
	m := New(s, 120, 40, Options{NoColor: true, Renderer: r})
	press(m, "n", "f")
	for _, k := range []string{"r", "v", "w", "d", "t", "l"} {
		press(m, k)
		if v := m.View(); strings.Contains(v, "[38;") || strings.Contains(v, "[48;") {
			t.Fatalf("view %s writes colour with NoColor", k)
		}
	}
	c := New(s, 120, 40, Options{Renderer: r})
	if v := c.View(); !strings.Contains(v, "[38;5;") {
		t.Error("with colour on, nothing is coloured")
	}
}

// An owner's Notice (a server saying the session's trace is full) goes on
// the status line and its mark stays in the header after the status line
// has moved on; without one the header has no mark.
func TestNoticeFromTheOwner(t *testing.T) {
	s := openFixture(t)
	m := New(s, 100, 24, Options{Banner: "session abc234"})
	header := func() string { return strings.SplitN(m.View(), "\n", 2)[0] }
	if strings.Contains(header(), "trace full") {
		t.Fatalf("a mark before any notice: %q", header())
	}
	send(m, Notice{Text: "trace full at 16 KiB: later actions are not recorded", Mark: "trace full\x1b[2J"})
	if m.Status() != "trace full at 16 KiB: later actions are not recorded" {
		t.Errorf("status %q, want the notice", m.Status())
	}
	press(m, "space")
	if !strings.Contains(m.Status(), "set sel=0") {
		t.Errorf("status %q after a toggle, want the set", m.Status())
	}
	h := header()
	// The mark is printable (an owner's text is shown as the rest is).
	if !strings.Contains(h, `trace full\x1b[2J`) || !strings.Contains(h, "session abc234") {
		t.Errorf("header %q lacks the mark (made printable) or the banner", h)
	}
	checkScreen(t, m.View(), 100, 24)
}

// TestKeysInOneBurst: keys typed faster than they are read (a burst over
// SSH, a key held down) reach the model as one message of several runes.
// Each is a command of its own, in order: "nnn" applies three steps, and
// "g3" then Enter opens the jump prompt with 3 typed into it.
func TestKeysInOneBurst(t *testing.T) {
	s := openFixture(t)
	m := New(s, 80, 24, Options{})
	send(m, tea.KeyMsg{Type: tea.KeyRunes, Runes: []rune("nnn")})
	if s.NextStep() != 3 {
		t.Fatalf("after a burst of three n the next step is %d, want 3", s.NextStep())
	}
	send(m, tea.KeyMsg{Type: tea.KeyRunes, Runes: []rune("pp")})
	if s.NextStep() != 1 {
		t.Fatalf("after a burst of two p the next step is %d, want 1", s.NextStep())
	}
	send(m, tea.KeyMsg{Type: tea.KeyRunes, Runes: []rune("g4")})
	press(m, "enter")
	if s.NextStep() != 4 {
		t.Fatalf("after g4 enter in one burst the next step is %d, want 4", s.NextStep())
	}
	// A filter being typed takes the burst as text.
	press(m, "tab") // focus Nodes
	send(m, tea.KeyMsg{Type: tea.KeyRunes, Runes: []rune("/")})
	send(m, tea.KeyMsg{Type: tea.KeyRunes, Runes: []rune("nn")})
	if s.NextStep() != 4 {
		t.Fatalf("n typed into a filter applied a step: next step %d", s.NextStep())
	}
}
