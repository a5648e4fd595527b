package tui

import (
	"bytes"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	tea "github.com/charmbracelet/bubbletea"
	"github.com/charmbracelet/x/exp/teatest"

	"railyard/switchsim"
	"railyard/switchsim/session"
)

// waitFor waits until the program has drawn text.
func waitFor(t *testing.T, tm *teatest.TestModel, text string) {
	t.Helper()
	teatest.WaitFor(t, tm.Output(), func(b []byte) bool { return bytes.Contains(b, []byte(text)) },
		teatest.WithDuration(5*time.Second), teatest.WithCheckInterval(10*time.Millisecond))
}

// The main flows through a real program: start, toggle, step forward and
// back, inspect, filter, save a trace, help, resize, quit.
func TestProgramFlows(t *testing.T) {
	s := openFixture(t)
	dir := t.TempDir()
	trace := filepath.Join(dir, "flows.trace")
	tm := teatest.NewTestModel(t, New(s, 80, 24, Options{}), teatest.WithInitialTermSize(80, 24))

	waitFor(t, tm, "Inputs")
	tm.Send(keyMsg("space")) // sel: x -> 0
	waitFor(t, tm, "set sel=0")
	tm.Send(keyMsg("n"))
	waitFor(t, tm, "step 1 pick a")
	tm.Send(keyMsg("p"))
	waitFor(t, tm, "back: undid step 1")
	tm.Send(keyMsg("n"))
	waitFor(t, tm, "step 1/4")

	tm.Send(keyMsg("tab"))
	tm.Send(keyMsg("enter")) // why y
	waitFor(t, tm, "Set by 1 path")

	tm.Send(keyMsg("/"))
	tm.Type("sel")
	waitFor(t, tm, "1 of 2")
	tm.Send(keyMsg("esc"))
	waitFor(t, tm, "Nodes 2 ─")

	tm.Send(keyMsg("s"))
	waitFor(t, tm, "save trace as")
	tm.Send(keyMsg("ctrl+u"))
	tm.Type(trace)
	tm.Send(keyMsg("enter"))
	waitFor(t, tm, "saved the trace")

	tm.Send(keyMsg("?"))
	waitFor(t, tm, "Steps and actions")
	tm.Send(keyMsg("esc"))
	waitFor(t, tm, "Rounds")

	tm.Send(tea.WindowSizeMsg{Width: 70, Height: 20})
	waitFor(t, tm, "needs 80x24")
	tm.Send(tea.WindowSizeMsg{Width: 120, Height: 40})
	waitFor(t, tm, "Inputs")

	tm.Send(keyMsg("q"))
	tm.WaitFinished(t, teatest.WithFinalTimeout(5*time.Second))
	fm, ok := tm.FinalModel(t).(*Model)
	if !ok {
		t.Fatal("final model is not the explorer")
	}
	// the session after the flows: sel=0, step 1 applied (a=1), so y=1 (selector function)
	fs := fm.Session()
	if fs.NextStep() != 1 || fs.Node(node(t, fs, "y")).Value != switchsim.V1 {
		t.Errorf("final state: next step %d, y=%s; want 1 and 1", fs.NextStep(), fs.Node(node(t, fs, "y")).Value)
	}
	b, err := os.ReadFile(trace)
	if err != nil || !bytes.Contains(b, []byte("railyard-trace 2")) {
		t.Errorf("saved trace: %v\n%s", err, b)
	}
}

// --trace: the whole session is written when the explorer quits.
func TestRunWritesTraceOnQuit(t *testing.T) {
	s := openFixture(t)
	trace := filepath.Join(t.TempDir(), "quit.trace")
	note := runKeys(t, s, Options{TracePath: trace}, "n", "n", "p", "q")
	b, err := os.ReadFile(trace)
	if err != nil {
		t.Fatal(err)
	}
	// start, two steps and a back: four actions (switchsim/trace writes each as "action N ...")
	if n := bytes.Count(b, []byte("\naction ")); n != 4 {
		t.Errorf("trace holds %d actions, want 4:\n%s", n, b)
	}
	// quitting says where the trace went (issue 18 item 14)
	if want := "trace of 4 actions saved to " + trace; !strings.Contains(note, want) {
		t.Errorf("quit note %q lacks %q", note, want)
	}
}

// runKeys runs the real program on s at 80x24, types keys into it (the
// last must quit) and returns what it wrote to the terminal after.
func runKeys(t *testing.T, s *session.Session, opt Options, keys ...string) string {
	t.Helper()
	in, feed := io.Pipe()
	defer feed.Close()
	var note bytes.Buffer
	done := make(chan error, 1)
	go func() {
		done <- runProgram(s, opt, 80, 24, &note, tea.WithInput(in), tea.WithOutput(io.Discard), tea.WithoutSignals())
	}()
	for _, k := range keys {
		time.Sleep(30 * time.Millisecond)
		if _, err := feed.Write([]byte(k)); err != nil {
			t.Fatal(err)
		}
	}
	select {
	case err := <-done:
		if err != nil {
			t.Fatalf("run: %v", err)
		}
	case <-time.After(10 * time.Second):
		t.Fatal("the program did not quit")
	}
	return note.String()
}

// --trace after a mode switch: what is written on quit is the session in
// force, the history re-simulated in the other mode (its header says so),
// not the session the explorer was started on.
func TestRunWritesTheSwitchedSession(t *testing.T) {
	s := openFixture(t) // ideal
	trace := filepath.Join(t.TempDir(), "switched.trace")
	runKeys(t, s, Options{TracePath: trace}, "n", "i", "q")
	b, err := os.ReadFile(trace)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Contains(b, []byte("\nmode physical\n")) || bytes.Count(b, []byte("\naction ")) != 2 {
		t.Errorf("the trace is not the physical session of 2 actions:\n%s", b)
	}
}
