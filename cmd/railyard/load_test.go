package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// Files that cannot be read name themselves and say why, in the
// FILE: message form (issue 17 item 15): no bare open error, no FILE:0:.
func TestUnreadableFiles(t *testing.T) {
	for _, c := range []struct {
		args []string
		want string // stderr's first line starts so
	}{
		{[]string{"run", "testdata/opsel.sw", "--steps", "testdata/nonexistent.steps"}, "testdata/nonexistent.steps: cannot read: no such file"},
		{[]string{"replay", "testdata"}, "testdata: cannot read: it is a folder, not a file"},
		{[]string{"replay", "testdata/nonexistent.trace"}, "testdata/nonexistent.trace: cannot read: no such file"},
		{[]string{"run", "testdata"}, "testdata: cannot read: it is a folder, not a file"},
		{[]string{"check", "testdata/nonexistent.sw"}, "testdata/nonexistent.sw: cannot read: no such file"},
		{[]string{"run", "testdata/opsel.sw", "--format", "spice"}, `railyard run: --format: unknown format "spice" (want sw, netlist, verilog)`},
	} {
		code, out, errOut := call(c.args...)
		if code != 2 || out != "" || !strings.HasPrefix(errOut, c.want) || strings.Contains(errOut, ":0:") {
			t.Errorf("%v: exit %d, stdout %q, stderr %q; want exit 2 and %q", c.args, code, out, errOut, c.want)
		}
	}
	if _, err := os.Stat("/dev/zero"); err == nil {
		code, _, errOut := call("run", "testdata/opsel.sw", "--steps", "/dev/zero")
		if code != 2 || !strings.HasPrefix(errOut, "/dev/zero:1:4194305: file is longer than the limit of 4 MiB") {
			t.Errorf("--steps /dev/zero: exit %d, %q", code, errOut)
		}
	}
}

// The extension picks the reader (a .sw text named .sp goes to the card
// reader, which refuses it with a position), and --format overrides it.
func TestFormatChoice(t *testing.T) {
	dir := t.TempDir()
	sp := filepath.Join(dir, "opsel.sp")
	src, _ := os.ReadFile("testdata/opsel.sw")
	os.WriteFile(sp, src, 0o644)
	code, _, errOut := call("run", sp)
	if code != 2 || !strings.HasPrefix(errOut, sp+":1:") {
		t.Errorf(".sp: exit %d, %q", code, errOut)
	}
	if code, _, errOut := call("run", sp, "--format", "sw", "--ideal"); code != 0 {
		t.Errorf("--format sw: exit %d, %q", code, errOut)
	}
}

// Notes on implausible values go to stderr with their positions and leave
// the exit status and the report alone (issue 18 item 15).
func TestNotesOnStderr(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "wide.sw")
	os.WriteFile(p, []byte("input a\noutput y\nnmos n a y gnd w=0.5\npullup p y\n"), 0o644)
	for _, cmd := range []string{"run", "check"} {
		code, out, errOut := call(cmd, p)
		want := p + ":3:18: note: w=0.5 is 0.5 m, outside the plausible range"
		if code != 0 || !strings.HasPrefix(errOut, want) || out == "" || strings.Contains(out, "note:") {
			t.Errorf("%s: exit %d, stderr %q, want %q on stderr only", cmd, code, errOut, want)
		}
	}
}
