package tui

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"

	"railyard/switchsim"
	"railyard/switchsim/netfile"
	"railyard/switchsim/session"
	"railyard/switchsim/steps"
	"railyard/tui/internal/paneltest"
	"railyard/tui/panel"
)

func openDemo(t testing.TB, name string, mode switchsim.Mode) *session.Session {
	t.Helper()
	return paneltest.Demo(t, name, mode)
}

// lineWith is the first line of the frame holding every one of words.
func lineWith(view string, words ...string) string {
	for _, l := range strings.Split(view, "\n") {
		ok := true
		for _, w := range words {
			ok = ok && strings.Contains(l, w)
		}
		if ok {
			return l
		}
	}
	return ""
}

// gridRow is the Rounds grid's row of a node: on the right of the
// divider, its mark cell, a space, then its name.
func gridRow(view, name string) string {
	for _, l := range strings.Split(view, "\n") {
		_, right, ok := strings.Cut(l, "│")
		if ok && (strings.HasPrefix(right, "  "+name+" ") || strings.HasPrefix(right, "• "+name+" ")) {
			return right
		}
	}
	return ""
}

// fakeSave records what the explorer asked an owner to keep.
type fakeSave struct {
	kinds []SaveKind
	files [][]byte
	err   error
}

func (f *fakeSave) save(kind SaveKind, write func(io.Writer) error) (string, error) {
	if f.err != nil {
		return "", f.err
	}
	var b bytes.Buffer
	if err := write(&b); err != nil {
		return "", err
	}
	f.kinds = append(f.kinds, kind)
	f.files = append(f.files, b.Bytes())
	return fmt.Sprintf("kept-%d%s", len(f.files), kind.Ext()), nil
}

// With Options.Save the save key offers the trace or a VCD, no path is
// typed or shown, and the owner's function writes what the session holds.
func TestSaveToTheOwnersPlace(t *testing.T) {
	s := openFixture(t)
	f := &fakeSave{}
	m := New(s, 80, 24, Options{Save: f.save})
	press(m, "n", "s")
	v := m.View()
	if !strings.Contains(v, "save the session trace") || strings.Contains(v, "save trace as") {
		t.Fatalf("with Options.Save, s shows a path prompt:\n%s", v)
	}
	press(m, "enter")
	if len(f.files) != 1 || f.kinds[0] != SaveTrace || !bytes.Contains(f.files[0], []byte("railyard-trace 2")) {
		t.Fatalf("enter did not hand the trace to the owner: %d files %v", len(f.files), f.kinds)
	}
	if !strings.Contains(m.Status(), "saved the trace (2 actions) as kept-1.trace") {
		t.Errorf("status %q does not say what was saved and the owner's name for it", m.Status())
	}
	press(m, "s", "tab")
	if !strings.Contains(m.View(), "save a VCD") {
		t.Fatalf("tab does not switch to a VCD:\n%s", m.View())
	}
	press(m, "enter")
	// IEEE 1364-2005 §18.2: a VCD starts with its header sections and ends
	// the header with $enddefinitions
	if len(f.files) != 2 || f.kinds[1] != SaveVCD || !bytes.HasPrefix(f.files[1], []byte("$date")) ||
		!bytes.Contains(f.files[1], []byte("$enddefinitions $end")) {
		t.Fatalf("the second save is not a VCD: %v", f.kinds)
	}
	press(m, "s", "esc")
	if len(f.files) != 2 {
		t.Error("esc saved anyway")
	}
	// s typed into a filter is a letter of the filter, never a save (the
	// server once took the key before the explorer saw it)
	press(m, "tab", "/", "s")
	if len(f.files) != 2 || m.prompt.Active() || !strings.Contains(m.View(), "/s") {
		t.Errorf("s in a filter opened the save: %d files, prompt %v", len(f.files), m.prompt.Active())
	}
	press(m, "esc")
	f.err = errors.New("the folder is full")
	press(m, "s", "enter")
	if m.statusAs != statusFail || !strings.Contains(m.Status(), "the folder is full") {
		t.Errorf("an owner's error is not shown as a failure: %q", m.Status())
	}
}

// SaveInDir writes under the folder, with the name it is given, and
// refuses a name that is a path.
func TestSaveInDir(t *testing.T) {
	dir := t.TempDir()
	save := SaveInDir(dir, func(k SaveKind) string { return "alice-1" + k.Ext() })
	shown, err := save(SaveTrace, func(w io.Writer) error { _, err := io.WriteString(w, "x"); return err })
	if err != nil || shown != "alice-1.trace" {
		t.Fatalf("SaveInDir: %q, %v", shown, err)
	}
	if b, err := os.ReadFile(filepath.Join(dir, "alice-1.trace")); err != nil || string(b) != "x" {
		t.Fatalf("file under the folder: %q, %v", b, err)
	}
	for _, bad := range []string{"../up.trace", "a/b.trace", "..", ""} {
		bad := bad
		_, err := SaveInDir(dir, func(SaveKind) string { return bad })(SaveTrace, func(io.Writer) error { return nil })
		if err == nil {
			t.Errorf("SaveInDir took the name %q", bad)
		}
	}
}

// s asks before it replaces a file it did not write itself (issue 18
// item 14); n keeps the file, y replaces it; a second save of its own file
// asks nothing; a folder at the path is refused.
func TestSaveAsksBeforeReplacing(t *testing.T) {
	s := openFixture(t)
	dir := t.TempDir()
	path := filepath.Join(dir, "old.trace")
	if err := os.WriteFile(path, []byte("keep me"), 0o644); err != nil {
		t.Fatal(err)
	}
	m := New(s, 80, 24, Options{})
	save := func(answer ...string) {
		press(m, "s", "ctrl+u")
		typeText(m, path)
		press(m, "enter")
		press(m, answer...)
	}
	save()
	if !strings.Contains(m.View(), "old.trace is there: replace it?") {
		t.Fatalf("no question before replacing:\n%s", m.View())
	}
	press(m, "n")
	if b, _ := os.ReadFile(path); string(b) != "keep me" {
		t.Fatalf("n replaced the file: %q", b)
	}
	save("y")
	if b, _ := os.ReadFile(path); !bytes.Contains(b, []byte("railyard-trace 2")) {
		t.Fatalf("y did not replace the file: %q", b)
	}
	press(m, "n")
	save()
	if m.prompt.Active() {
		t.Errorf("saving again over its own file asks: %s", m.prompt.View())
	}
	if b, _ := os.ReadFile(path); bytes.Count(b, []byte("\naction ")) != 2 {
		t.Errorf("the second save did not write the start and the step")
	}
	press(m, "s", "ctrl+u")
	typeText(m, dir)
	press(m, "enter")
	if m.statusAs != statusFail || !strings.Contains(m.Status(), "not a regular file") {
		t.Errorf("a folder at the path: status %q", m.Status())
	}
}

// g starts empty, goes where it is told, closes on Enter and says why a
// number is refused (issue 18 item 9: at step 5, g 2 Enter asked for 52).
func TestJumpPrompt(t *testing.T) {
	s := openFixture(t)
	m := New(s, 80, 24, Options{})
	press(m, "n", "n", "n", "g")
	if m.prompt.Value() != "" {
		t.Fatalf("g pre-fills %q", m.prompt.Value())
	}
	press(m, "2", "enter")
	if s.NextStep() != 2 || m.prompt.Active() {
		t.Fatalf("g 2 enter: next step %d, prompt open %v; want 2 and closed", s.NextStep(), m.prompt.Active())
	}
	press(m, "g", "9", "enter")
	if m.prompt.Active() || s.NextStep() != 2 {
		t.Fatalf("g 9: prompt open %v, next step %d; want closed and unchanged", m.prompt.Active(), s.NextStep())
	}
	if !strings.Contains(m.Status(), "there is no step 9: the steps file has 4") {
		t.Errorf("refusal not explained: %q", m.Status())
	}
	press(m, "g", "enter")
	if m.prompt.Active() || !strings.Contains(m.Status(), "no step given") {
		t.Errorf("g enter: prompt open %v, status %q", m.prompt.Active(), m.Status())
	}
}

// Keys that do nothing say what they need, or act on the focused panel
// (issue 18 item 10).
func TestKeysSayWhatTheyNeed(t *testing.T) {
	s := openFixture(t)
	m := New(s, 120, 40, Options{})
	press(m, "tab") // the board
	for _, k := range []string{"space", "0", "1"} {
		press(m, k)
		if s.Actions() != 1 || !strings.Contains(m.Status(), "tab goes to Inputs") || m.statusAs != statusNote {
			t.Errorf("%s on the board: %d actions, status %q (want a note on where it works)", k, s.Actions(), m.Status())
		}
	}
	// / with the inputs focused filters the inputs
	press(m, "shift+tab")
	if m.focus != focusInputs {
		t.Fatalf("focus %d, want the inputs", m.focus)
	}
	press(m, "/")
	typeText(m, "b")
	press(m, "enter")
	if m.inputs.Shown() != 1 || m.names.Node[m.inputs.Selected()] != "b" {
		t.Fatalf("input filter b: %d shown, selected %d", m.inputs.Shown(), m.inputs.Selected())
	}
	press(m, "1")
	if s.InputDrive(node(t, s, "b")) != switchsim.Drive1 {
		t.Error("1 after the input filter did not drive b")
	}
	press(m, "esc")
	if m.inputs.Shown() != 3 {
		t.Errorf("esc left %d inputs shown, want 3", m.inputs.Shown())
	}
	// enter on a device row: the Why view of its gate
	press(m, "d", "tab", "tab")
	if m.focus != focusDetail {
		t.Fatalf("focus %d, want the detail view", m.focus)
	}
	press(m, "home", "enter")
	d := m.devices.Selected()
	g := s.Netlist().Device(d).Gate
	if m.ShownView() != ViewWhy || m.why.Node() != g {
		t.Errorf("enter on device %s: view %s explaining %d, want Why of its gate %d", s.Netlist().Device(d).Name, m.ShownView(), m.why.Node(), g)
	}
	// plain information carries no failure mark (issue 18 item 13)
	press(m, "e", "n")
	if m.statusAs != statusNote || strings.Contains(m.statusLine(), "✗") {
		t.Errorf("'no more steps' drawn as a failure: %q", m.statusLine())
	}
}

// The help's page keys are offered only when there are pages to turn.
func TestHelpPagesOnlyWhenThereArePages(t *testing.T) {
	s := openFixture(t)
	for _, c := range []struct {
		w, h  int
		pages bool
	}{{80, 24, true}, {200, 60, false}} {
		m := New(s, c.w, c.h, Options{})
		press(m, "?")
		if got := strings.Contains(m.hints(), "pages"); got != c.pages {
			t.Errorf("%dx%d: help shows the page keys %v, want %v (%d pages)", c.w, c.h, got, c.pages, m.helpPages())
		}
	}
}

// The timeline watches the outputs and the checked nodes first (issue 18
// item 11: with 70 inputs it watched the first 12 inputs and no output).
func TestTimelineWatchesOutputsFirst(t *testing.T) {
	b := switchsim.NewBuilder()
	var ins []string
	for i := 0; i < 20; i++ {
		ins = append(ins, fmt.Sprintf("i%d", i))
		if err := b.Input(ins[i]); err != nil {
			t.Fatal(err)
		}
	}
	if err := b.NMOS("t0", "i0", "i1", "chk", switchsim.DeviceOpts{}); err != nil {
		t.Fatal(err)
	}
	if err := b.NMOS("t1", "i2", "chk", "y", switchsim.DeviceOpts{}); err != nil {
		t.Fatal(err)
	}
	if err := b.Output("y"); err != nil {
		t.Fatal(err)
	}
	nl, err := b.Compile()
	if err != nil {
		t.Fatal(err)
	}
	st, err := steps.Read("w.steps", []byte("apply i5\ncheck chk\n1 | -\n"), nl)
	if err != nil {
		t.Fatal(err)
	}
	s := session.New(&netfile.Design{Name: "w", Netlist: nl}, "w.sw", st, session.Options{})
	m := New(s, 80, 24, Options{})
	var got []string
	for _, n := range m.watched {
		got = append(got, m.names.Node[n])
	}
	if len(got) != 12 || got[0] != "y" || got[1] != "chk" || got[2] != "i5" || got[3] != "i0" {
		t.Errorf("watched %v: want 12, the output y, the checked chk, the applied i5, then the inputs", got)
	}
}

// Long names are cut in the middle and stay distinct on the board
// (issue 18 item 12: operand_select and operand_select_b both read
// operand_s…).
func TestLongNamesStayDistinct(t *testing.T) {
	b := switchsim.NewBuilder()
	for _, in := range []string{"a", "en"} {
		if err := b.Input(in); err != nil {
			t.Fatal(err)
		}
	}
	for _, d := range [][3]string{{"p1", "a", "operand_select"}, {"p2", "operand_select", "operand_select_b"}} {
		if err := b.NMOS(d[0], "en", d[1], d[2], switchsim.DeviceOpts{}); err != nil {
			t.Fatal(err)
		}
	}
	nl, err := b.Compile()
	if err != nil {
		t.Fatal(err)
	}
	s := session.New(&netfile.Design{Name: "long", Netlist: nl}, "long.sw", nil, session.Options{})
	m := New(s, 80, 24, Options{})
	// the board is 32 cells at 80 columns: 11 for the name
	v := m.View()
	a, b2 := lineWith(v, "opera…elect "), lineWith(v, "opera…ect_b ")
	if a == "" || b2 == "" {
		t.Fatalf("the two names are not cut in the middle, distinctly:\n%s", v)
	}
	press(m, "tab", "down")
	if !strings.Contains(lineWith(m.View(), "Nodes"), "operand_select_b") {
		t.Errorf("the selected cut name is not shown whole in the board's title:\n%s", m.View())
	}
}

// The Vectors view shows every wanted value of the selected row, even
// when the row's column cuts them off (issue 18 item 12), and → scrolls
// the column.
func TestVectorsShowWantedValues(t *testing.T) {
	s := openDemo(t, "mux4_tgate", switchsim.Physical)
	m := New(s, 80, 24, Options{})
	press(m, "v", "tab", "tab")
	want := stepRows(s, m.names)[0].Want
	v := m.View()
	if !strings.Contains(strings.Join(strings.Fields(v), " "), "wants "+want) {
		t.Errorf("the selected row's wants %q are not spelled out:\n%s", want, v)
	}
	before := lineWith(v, " 1 ")
	press(m, "right")
	if after := lineWith(m.View(), " 1 "); after == before {
		t.Errorf("→ did not scroll the values column: %q", after)
	}
}

// Gate volts are shown wherever a gate is not at a full level, in Why and
// Devices (issue 18 item 4), and not where it is. demo:strong_keeper after
// its second step: the keeper wins, s sits at 0.20 V (an L), so fwd.p's
// gate s is not a full 0; clk is a full 1.
func TestGateVoltsWhereNotFull(t *testing.T) {
	s := openDemo(t, "strong_keeper", switchsim.Physical)
	m := New(s, 120, 40, Options{})
	press(m, "n", "n")
	sv := s.Node(node(t, s, "s")).Volts
	if panel.FullLevel(sv, s.Node(s.Netlist().Power()).Volts) {
		t.Fatalf("s at %.2f V is a full level: the demo no longer shows the fight", sv)
	}
	volts := fmt.Sprintf("%.2f", sv)
	press(m, "tab")
	m.nodes.Select(node(t, s, "s_b"))
	press(m, "enter")
	if l := lineWith(m.View(), "fwd.p", "gate s=0"); !strings.Contains(l, "("+volts+" V)") {
		t.Errorf("Why of s_b: fwd.p's gate line %q lacks (%s V)", l, volts)
	}
	press(m, "d")
	v := m.View()
	if l := lineWith(v, "fwd.p", "pmos"); !strings.Contains(l, "s=0 "+volts+"V") {
		t.Errorf("Devices: fwd.p's row %q lacks s=0 %sV", l, volts)
	}
	if l := lineWith(v, "pass.n", "nmos"); !strings.Contains(l, "clk=1 ") || strings.Contains(l, "clk=1 1.80V") {
		t.Errorf("Devices: pass.n's gate clk is a full 1 and needs no volts: %q", l)
	}
	// at 80 columns too: the channel is cut before the volts
	m80 := New(s, 80, 24, Options{})
	press(m80, "d")
	if l := lineWith(m80.View(), "fwd.p", "pmos"); !strings.Contains(l, "s=0 "+volts+"V") {
		t.Errorf("Devices at 80x24: fwd.p's row %q lacks s=0 %sV", l, volts)
	}
	// W/L as the design file draws them (strong_keeper.sw: keeper w=1.44u l=0.18u)
	if l := lineWith(v, "keep.n", "nmos"); !strings.Contains(l, "1.44/0.18") {
		t.Errorf("Devices: keep.n's row %q lacks its W/L 1.44/0.18", l)
	}
}

// The Rounds view shows each node's volts as of the replayed round and the
// Elmore delay estimate of its change, and names the settle's slowest
// chain (issue 18 item 5).
func TestRoundsShowVoltsAndDelays(t *testing.T) {
	s := openDemo(t, "static_latch", switchsim.Physical)
	m := New(s, 120, 40, Options{})
	press(m, "n")
	e := s.Last()
	v := m.View()
	if !strings.Contains(v, "volts    delay") {
		t.Fatalf("no volts and delay columns:\n%s", v)
	}
	for _, c := range e.Changes {
		row := gridRow(v, m.names.Node[c.Node])
		if c.Round == e.Rounds && !strings.Contains(row, fmt.Sprintf("%.2f", c.Volts)) {
			t.Errorf("row of %s %q lacks its volts %.2f", m.names.Node[c.Node], row, c.Volts)
		}
		if c.Round == e.Rounds && !math.IsNaN(c.Delay) && !strings.Contains(row, panel.Seconds(c.Delay)) {
			t.Errorf("row of %s %q lacks its delay %s", m.names.Node[c.Node], row, panel.Seconds(c.Delay))
		}
	}
	if !regexp.MustCompile(`slowest chain [0-9.]+[pnu]?s \(Elmore\): `).MatchString(v) {
		t.Errorf("no slowest chain line:\n%s", v)
	}
	// ideal mode: no volts, no delays, no chain
	si := openDemo(t, "static_latch", switchsim.Ideal)
	mi := New(si, 120, 40, Options{})
	press(mi, "n")
	if v := mi.View(); strings.Contains(v, "volts    delay") || strings.Contains(v, "slowest chain") {
		t.Errorf("ideal mode shows volts or delays:\n%s", v)
	}
}
