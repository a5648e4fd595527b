package main

import (
	"bufio"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"runtime"
	"strings"
	"syscall"
	"testing"
	"time"
)

// TestMain lets a test run the program as a child process (for signals).
func TestMain(m *testing.M) {
	if args := os.Getenv("RAILYARD_TEST_ARGS"); args != "" {
		os.Exit(run(strings.Split(args, "\x1f"), os.Stdout, os.Stderr))
	}
	os.Exit(m.Run())
}

func filesIn(t *testing.T, dir string) []string {
	t.Helper()
	ents, _ := os.ReadDir(dir)
	var names []string
	for _, e := range ents {
		names = append(names, e.Name())
	}
	return names
}

// --trace and --vcd never replace the run's inputs, each other, or what is
// not a regular file; every path is checked before anything is simulated,
// so nothing is written and nothing is reported.
func TestOutputsRefused(t *testing.T) {
	dir := t.TempDir()
	design, steps := copyFiles(t, dir, "opsel.sw", "opsel.steps")[0], filepath.Join(dir, "opsel.steps")
	before, _ := os.ReadFile(design)
	link := filepath.Join(dir, "link.trace")
	os.Symlink(filepath.Join(dir, "elsewhere"), link)
	sub := filepath.Join(dir, "sub")
	os.Mkdir(sub, 0o755)
	ok := filepath.Join(dir, "ok.trace")
	for _, c := range []struct {
		args []string
		want string // in stderr
	}{
		{[]string{"--trace", design}, "--trace: " + design + ": is the design"},
		{[]string{"--vcd", design}, "--vcd: " + design + ": is the design"},
		{[]string{"--trace", steps}, "is the steps file"}, // the default steps, found beside the design
		{[]string{"--trace", ok, "--vcd", ok}, "--vcd: " + ok + ": is the --trace output"},
		{[]string{"--trace", link}, "is a symbolic link, not a regular file"},
		{[]string{"--vcd", sub}, "is a folder, not a regular file"},
		{[]string{"--trace", ok, "--vcd", filepath.Join(dir, "nofolder", "x.vcd")}, "--vcd: " + filepath.Join(dir, "nofolder", "x.vcd") + ": its folder"},
		{[]string{"--trace", "/dev/null"}, "is a character device"},
	} {
		code, out, errOut := call(append([]string{"run", design}, c.args...)...)
		if code != 2 || out != "" || !strings.Contains(errOut, c.want) {
			t.Errorf("%v: exit %d, stdout %q, stderr %q; want 2, nothing, %q", c.args, code, out, errOut, c.want)
		}
		if strings.Contains(errOut, ".tmp") {
			t.Errorf("%v: the error names a temporary file: %s", c.args, errOut)
		}
	}
	if after, _ := os.ReadFile(design); string(after) != string(before) {
		t.Error("the design was changed")
	}
	if fi, err := os.Lstat(link); err != nil || fi.Mode()&os.ModeSymlink == 0 {
		t.Error("the symbolic link was replaced")
	}
	if fi, err := os.Stat("/dev/null"); err == nil && fi.Mode()&os.ModeCharDevice == 0 {
		t.Error("/dev/null is no longer a device")
	}
	want := []string{"link.trace", "opsel.steps", "opsel.sw", "sub"}
	if got := filesIn(t, dir); fmt.Sprint(got) != fmt.Sprint(want) {
		t.Errorf("files %v, want %v (nothing written)", got, want)
	}
}

// An old trace, as railyard wrote them before version 2 (design paths as
// given, vil/vih 0), still replays and matches.
func TestReplayVersionOne(t *testing.T) {
	code, out, errOut := call("replay", "testdata/trace_plat_v1.trace")
	if code != 0 || !strings.Contains(out, "everything matches") || !strings.Contains(out, "5 actions") {
		t.Errorf("exit %d:\n%s%s", code, out, errOut)
	}
}

// A trace saved in a project, the design folder then copied elsewhere and
// the original gone: replay --designs finds it by content.
func TestReplayFindsTheCopiedFolder(t *testing.T) {
	root := t.TempDir()
	cells := filepath.Join(root, "cells")
	design := copyFiles(t, cells, "opsel.sw", "opsel.steps")[0]
	tr := filepath.Join(root, "opsel.trace")
	if code, _, e := call("run", design, "--trace", tr); code != 0 {
		t.Fatal(e)
	}
	copied := filepath.Join(t.TempDir(), "cells-copy")
	copyFiles(t, copied, "opsel.sw", "opsel.steps")
	os.RemoveAll(cells)
	if code, _, e := call("replay", tr); code != 2 || !regexp.MustCompile(`opsel\.trace:3:\d+: the design "cells/opsel.sw" was not found`).MatchString(e) {
		t.Errorf("replay without the folder: exit %d, %s", code, e)
	}
	code, out, errOut := call("replay", tr, "--designs", copied)
	if code != 0 || !strings.Contains(out, "everything matches") || !strings.Contains(out, filepath.Join(copied, "opsel.sw")) {
		t.Errorf("replay --designs: exit %d\n%s%s", code, out, errOut)
	}
}

// A trace cut short is an error with its position, not a match.
func TestReplayCutTrace(t *testing.T) {
	dir := t.TempDir()
	tr := filepath.Join(dir, "o.trace")
	if code, _, e := call("run", "testdata/opsel.sw", "--trace", tr); code != 0 {
		t.Fatal(e)
	}
	b, _ := os.ReadFile(tr)
	cut := filepath.Join(dir, "cut.trace")
	os.WriteFile(cut, b[:strings.Index(string(b), "\naction 3 ")+1], 0o644)
	code, out, errOut := call("replay", cut)
	if code != 2 || out != "" || !regexp.MustCompile(`^`+regexp.QuoteMeta(cut)+`:\d+:\d+: the trace ends without its end line`).MatchString(errOut) {
		t.Errorf("exit %d, stdout %q, stderr %q", code, out, errOut)
	}
}

// SIGINT and SIGTERM during a run remove the temporary files of --vcd (the
// trace's spool has no name to leave behind) and exit 130 and 143.
func TestInterruptedRunLeavesNothing(t *testing.T) {
	if runtime.GOOS == "windows" {
		t.Skip("no SIGINT to send")
	}
	src, _ := os.ReadFile("../../designs/static_latch.steps")
	var rows []string
	for _, l := range strings.Split(string(src), "\n") {
		if l != "" && !strings.HasPrefix(l, "#") && !strings.HasPrefix(l, "apply") && !strings.HasPrefix(l, "check") {
			rows = append(rows, l)
		}
	}
	var b strings.Builder
	b.WriteString("apply clk d\ncheck s q\n")
	for i := 0; i < 300000; i++ {
		row, _, _ := strings.Cut(rows[i%len(rows)], "#")
		b.WriteString(strings.TrimSpace(row) + "\n") // drives and checks, no label
	}
	inputs := t.TempDir()
	steps := filepath.Join(inputs, "long.steps")
	os.WriteFile(steps, []byte(b.String()), 0o644)
	for _, c := range []struct {
		sig  syscall.Signal
		code int
	}{{syscall.SIGINT, 130}, {syscall.SIGTERM, 143}} {
		out := t.TempDir()
		cmd := exec.Command(os.Args[0])
		args := []string{"run", "demo:static_latch", "--steps", steps, "--trace", filepath.Join(out, "l.trace"), "--vcd", filepath.Join(out, "l.vcd")}
		cmd.Env = append(os.Environ(), "RAILYARD_TEST_ARGS="+strings.Join(args, "\x1f"))
		stdout, _ := cmd.StdoutPipe()
		var stderr strings.Builder
		cmd.Stderr = &stderr
		if err := cmd.Start(); err != nil {
			t.Fatal(err)
		}
		// Once the report streams, the run is under way.
		if _, err := bufio.NewReader(stdout).ReadString('\n'); err != nil {
			cmd.Wait()
			t.Fatalf("%v: %s", err, stderr.String())
		}
		go func() { // keep the pipe drained
			buf := make([]byte, 64<<10)
			for {
				if _, err := stdout.Read(buf); err != nil {
					return
				}
			}
		}()
		if got := filesIn(t, out); len(got) != 1 || !strings.Contains(got[0], ".tmp") {
			t.Fatalf("files while running: %v, want the VCD's temporary file", got)
		}
		cmd.Process.Signal(c.sig)
		done := make(chan error, 1)
		go func() { done <- cmd.Wait() }()
		select {
		case <-done:
		case <-time.After(20 * time.Second):
			cmd.Process.Kill()
			t.Fatal("the run did not stop on the signal")
		}
		if got := cmd.ProcessState.ExitCode(); got != c.code {
			t.Errorf("%v: exit %d, want %d", c.sig, got, c.code)
		}
		if got := filesIn(t, out); len(got) != 0 {
			t.Errorf("%v: left behind %v", c.sig, got)
		}
	}
}
