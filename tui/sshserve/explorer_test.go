package sshserve

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"railyard/designs"
	"railyard/switchsim/session"
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

	// Every key that changes a session, and the save key, in the viewer.
	for _, k := range []string{"1", "z", " ", "n", "e", "p", "s"} {
		v.send(k)
		time.Sleep(20 * time.Millisecond) // apart, so each is its own key
	}
	time.Sleep(300 * time.Millisecond)
	for _, bad := range []string{pick1, "pick = z", "set pick=1"} {
		if strings.Contains(h.text(), bad) {
			t.Errorf("the viewer's keys reached the host (%q):\n%s", bad, tail(h.text(), 2000))
		}
	}
	if m, _ := filepath.Glob(filepath.Join(ts.dir, "traces", "bob", "*")); len(m) > 0 {
		t.Errorf("the viewer saved a trace: %v", m)
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

func TestExplorerTraceIsSavedAndReplays(t *testing.T) {
	ts := startServer(t, 1, realExplorer)
	ts.writeDesign(t, "opsel.sw", opselDesign)
	tm := ts.open(t, ts.keys[0], "alice", "opsel", 80, 24)
	tm.waitFor(pickX)
	tm.send(" ")
	tm.waitFor(pick0)
	tm.send("s")
	tm.waitFor("trace saved as alice/opsel-")
	if strings.Contains(tm.text(), "save trace as") {
		t.Errorf("the explorer's save prompt opened (it takes any path on the server)")
	}
	m, _ := filepath.Glob(filepath.Join(ts.dir, "traces", "alice", "opsel-*.trace"))
	if len(m) != 1 {
		t.Fatalf("traces under traces/alice: %v", m)
	}
	f, err := os.Open(m[0])
	must(t, err)
	defer f.Close()
	tr, err := session.ReadTrace(m[0], f)
	must(t, err)
	// Start, then the one toggle: pick driven 0.
	if len(tr.Actions) != 2 || tr.Actions[1].Kind != session.Set || tr.Actions[1].Set != [2]string{"pick", "0"} {
		t.Fatalf("trace actions %+v, want start then set pick 0", tr.Actions)
	}
	rep, err := session.Replay(tr)
	must(t, err)
	if !rep.Match() {
		t.Errorf("the saved trace does not replay: %v", rep.Differences)
	}
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
