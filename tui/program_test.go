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
	in, feed := io.Pipe()
	var note bytes.Buffer
	done := make(chan error, 1)
	go func() {
		done <- runProgram(s, Options{TracePath: trace}, 80, 24, &note, tea.WithInput(in), tea.WithOutput(io.Discard), tea.WithoutSignals())
	}()
	for _, k := range []string{"n", "n", "p", "q"} {
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
		t.Fatal("q did not quit")
	}
	feed.Close()
	b, err := os.ReadFile(trace)
	if err != nil {
		t.Fatal(err)
	}
	// start, two steps and a back: four actions (switchsim/trace writes each as "action N ...")
	if n := bytes.Count(b, []byte("\naction ")); n != 4 {
		t.Errorf("trace holds %d actions, want 4:\n%s", n, b)
	}
	// quitting says where the trace went (issue 18 item 14)
	if want := "trace of 4 actions saved to " + trace; !strings.Contains(note.String(), want) {
		t.Errorf("quit note %q lacks %q", note.String(), want)
	}
}
