package main

import (
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// The hazard check --exhaustive finds on the flip-flop's q (clk falling
// while d differs from q: with the clock and its complement both unknown
// for a moment, master and slave pass together; the reason two-phase
// latches want non-overlapping clocks, common practice) is shown again by
// run on the steps file --save-steps writes, with --glitches, and recorded
// by the trace, whose replay repeats it. Without --glitches run stays
// silent about it, as it does with --glitches on a selector the search
// finds no glitch in.
func TestRunGlitchesShowsTheSearchsHazard(t *testing.T) {
	dir := t.TempDir()
	if code, out, errs := call("check", "demo:flipflop", "--exhaustive", "--save-steps", dir); code != 0 {
		t.Fatalf("check: exit %d\n%s%s", code, out, errs)
	}
	steps := filepath.Join(dir, "hazard-q.steps")
	b, err := os.ReadFile(steps)
	if err != nil {
		t.Fatalf("no saved sequence for the hazard on q: %v", err)
	}
	if !strings.Contains(string(b), "(with --glitches)") {
		t.Errorf("the saved sequence does not say it needs --glitches:\n%s", b)
	}
	const warn = "warn   glitch: q may glitch"

	code, out, errs := call("run", "demo:flipflop", "--steps", steps)
	if code != 0 || strings.Contains(out, "glitch") {
		t.Errorf("run without --glitches: exit %d, want 0 and no glitch\n%s%s", code, out, errs)
	}
	tr := filepath.Join(dir, "ff.trace")
	code, out, errs = call("run", "demo:flipflop", "--steps", steps, "--glitches", "--trace", tr)
	if code != 0 || !strings.Contains(out, warn) || !strings.Contains(out, "glitches: each step that changes one input") {
		t.Fatalf("run --glitches: exit %d, want 0 with %q\n%s%s", code, warn, out, errs)
	}
	if strings.Count(out, "warn   glitch") != 1 {
		t.Errorf("run --glitches warns of %d glitches, want the one the search found\n%s", strings.Count(out, "warn   glitch"), out)
	}

	// The trace keeps the option: its replay matches, and the same trace
	// claiming no glitch look differs (the warning is not repeated).
	if code, out, errs := call("replay", tr); code != 0 || !strings.Contains(out, "everything matches") {
		t.Errorf("replay: exit %d\n%s%s", code, out, errs)
	}
	tb, _ := os.ReadFile(tr)
	if !strings.Contains(string(tb), "\nglitches yes\n") {
		t.Fatalf("the trace has no glitches line:\n%s", tb)
	}
	off := filepath.Join(dir, "off.trace")
	os.WriteFile(off, []byte(strings.Replace(string(tb), "\nglitches yes\n", "\nglitches no\n", 1)), 0o644)
	if code, out, _ := call("replay", off); code != 1 || !strings.Contains(out, "glitch") {
		t.Errorf("replay without the glitch look: exit %d, want 1 naming the glitch\n%s", code, out)
	}
	bad := filepath.Join(dir, "bad.trace")
	os.WriteFile(bad, []byte(strings.Replace(string(tb), "\nglitches yes\n", "\nglitches maybe\n", 1)), 0o644)
	line := strings.Count(string(tb[:strings.Index(string(tb), "\nglitches yes\n")+1]), "\n") + 1
	code, _, errs = call("replay", bad)
	if want := bad + ":" + strconv.Itoa(line) + ":10: glitches wants yes or no"; code != 2 || !strings.Contains(errs, want) {
		t.Errorf("replay of a bad glitches line: exit %d, want 2 and %q\n%s", code, want, errs)
	}

	// Silent where the search finds no glitch: the transmission-gate
	// selector's own steps.
	code, out, errs = call("run", "demo:mux2_tgate", "--glitches")
	if code != 0 || strings.Contains(out, "glitch:") {
		t.Errorf("run demo:mux2_tgate --glitches: exit %d, want 0 and no glitch\n%s%s", code, out, errs)
	}
}
