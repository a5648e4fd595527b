package sshserve

import (
	"bytes"
	"fmt"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
	"time"

	"railyard/switchsim/cardfile"
	"railyard/switchsim/netfile"
	"railyard/switchsim/trace"
)

// servedLatch is a latch in netlist cards whose models come from an
// included file and whose names the .sw format spells otherwise (Q<0>,
// s$1), with a wire resistor to QR.
const (
	servedLatch = `Operand latch, served
.include models.inc
.subckt OPLATCH D CLK Q<0> QR VDD VSS
MN1 D CLK s$1 VSS nch W=0.4u L=0.18u
MP1 D CLKB s$1 VDD pch W=0.8u L=0.18u
MI CLKB CLK VSS VSS nch
MJ CLKB CLK VDD VDD pch
MK QB s$1 VSS VSS nch
ML QB s$1 VDD VDD pch
MM Q<0> QB VSS VSS nch
MO Q<0> QB VDD VDD pch
MN2 Q<0> CLKB s$1 VSS nch W=0.4u L=0.18u
MP2 Q<0> CLK s$1 VDD pch W=0.8u L=0.18u
RQ Q<0> QR 200
C1 s$1 VSS 3.5f
.ends
`
	servedModels = ".model nch nmos (level=1 vto=0.42 kp=190u)\n.model pch pmos (level=1 vto=-0.44 kp=62u)\n"
	servedSteps  = "apply D CLK\ncheck Q<0> QR\n1 1 | 1 1\n0 1 | 0 0\n0 0 | 0 0\n1 0 | 0 0\n1 1 | 1 1\n"
)

// runServed opens name over SSH, applies every step, quits, and returns
// the trace the server kept of the session.
func runServed(t *testing.T, ts *testServer, name string, steps int) []byte {
	t.Helper()
	tm := ts.open(t, ts.keys[0], "alice", name, 120, 30)
	tm.waitFor("step 0/")
	for i := 1; i <= steps; i++ {
		tm.send("n")
		tm.waitFor("step " + itoa(i) + "/" + itoa(steps))
	}
	tm.send("q")
	re := regexp.MustCompile(`trace saved as (\S+\.trace)`)
	end := time.Now().Add(readDeadline)
	for time.Now().Before(end) {
		if m := re.FindStringSubmatch(tm.text()); m != nil {
			tm.exit()
			b, err := os.ReadFile(filepath.Join(ts.dir, "traces", filepath.FromSlash(m[1])))
			must(t, err)
			return b
		}
		time.Sleep(10 * time.Millisecond)
	}
	t.Fatalf("no trace saved:\n%s", tail(tm.text(), 20))
	return nil
}

func itoa(n int) string { return fmt.Sprint(n) }

// actionsOf is a trace from its first action on: what the session did.
func actionsOf(b []byte) string {
	s := string(b)
	return s[strings.Index(s, "\naction "):]
}

// Over SSH a netlist cell behaves as its .sw conversion: the picker lists
// the netlist, and the served sessions on the netlist and on the
// conversion, stepped through the same steps, record the same actions,
// node changes round by round, checks and warnings. The netlist's trace
// records its reader and inputs, and replays from a copy of the folder.
func TestServedNetlistAsConversion(t *testing.T) {
	ts := startServer(t, 1, realExplorer)
	ts.writeDesign(t, "latch.sp", servedLatch)
	ts.writeDesign(t, "models.inc", servedModels)
	ts.writeDesign(t, "latch.steps", servedSteps)
	d, err := cardfile.Read("latch.sp", []byte(servedLatch), cardfile.Options{Inputs: []string{"D", "CLK"},
		Open: func(string, string) (string, []byte, error) { return "models.inc", []byte(servedModels), nil }})
	must(t, err)
	var conv bytes.Buffer
	must(t, netfile.WriteConverted(&conv, d))
	ts.writeDesign(t, "latch_sw.sw", conv.String())
	ts.writeDesign(t, "latch_sw.steps", servedSteps)

	picker := ts.open(t, ts.keys[0], "alice", "", 80, 40)
	picker.waitFor("latch.sp")
	picker.waitFor("latch_sw")
	picker.send("q")
	picker.exit()

	fromNetlist := runServed(t, ts, "latch.sp", 5)
	fromSW := runServed(t, ts, "latch_sw", 5)
	if a, b := actionsOf(fromNetlist), actionsOf(fromSW); a != b {
		t.Errorf("the sessions differ:\n--- netlist\n%s\n--- conversion\n%s", a, b)
	}
	if !strings.Contains(string(fromNetlist), "\nformat netlist\n") || !strings.Contains(string(fromNetlist), "\ninputs D CLK\n") {
		t.Errorf("the netlist's trace does not record its reading:\n%s", fromNetlist)
	}
	if strings.Count(actionsOf(fromNetlist), "\naction ") != 6 {
		t.Errorf("want the start and five steps:\n%s", fromNetlist)
	}
	// A copy of the served folder elsewhere: the trace replays on it.
	copied := t.TempDir()
	for _, n := range []string{"latch.sp", "models.inc", "latch.steps"} {
		b, err := os.ReadFile(filepath.Join(ts.dir, "designs", n))
		must(t, err)
		must(t, os.WriteFile(filepath.Join(copied, n), b, 0o644))
	}
	rep, err := trace.Replay("t.trace", bytes.NewReader(fromNetlist), trace.ReplayOptions{Designs: copied})
	must(t, err)
	if !rep.Match() {
		t.Errorf("the served netlist's trace does not replay: %v", rep.Differences)
	}
}

// A served netlist's includes never leave the designs folder: neither a
// relative path out of it nor a link inside it that points out is read,
// and the refusal is shown with the include's position and without the
// server's paths. A bad netlist shows FILE:LINE:COL the same way.
func TestServedIncludesStayInside(t *testing.T) {
	ts := startServer(t, 1, realExplorer)
	outside := filepath.Join(ts.dir, "outside.inc")
	must(t, os.WriteFile(outside, []byte(servedModels), 0o644))
	must(t, os.Symlink(outside, filepath.Join(ts.dir, "designs", "linked.inc")))
	for name, want := range map[string][]string{
		"up.sp":   {"up.sp:2:10: cannot include", "leads out of the folder"},
		"link.sp": {"link.sp:2:10: cannot include", "points outside the folder"},
		"bad.sp":  {"bad.sp:4:1: wrong number of terminals"},
	} {
		src := strings.Replace(servedLatch, "models.inc", map[string]string{"up.sp": "../outside.inc", "link.sp": "linked.inc", "bad.sp": "models.inc"}[name], 1)
		if name == "bad.sp" {
			ts.writeDesign(t, "models.inc", servedModels)
			src = strings.Replace(src, "MN1 D CLK s$1 VSS nch", "MN1 D CLK s$1 nch", 1)
		}
		ts.writeDesign(t, name, src)
		tm := ts.open(t, ts.keys[0], "alice", name, 100, 24)
		if st := tm.exit(); st != 1 {
			t.Errorf("%s: exit status %d, want 1", name, st)
		}
		out := tm.text()
		for _, w := range want {
			if !strings.Contains(out, w) {
				t.Errorf("%s: %q not in:\n%s", name, w, out)
			}
		}
		if strings.Contains(out, ts.dir) {
			t.Errorf("%s: the server's folder shows in %q", name, out)
		}
	}
}
