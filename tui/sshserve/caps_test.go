package sshserve

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"log/slog"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
	"time"

	"github.com/charmbracelet/x/ansi"
	gossh "golang.org/x/crypto/ssh"

	"railyard/switchsim/trace"
	"railyard/tui"
)

// chainDesign is a delay line of n inverters of this project's own (a
// strobe taken through a buffer chain to a far latch bank): every toggle of
// d changes all n nodes, one per round, so a session's trace and VCD grow
// by n changes an action and reach a small cap within a few actions.
func chainDesign(n int) string {
	var b strings.Builder
	fmt.Fprintf(&b, "design strobe%d \"strobe delay line of %d inverters\"\ninput d\noutput s%d\n", n, n, n)
	prev := "d"
	for i := 1; i <= n; i++ {
		fmt.Fprintf(&b, "use inv i%d %s s%d\n", i, prev, i)
		prev = fmt.Sprintf("s%d", i)
	}
	return b.String()
}

// setInput drives d to v ("0" or "1") and waits for the explorer's status
// line to report it ("set d=V: ..."), or for the trace-full notice, which
// takes the status line on the action that fills the trace.
func (tm *term) setInput(v string) {
	tm.t.Helper()
	said, full := tm.count("set d="+v+":"), tm.count("trace full at")
	tm.send(v)
	end := time.Now().Add(readDeadline)
	for tm.count("set d="+v+":") == said && tm.count("trace full at") == full {
		if time.Now().After(end) {
			tm.t.Fatalf("d=%s not reported within %s:\n%s", v, readDeadline, tail(tm.text(), 2000))
		}
		time.Sleep(5 * time.Millisecond)
	}
}

// saveTrace presses s and enter and returns the name the status line shows.
func (tm *term) saveTrace() string {
	tm.t.Helper()
	tm.send("s")
	tm.waitFor("save the session trace")
	tm.send("\r")
	re := regexp.MustCompile(`saved the trace \([^)]*\) as (\S+\.trace)`)
	end := time.Now().Add(readDeadline)
	for time.Now().Before(end) {
		if m := re.FindStringSubmatch(tm.text()); m != nil {
			return m[1]
		}
		time.Sleep(5 * time.Millisecond)
	}
	tm.t.Fatalf("no saved trace within %s:\n%s", readDeadline, tail(tm.text(), 2000))
	return ""
}

func TestTraceCapIsShownAndTheSavedTraceReplays(t *testing.T) {
	ts := startServer(t, 1, realExplorer, func(c *Config) { c.MaxTrace = MinFileCap })
	ts.writeDesign(t, "strobe.sw", chainDesign(60))
	tm := ts.open(t, ts.keys[0], "alice", "strobe", 140, 30)
	tm.waitFor("Inputs 1 ")
	// Toggle until the screen says the trace is full: 16 KiB, less the
	// header's room, is some ten actions of 60 changes each. Then three
	// more, which are not recorded.
	toggles := 0
	for v := "1"; !strings.Contains(tm.text(), "trace full at 16 KiB"); toggles++ {
		if toggles == 40 {
			t.Fatalf("no trace-full notice after %d toggles under a 16 KiB cap:\n%s", toggles, tail(tm.text(), 2000))
		}
		tm.setInput(v)
		v = map[string]string{"1": "0", "0": "1"}[v]
	}
	if toggles < 3 {
		t.Errorf("the trace was full after %d toggles: the cap leaves no room", toggles)
	}
	tm.waitFor("trace full at 16 KiB: later actions are not recorded; save now keeps what was recorded")
	last := "1"
	if toggles%2 == 0 {
		last = "0"
	}
	for i := 0; i < 3; i++ {
		last = map[string]string{"1": "0", "0": "1"}[last]
		tm.setInput(last)
	}
	shown := tm.saveTrace()
	if !strings.Contains(tm.text(), "the trace reached its cap of 16 KiB, so the last ") {
		t.Errorf("the save does not say the trace was capped:\n%s", tail(tm.text(), 2000))
	}
	// After the status line moved on, the header still says so (the
	// whole frame, as the session's hub holds it for viewers: the client
	// is sent only the lines that changed).
	tm.setInput(map[string]string{"1": "0", "0": "1"}[last])
	frame, _, _, _ := ts.registry.lookup(tm.sessionID()).Hub.latest()
	if lines := strings.SplitN(ansi.Strip(frame), "\n", 2); !strings.Contains(lines[0], "trace full") {
		t.Errorf("the header's mark is gone: %q", lines[0])
	}

	p := filepath.Join(ts.dir, "traces", filepath.FromSlash(shown))
	src, err := os.ReadFile(p)
	must(t, err)
	if len(src) > MinFileCap {
		t.Errorf("the saved trace is %d bytes, over its cap of %d", len(src), MinFileCap)
	}
	// A replayable prefix that ends with the capped line and the end count.
	tailRe := regexp.MustCompile(`\ncapped (\d+)\nend (\d+)\n$`)
	m := tailRe.FindSubmatch(src)
	if m == nil {
		t.Fatalf("the saved trace does not end with capped N and end N:\n%s", tail(string(src), 300))
	}
	_, acts, err := trace.ReadAll(p, src)
	must(t, err)
	if want := fmt.Sprint(len(acts)); string(m[2]) != want {
		t.Errorf("end %s, but the trace holds %s actions", m[2], want)
	}
	// Every toggle after the cap is left out: at least the three (and the
	// save's moment counts only what came before it).
	var capped int
	fmt.Sscan(string(m[1]), &capped)
	if capped < 4 || len(acts)+capped-1 > toggles+4 {
		t.Errorf("capped %d with %d actions written, after %d toggles and four more", capped, len(acts), toggles)
	}
	rep, err := trace.Replay(p, bytes.NewReader(src), trace.ReplayOptions{Designs: filepath.Join(ts.dir, "designs")})
	must(t, err)
	if !rep.Match() || rep.Capped != capped || rep.Actions != len(acts) {
		t.Errorf("replay: match %v (%v), %d actions, capped %d; want a match of %d, capped %d",
			rep.Match(), rep.Differences, rep.Actions, rep.Capped, len(acts), capped)
	}

	// One log line for the cap, however many actions follow it.
	tm.send("q")
	tm.waitFor("railyard: trace saved as " + shown)
	tm.exit()
	ts.waitLog(t, "session end", map[string]any{"user": "alice"})
	n := 0
	for _, r := range logRecords(t, ts.log.String()) {
		if r["msg"] == "trace full" {
			n++
			if r["event"] != "trace-full" || r["user"] != "alice" || r["session"] == "" || r["size"] != float64(MinFileCap) {
				t.Errorf("trace-full log line %v, want event, user, session and the size %d", r, MinFileCap)
			}
		}
	}
	if n != 1 {
		t.Errorf("%d trace-full log lines, want 1:\n%s", n, ts.log.String())
	}
}

func TestTraceNotFullSaysNothing(t *testing.T) {
	ts := startServer(t, 1, realExplorer) // the default cap: 64 MiB
	ts.writeDesign(t, "strobe.sw", chainDesign(60))
	tm := ts.open(t, ts.keys[0], "alice", "strobe", 140, 30)
	tm.waitFor("Inputs 1 ")
	for _, v := range []string{"1", "0", "1", "0", "1", "0", "1", "0", "1", "0", "1", "0"} {
		tm.setInput(v)
	}
	tm.saveTrace()
	tm.send("q")
	tm.exit()
	ts.waitLog(t, "session end", map[string]any{"user": "alice"})
	if strings.Contains(tm.text(), "trace full") || strings.Contains(ts.log.String(), "trace full") {
		t.Errorf("a trace of 13 actions under 64 MiB said it was full:\n%s", tail(tm.text(), 2000))
	}
}

func TestTraceFullNoticeWording(t *testing.T) {
	n := traceFullNotice("the trace reached its cap of 64 MiB", 64<<20, true)
	if n.Text != "trace full at 64 MiB: later actions are not recorded; save now keeps what was recorded" || n.Mark != "trace full" {
		t.Errorf("notice %+v", n)
	}
	// Without a traces folder nothing can be saved: the notice does not offer it.
	if n := traceFullNotice("the trace reached its cap of 64 MiB", 64<<20, false); strings.Contains(n.Text, "save") {
		t.Errorf("notice %+v offers a save the server refuses", n)
	}
	// The other reason a trace stops (trace.Writer): one action's line too long.
	n = traceFullNotice("action 7 has a line of 5000000 bytes, over the 4 MiB a trace line may hold", 64<<20, true)
	if !strings.HasPrefix(n.Text, "trace stopped (action 7 has a line") || n.Mark != "trace stopped" {
		t.Errorf("notice %+v", n)
	}
}

// spoolsOpen lists the trace spools this process holds open in dir: the
// spool has no name once open (trace.Start), so it shows only as an open
// file, "(deleted)", in /proc/self/fd.
func spoolsOpen(t *testing.T, dir string) []string {
	t.Helper()
	fds, err := os.ReadDir("/proc/self/fd")
	if err != nil {
		t.Skip("no /proc/self/fd to see open files by")
	}
	var open []string
	for _, fd := range fds {
		target, err := os.Readlink(filepath.Join("/proc/self/fd", fd.Name()))
		if err == nil && strings.HasPrefix(target, dir+string(filepath.Separator)) && strings.Contains(target, ".railyard-trace-") {
			open = append(open, target)
		}
	}
	return open
}

// onlySaved checks that dir holds the saved files named and nothing else
// (no spool, no temporary file of a save).
func onlySaved(t *testing.T, dir string, names ...string) {
	t.Helper()
	ents, err := os.ReadDir(dir)
	must(t, err)
	var got []string
	for _, e := range ents {
		got = append(got, e.Name())
	}
	if fmt.Sprint(got) != fmt.Sprint(names) {
		t.Errorf("%s holds %v, want only %v", dir, got, names)
	}
}

func TestSpoolInTheTracesFolderIsReleasedWhenTheSessionEnds(t *testing.T) {
	ts := startServer(t, 1, realExplorer)
	ts.writeDesign(t, "opsel.sw", opselDesign)
	userDir := filepath.Join(ts.dir, "traces", "alice")
	tm := ts.open(t, ts.keys[0], "alice", "opsel", 120, 30)
	tm.waitFor(pickX)
	tm.send(" ")
	tm.waitFor(pick0)
	// The spool is in the user's folder (the disk the saves go to), not in
	// the system's temporary folder, and has no name there.
	if open := spoolsOpen(t, userDir); len(open) != 1 || !strings.HasSuffix(open[0], " (deleted)") {
		t.Errorf("spools open in %s: %v, want one without a name", userDir, open)
	}
	onlySaved(t, userDir)
	tm.send("q")
	tm.waitFor("railyard: trace saved as alice/")
	// The session lets go of its spool before it ends (a closed file, not
	// one the garbage collector closes some time later).
	tm.exit()
	if open := spoolsOpen(t, userDir); len(open) != 0 {
		t.Errorf("the spool is still open after the session ended: %v", open)
	}
	ents, err := os.ReadDir(userDir)
	must(t, err)
	if len(ents) != 1 || !strings.HasSuffix(ents[0].Name(), ".trace") {
		t.Errorf("the user's folder holds %v, want the session's trace alone", ents)
	}
}

func TestServerStopKeepsTheTraceAndLeavesNothingElse(t *testing.T) {
	ts := startServer(t, 2, realExplorer)
	ts.writeDesign(t, "opsel.sw", opselDesign)
	a := ts.open(t, ts.keys[0], "alice", "opsel", 120, 30)
	b := ts.open(t, ts.keys[1], "bob", "opsel", 120, 30)
	a.waitFor(pickX)
	b.waitFor(pickX)
	a.send(" ")
	a.waitFor(pick0)
	b.send(" ")
	b.waitFor(pick0)
	traces := filepath.Join(ts.dir, "traces")
	if open := spoolsOpen(t, traces); len(open) != 2 {
		t.Fatalf("spools open: %v, want one a session", open)
	}
	// Close returns once the sessions have kept their traces and let go
	// of their spools: nothing is half written when the process ends.
	must(t, ts.Close())
	if open := spoolsOpen(t, traces); len(open) != 0 {
		t.Errorf("spools still open after Close: %v", open)
	}
	for _, user := range []string{"alice", "bob"} {
		dir := filepath.Join(traces, user)
		ents, err := os.ReadDir(dir)
		must(t, err)
		if len(ents) != 1 || !strings.HasSuffix(ents[0].Name(), ".trace") {
			t.Errorf("%s holds %v, want the session's trace alone", dir, ents)
			continue
		}
		p := filepath.Join(dir, ents[0].Name())
		src, err := os.ReadFile(p)
		must(t, err)
		rep, err := trace.Replay(p, bytes.NewReader(src), trace.ReplayOptions{Designs: filepath.Join(ts.dir, "designs")})
		must(t, err)
		if !rep.Match() || rep.Actions != 2 {
			t.Errorf("%s's trace kept at the stop: match %v, %d actions; want the start and the toggle", user, rep.Match(), rep.Actions)
		}
	}
	// A stopped server takes no new session.
	if c, err := ts.dial("alice", gossh.PublicKeys(ts.keys[0])); err == nil {
		c.Close()
		t.Errorf("a stopped server let a client in")
	}
}

func TestSpoolWithoutTracesFolderIsInTheTemporaryFolder(t *testing.T) {
	tmp := t.TempDir()
	t.Setenv("TMPDIR", tmp) // os.TempDir, for this test alone
	ts := startServer(t, 1, realExplorer, func(c *Config) { c.Traces = "" })
	ts.writeDesign(t, "opsel.sw", opselDesign)
	tm := ts.open(t, ts.keys[0], "alice", "opsel", 120, 30)
	tm.waitFor(pickX)
	if open := spoolsOpen(t, tmp); len(open) != 1 {
		t.Errorf("spools open in the temporary folder: %v, want one", open)
	}
	tm.send("q")
	tm.exit()
	if open := spoolsOpen(t, tmp); len(open) != 0 {
		t.Errorf("the spool is still open after the session ended: %v", open)
	}
	onlySaved(t, tmp)
}

func TestVCDPastTheCapIsRefused(t *testing.T) {
	ts := startServer(t, 1, realExplorer, func(c *Config) { c.MaxWave = MinFileCap })
	ts.writeDesign(t, "strobe.sw", chainDesign(200))
	tm := ts.open(t, ts.keys[0], "alice", "strobe", 140, 30)
	tm.waitFor("Inputs 1 ")
	tm.setInput("1")
	// Under the cap: saved.
	shown := tm.saveOver(true)
	p := filepath.Join(ts.dir, "traces", filepath.FromSlash(shown))
	first, err := os.ReadFile(p)
	must(t, err)
	if len(first) > MinFileCap {
		t.Fatalf("the first VCD is %d bytes, over the cap; the test's design is too large", len(first))
	}
	// Each toggle adds 200 value changes, some 5 bytes each: 16 toggles
	// pass 16 KiB.
	v := "0"
	for i := 0; i < 16; i++ {
		tm.setInput(v)
		v = map[string]string{"1": "0", "0": "1"}[v]
	}
	tm.send("s")
	tm.waitFor("save the session trace")
	tm.send("\t")
	tm.waitFor("save a VCD of the history")
	tm.send("\r")
	tm.waitFor("could not save a VCD of 18 actions: it would pass this server's cap of 16 KiB for a VCD, so nothing was written")
	// The VCD saved before is as it was, and no temporary file is left.
	now, err := os.ReadFile(p)
	must(t, err)
	if !bytes.Equal(now, first) {
		t.Errorf("the refused save changed the VCD saved before")
	}
	onlySaved(t, filepath.Dir(p), filepath.Base(p))
	ts.waitLog(t, "save refused", map[string]any{"event": "wave-cap", "user": "alice", "kind": "VCD", "size": float64(MinFileCap)})
	// The trace has its own cap and is still saved.
	tm.saveTrace()
	tm.send("q")
	tm.exit()
	ts.waitLog(t, "session end", map[string]any{"user": "alice"})
}

// The cap is exact: a VCD of MaxWave bytes is saved, one byte more is not.
func TestVCDCapIsExact(t *testing.T) {
	dir := t.TempDir()
	log := &syncBuffer{}
	srv := &Server{cfg: Config{Traces: dir, MaxWave: 1000}, log: slog.New(slog.NewJSONHandler(log, nil))}
	f, err := srv.newSaves(&visit{}, "alice", "opsel", "abc234", time.Unix(0, 0))
	must(t, err)
	write := func(n int) func(io.Writer) error {
		return func(w io.Writer) error {
			// in pieces, as a buffered writer hands them on
			for left := n; left > 0; left -= 300 {
				if _, err := w.Write(bytes.Repeat([]byte{'x'}, min(left, 300))); err != nil {
					return err
				}
			}
			return nil
		}
	}
	if _, err := f.save(tui.SaveVCD, write(1000)); err != nil {
		t.Fatalf("a VCD of exactly the cap: %v", err)
	}
	_, err = f.save(tui.SaveVCD, write(1001))
	if err == nil || !strings.Contains(err.Error(), "cap of 1000 bytes") {
		t.Fatalf("a VCD one byte over the cap: %v, want refused", err)
	}
	b, err := os.ReadFile(filepath.Join(dir, "alice", f.name(tui.SaveVCD)))
	must(t, err)
	if len(b) != 1000 {
		t.Errorf("the VCD on disk is %d bytes, want the 1000 saved before the refusal", len(b))
	}
	// The trace has no such cap here (its own is the trace writer's).
	if _, err := f.save(tui.SaveTrace, write(5000)); err != nil {
		t.Errorf("a trace larger than the VCD cap: %v", err)
	}
}

// A spool the server cannot create refuses the session with a message that
// names no server path; the detail is kept for the keeper's log.
func TestSpoolThatCannotBeCreatedNamesNoServerPath(t *testing.T) {
	missing := filepath.Join(t.TempDir(), "gone", "alice")
	_, err := openExplorer(ExplorerRequest{Name: "demo:static_latch", Design: "demo:static_latch", Width: 80, Height: 24,
		Save: func(tui.SaveKind, func(io.Writer) error) (string, error) { return "", nil }, TraceDir: missing})
	if err == nil {
		t.Fatal("an explorer opened with its spool in a missing folder")
	}
	if strings.Contains(err.Error(), missing) || !strings.Contains(err.Error(), "cannot keep this session's trace") {
		t.Errorf("the user reads %q", err)
	}
	var ke *keeperError
	if !errors.As(err, &ke) || !strings.Contains(ke.err.Error(), missing) {
		t.Errorf("the keeper's detail is lost: %v", err)
	}
}
