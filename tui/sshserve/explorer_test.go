package sshserve

import (
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
	"time"

	"railyard/designs"
	"railyard/switchsim/session"
	"railyard/switchsim/trace"
)

// opselDesign is an operand selector bit of this project's own: pick chooses
// the register or the immediate operand for the adder's A port through two
// transmission gates.
const opselDesign = `design opsel "operand pick for the adder's A port"
input pick reg imm
output opa
use inv pinv pick pick_b
tgate treg pick_b pick reg opa
tgate timm pick pick_b imm opa
`

// realExplorer serves the railyard explorer and the embedded demos.
func realExplorer(c *Config) { c.Explorer, c.Demos = nil, nil }

// The explorer's inputs panel draws an input as "NAME = DRIVE" (tui/inputs),
// and every input starts driven x (DEVELOPERS.md: inputs start driven X).
const (
	pickX = "pick = x"
	pick0 = "pick = 0" // space on an input at x drives 0 (session.Toggle: anything but 0 becomes 0)
	pick1 = "pick = 1"
)

func TestExplorerOnTheChosenDesign(t *testing.T) {
	ts := startServer(t, 1, realExplorer)
	ts.writeDesign(t, "opsel.sw", opselDesign)
	tm := ts.open(t, ts.keys[0], "alice", "opsel", 80, 24)
	tm.waitFor("opsel operand pick for the adder's A port")
	tm.waitFor(pickX)
	id := tm.sessionID()
	tm.waitFor("session " + id) // the banner in the header
	tm.send(" ")
	tm.waitFor(pick0)
	tm.send("q")
	if st := tm.exit(); st != 0 {
		t.Fatalf("exit status %d, want 0", st)
	}
}

func TestExplorerOnADemoWithItsSteps(t *testing.T) {
	ts := startServer(t, 1, realExplorer)
	var name string
	for _, e := range designs.List() {
		if _, err := designs.FS.ReadFile(e.Name + ".steps"); err == nil {
			name = e.Name
			break
		}
	}
	if name == "" {
		t.Skip("no demo with steps")
	}
	tm := ts.open(t, ts.keys[0], "alice", "demo:"+name, 100, 30)
	tm.waitFor(name)
	tm.waitFor("step 0/") // the default steps are loaded (the header counts them)
}

func TestExplorerSessionsDoNotShareState(t *testing.T) {
	ts := startServer(t, 1, realExplorer)
	ts.writeDesign(t, "opsel.sw", opselDesign)
	a := ts.open(t, ts.keys[0], "alice", "opsel", 80, 24)
	b := ts.open(t, ts.keys[0], "bob", "opsel", 80, 24)
	a.waitFor(pickX)
	b.waitFor(pickX)
	a.send(" ")
	a.waitFor(pick0)
	b.send(" ")
	b.waitFor(pick0)
	b.send(" ")
	b.waitFor(pick1) // b: x, 0, 1
	b.send("q")
	b.exit()
	a.send("q")
	a.exit()
	if strings.Contains(a.text(), pick1) {
		t.Errorf("a shows pick = 1, which only b set:\n%s", tail(a.text(), 2000))
	}
}

func TestExplorerViewerSeesChangesAndChangesNothing(t *testing.T) {
	ts := startServer(t, 2, realExplorer)
	ts.writeDesign(t, "opsel.sw", opselDesign)
	h := ts.open(t, ts.keys[0], "alice", "opsel", 80, 24)
	id := h.sessionID()
	v := ts.open(t, ts.keys[1], "bob", "join "+id, 100, 30)
	v.waitFor("watching session " + id)
	v.waitFor(pickX)
	h.send(" ")
	h.waitFor(pick0)
	v.waitFor(pick0) // the host's change reaches the viewer

	// Every key that changes a session, and the save key with what its
	// question takes (tab for a VCD, enter), in the viewer.
	for _, k := range []string{"1", "z", " ", "n", "e", "p", "s", "\r", "s", "\t", "\r"} {
		v.send(k)
		time.Sleep(20 * time.Millisecond) // apart, so each is its own key
	}
	time.Sleep(300 * time.Millisecond)
	for _, bad := range []string{pick1, "pick = z", "set pick=1"} {
		if strings.Contains(h.text(), bad) {
			t.Errorf("the viewer's keys reached the host (%q):\n%s", bad, tail(h.text(), 2000))
		}
	}
	// Nothing is saved by anyone: the host has not saved yet, and a viewer
	// has no way to.
	if m, _ := filepath.Glob(filepath.Join(ts.dir, "traces", "*", "*")); len(m) > 0 {
		t.Errorf("the viewer saved a file: %v", m)
	}
	if strings.Contains(v.text(), "save the session trace") || strings.Contains(h.text(), "save the session trace") {
		t.Errorf("the viewer's s opened a save question")
	}
	h.send("1")
	h.waitFor(pick1)
	v.waitFor(pick1)
	h.send("q")
	h.exit()
	v.waitFor("has ended")
	if st := v.exit(); st != 0 {
		t.Errorf("viewer exit status %d, want 0", st)
	}
}

// saveOver presses the save key in a served explorer, which asks only what
// to save (tab switches to a VCD), and enter; it returns the name the
// status line shows, USER/DESIGN-DATE-TIME-ID.EXT.
func (tm *term) saveOver(vcd bool) string {
	tm.t.Helper()
	tm.send("s")
	tm.waitFor("save the session trace") // the explorer's choice, not a path prompt
	want := `saved the trace \(\d+ actions?\) as (\S+\.trace)`
	if vcd {
		tm.send("\t")
		tm.waitFor("save a VCD of the history")
		want = `saved a VCD of \d+ actions? as (\S+\.vcd)`
	}
	tm.send("\r")
	re := regexp.MustCompile(want)
	end := time.Now().Add(readDeadline)
	for time.Now().Before(end) {
		if m := re.FindStringSubmatch(tm.text()); m != nil {
			return m[1]
		}
		time.Sleep(5 * time.Millisecond)
	}
	tm.t.Fatalf("no %q within %s; output:\n%s", want, readDeadline, tail(tm.text(), 2000))
	return ""
}

// namePattern is the server's naming scheme for alice's files on opsel.
var namePattern = regexp.MustCompile(`^alice/opsel-\d{8}-\d{6}-[a-z2-9]{6}\.(trace|vcd)$`)

func TestExplorerTraceIsSavedAndReplays(t *testing.T) {
	ts := startServer(t, 1, realExplorer)
	ts.writeDesign(t, "opsel.sw", opselDesign)
	tm := ts.open(t, ts.keys[0], "alice", "opsel", 120, 30)
	tm.waitFor(pickX)
	tm.send(" ")
	tm.waitFor(pick0)
	shown := tm.saveOver(false)
	if !namePattern.MatchString(shown) {
		t.Errorf("trace shown as %q, want alice/opsel-DATE-TIME-ID.trace", shown)
	}
	for _, prompt := range []string{"save trace as", "export VCD as"} {
		if strings.Contains(tm.text(), prompt) {
			t.Errorf("the explorer's path prompt opened (%q): it would take any path on the server", prompt)
		}
	}
	p := filepath.Join(ts.dir, "traces", filepath.FromSlash(shown))
	src, err := os.ReadFile(p)
	must(t, err)
	_, acts, err := trace.ReadAll(p, src)
	must(t, err)
	// Start, then the one toggle: pick driven 0.
	if len(acts) != 2 || acts[1].Kind != session.Set || acts[1].Set != [2]string{"pick", "0"} {
		t.Fatalf("trace actions %+v, want start then set pick 0", acts)
	}
	// The trace names the design relative to the designs folder.
	if !strings.Contains(string(src), "\ndesign opsel.sw\n") {
		t.Errorf("the trace does not name the design as opsel.sw:\n%s", src)
	}
	// The designs folder copied to a designer's own machine (another
	// folder), the trace moved there too: it replays with --designs.
	elsewhere := t.TempDir()
	copied := filepath.Join(elsewhere, "my-cells")
	must(t, os.Mkdir(copied, 0o755))
	ents, err := os.ReadDir(filepath.Join(ts.dir, "designs"))
	must(t, err)
	for _, e := range ents {
		b, err := os.ReadFile(filepath.Join(ts.dir, "designs", e.Name()))
		must(t, err)
		must(t, os.WriteFile(filepath.Join(copied, e.Name()), b, 0o644))
	}
	moved := filepath.Join(elsewhere, "alice.trace")
	must(t, os.WriteFile(moved, src, 0o644))
	rep, err := trace.Replay(moved, strings.NewReader(string(src)), trace.ReplayOptions{Designs: copied})
	must(t, err)
	if !rep.Match() || rep.Design != filepath.Join(copied, "opsel.sw") {
		t.Errorf("the saved trace does not replay from the copy: design %s, %v", rep.Design, rep.Differences)
	}
	// End the session: the end keeps the same file; let that save finish
	// before the test's folder is removed.
	tm.send("q")
	tm.waitFor("railyard: trace saved as " + shown)
	tm.exit()
	ts.waitLog(t, "session end", map[string]any{"user": "alice"})
}

func TestExplorerRefusesBadDesignWithoutServerPaths(t *testing.T) {
	ts := startServer(t, 1, realExplorer)
	ts.writeDesign(t, "broken.sw", "design broken\nfrobnicate x\n")
	tm := ts.open(t, ts.keys[0], "alice", "broken", 80, 24)
	if st := tm.exit(); st != 1 {
		t.Fatalf("exit status %d, want 1", st)
	}
	out := tm.text()
	if !strings.Contains(out, "broken.sw:2:") {
		t.Errorf("no FILE:LINE position in %q", out)
	}
	if strings.Contains(out, ts.dir) {
		t.Errorf("the server's folder shows in %q", out)
	}
}

func TestPickerListsTheDemos(t *testing.T) {
	ts := startServer(t, 1, realExplorer)
	ts.writeDesign(t, "opsel.sw", opselDesign)
	tm := ts.open(t, ts.keys[0], "alice", "", 80, 40)
	tm.waitFor("opsel")
	for _, e := range designs.List() {
		tm.waitFor("demo:" + e.Name)
	}
	tm.send("\r") // opsel comes first: the folder's designs, then the demos
	tm.waitFor("operand pick for the adder's A port")
}

// selDesign has inputs whose names hold an s, to be typed into a filter.
const selDesign = `design selreg "register select for the write port"
input sel rst d
output q
tgate tsel sel sel_b d q
use inv isel sel sel_b
nmos nrst rst q gnd
`

func TestSaveKeyIsALetterInAFilter(t *testing.T) {
	ts := startServer(t, 1, realExplorer)
	ts.writeDesign(t, "selreg.sw", selDesign)
	tm := ts.open(t, ts.keys[0], "alice", "selreg", 120, 30)
	tm.waitFor("Inputs 3")
	// One key at a time, each seen before the next (keys sent together
	// can arrive as one read, which is one key message of several runes).
	tm.send("/") // the inputs have the focus: / filters them
	tm.waitFor("/_")
	tm.send("s") // a letter of the filter, not the save key
	tm.waitFor("/s_")
	tm.send("e")
	tm.waitFor("/se_")
	tm.send("s")
	tm.waitFor("/ses_")
	if strings.Contains(tm.text(), "save the session trace") {
		t.Fatalf("s typed into the filter opened the save question:\n%s", tail(tm.text(), 2000))
	}
	tm.send("\x7f") // backspace: "se" matches sel only
	tm.waitFor("/se_")
	tm.send("\r") // the filter stays; the keys are the explorer's again
	tm.send("s")
	tm.waitFor("save the session trace") // now s is the save key
	tm.send("\x1b")
	tm.waitFor("nothing saved")
	if m, _ := filepath.Glob(filepath.Join(ts.dir, "traces", "alice", "*")); len(m) > 0 {
		t.Errorf("files saved: %v", m)
	}
}
