package main

import (
	"bytes"
	"encoding/json"
	"flag"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"railyard/designs"
)

var update = flag.Bool("update", false, "rewrite the golden files in testdata/")

// call runs the program in-process.
func call(args ...string) (code int, stdout, stderr string) {
	var o, e bytes.Buffer
	code = run(args, &o, &e)
	return code, o.String(), e.String()
}

// golden compares got with testdata/NAME.golden (or rewrites it with -update).
// The golden files were read through by hand when first written; each
// test's comments say what in them is checked against the circuit.
func golden(t *testing.T, name, got string) {
	t.Helper()
	path := filepath.Join("testdata", name+".golden")
	if *update {
		if err := os.WriteFile(path, []byte(got), 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("%v (run go test -update to create it)", err)
	}
	if got != string(want) {
		t.Errorf("%s differs from the golden file (go test -update rewrites it)\n--- got\n%s\n--- want\n%s", name, got, want)
	}
}

func TestGoldenTextReports(t *testing.T) {
	for _, c := range []struct {
		name string
		args []string
		code int
	}{
		// Transmission gates pass both levels at strong strength (common
		// practice), so every check of the selector passes: exit 0.
		{"run_opsel_ideal", []string{"run", "testdata/opsel.sw", "--ideal"}, 0},
		// Row 2 wants y=0 with sel=1, b=1: the selector gives 1, exit 1.
		{"run_opsel_wrong_ideal", []string{"run", "testdata/opsel.sw", "--steps", "testdata/opsel_wrong.steps", "--ideal"}, 1},
		// The held rows keep st by charge (Z, held-by-charge warnings).
		{"run_plat_ideal", []string{"run", "testdata/plat.sw", "--ideal"}, 0},
		// switchsim/FORMATS.md --full-swing: a 1 check also needs state 1, and st is Z
		// while held, so row 2 fails.
		{"run_plat_ideal_fullswing", []string{"run", "--full-swing", "testdata/plat.sw", "--ideal"}, 1},
		// No steps: the report is the initial settle, exit 0.
		{"run_bus_nosteps", []string{"run", "testdata/bus.sw", "--ideal"}, 0},
		// Every slip of slips.sw is named (its comments say which); the rails
		// joined by the pull-up and pull-down fail the check (issue 18 item 2).
		{"check_slips", []string{"check", "testdata/slips.sw"}, 1},
		// bus.sw counted by hand: 16 states (4 with en=1; with en=0 the bus
		// holds 0, 1 or X for each a, b), 3 flips each; the fight in 2 states
		// reached by 10 transitions, 2 moves from every input 0; floating in
		// the 12 en=0 states, from the start.
		{"check_bus_exhaustive", []string{"check", "testdata/bus.sw", "--exhaustive", "--ideal"}, 1},
	} {
		t.Run(c.name, func(t *testing.T) {
			code, out, errOut := call(c.args...)
			if code != c.code {
				t.Errorf("exit %d, want %d; stderr:\n%s", code, c.code, errOut)
			}
			if errOut != "" {
				t.Errorf("stderr not empty:\n%s", errOut)
			}
			golden(t, c.name, out)
		})
	}
}

var createdLine = regexp.MustCompile(`(?m)^created .*$`)

// copyFiles copies testdata files into dir, returning their new paths.
func copyFiles(t *testing.T, dir string, names ...string) []string {
	t.Helper()
	if err := os.MkdirAll(dir, 0o755); err != nil {
		t.Fatal(err)
	}
	var out []string
	for _, n := range names {
		b, err := os.ReadFile(filepath.Join("testdata", n))
		if err != nil {
			t.Fatal(err)
		}
		p := filepath.Join(dir, n)
		if err := os.WriteFile(p, b, 0o644); err != nil {
			t.Fatal(err)
		}
		out = append(out, p)
	}
	return out
}

func TestGoldenTrace(t *testing.T) {
	// A project folder: the cells in cells/, the traces in traces/.
	dir := t.TempDir()
	design := copyFiles(t, filepath.Join(dir, "cells"), "plat.sw", "plat.steps")[0]
	tr := filepath.Join(dir, "traces", "plat.trace")
	os.MkdirAll(filepath.Dir(tr), 0o755)
	if code, _, e := call("run", design, "--ideal", "--trace", tr); code != 0 {
		t.Fatalf("exit %d: %s", code, e)
	}
	b, err := os.ReadFile(tr)
	if err != nil {
		t.Fatal(err)
	}
	text := string(b)
	if !createdLine.MatchString(text) {
		t.Error("the trace has no created line")
	}
	// The creation time is the one machine-dependent line. Checked by hand
	// in the golden file: the design and steps named relative to the
	// trace's folder (../cells/plat.sw), their sha256 (as sha256sum prints
	// for the two files), vil and vih as computed for the generic preset
	// (0.737 and 0.961 V, as run prints them), the four steps of
	// plat.steps with their labels, drives and wanted values, and end 5
	// (the start and four steps).
	golden(t, "trace_plat_ideal", createdLine.ReplaceAllString(text, "created TIME"))
	// No temporary file is left beside it (the write is a rename), and the
	// spool the session streamed to has no name.
	ents, _ := os.ReadDir(filepath.Dir(tr))
	if len(ents) != 1 {
		t.Errorf("%d files in the trace's folder, want 1", len(ents))
	}
}

func TestExitCodes(t *testing.T) {
	for _, c := range []struct {
		args   []string
		code   int
		stderr string // a regexp stderr must match ("" for empty stderr)
	}{
		{[]string{"run", "testdata/opsel.sw"}, 0, ""},
		{[]string{"run", "testdata/opsel.sw", "--steps", "testdata/opsel_wrong.steps"}, 1, ""},
		{[]string{"run", "testdata/broken.sw"}, 2, `(?m)^testdata/broken\.sw:3:1: `},
		{[]string{"run", "testdata/nonexistent.sw"}, 2, `testdata/nonexistent\.sw: cannot read`},
		{[]string{"run", "testdata/opsel.sw", "--steps", "testdata/nonexistent.steps"}, 2, `nonexistent\.steps`},
		{[]string{"run"}, 2, `want one DESIGN`},
		{[]string{"run", "a.sw", "b.sw"}, 2, `want one DESIGN`},
		{[]string{"run", "testdata/opsel.sw", "--colour"}, 2, `flag provided but not defined: -colour`},
		{[]string{"run", "demo:nosuch"}, 2, `no demo design named "nosuch"`},
		{[]string{"frobnicate"}, 2, `unknown command "frobnicate"`},
		{[]string{"--json"}, 2, `needs a command`},
		{[]string{"replay"}, 2, `want one TRACE`},
		{[]string{"replay", "testdata/nonexistent.trace"}, 2, `nonexistent\.trace`},
		{[]string{"replay", "testdata/opsel.sw"}, 2, `(?m)^testdata/opsel\.sw:\d+:\d+: not a railyard trace`},
		{[]string{"check", "testdata/slips.sw"}, 1, ""},
		{[]string{"check", "testdata/bus.sw", "--exhaustive"}, 1, ""},
		{[]string{"check", "testdata/opsel.sw", "--exhaustive"}, 0, ""},
		{[]string{"check", "testdata/broken.sw"}, 2, `(?m)^testdata/broken\.sw:4:1: `},
		{[]string{"check"}, 2, `want at least one DESIGN`},
		{[]string{"designs", "extra"}, 2, `takes no arguments`},
		{[]string{"explore", "testdata/broken.sw"}, 2, `(?m)^testdata/broken\.sw:5:26: `},
		{[]string{"explore", "a.sw", "b.sw"}, 2, `want at most one DESIGN`},
	} {
		code, _, errOut := call(c.args...)
		if code != c.code {
			t.Errorf("%v: exit %d, want %d; stderr:\n%s", c.args, code, c.code, errOut)
		}
		if c.stderr == "" && errOut != "" {
			t.Errorf("%v: stderr not empty:\n%s", c.args, errOut)
		}
		if c.stderr != "" && !regexp.MustCompile(c.stderr).MatchString(errOut) {
			t.Errorf("%v: stderr does not match %q:\n%s", c.args, c.stderr, errOut)
		}
	}
}

var posLine = regexp.MustCompile(`^[^:\s]+:\d+:\d+: \S`)

func TestBadDesignWritesNothing(t *testing.T) {
	dir := t.TempDir()
	tr, vcd := filepath.Join(dir, "out.trace"), filepath.Join(dir, "out.vcd")
	code, out, errOut := call("run", "testdata/broken.sw", "--trace", tr, "--vcd", vcd)
	if code != 2 {
		t.Errorf("exit %d, want 2", code)
	}
	if out != "" {
		t.Errorf("stdout not empty:\n%s", out)
	}
	// broken.sw has three faults, on lines 3, 4 and 5 (switchsim/FORMATS.md: every
	// error is reported, each as FILE:LINE:COL: message).
	lines := strings.Split(strings.TrimSpace(errOut), "\n")
	if len(lines) != 3 {
		t.Fatalf("%d error lines, want 3:\n%s", len(lines), errOut)
	}
	for i, l := range lines {
		if !posLine.MatchString(l) || !strings.HasPrefix(l, "testdata/broken.sw:"+strconv.Itoa(i+3)+":") {
			t.Errorf("error line %q is not testdata/broken.sw:%d:COL: message", l, i+3)
		}
	}
	if ents, _ := os.ReadDir(dir); len(ents) != 0 {
		t.Errorf("files were written on failure: %v", ents)
	}
}

func TestBadStepsWritesNothing(t *testing.T) {
	dir := t.TempDir()
	steps := filepath.Join(dir, "bad.steps")
	// line 3: y is no input (an apply column must be one); line 4: a row
	// with too few values (switchsim/FORMATS.md steps errors).
	os.WriteFile(steps, []byte("apply sel a b\ncheck y\n0 1 0 | 1\n0 1 | 1\n"), 0o644)
	os.WriteFile(filepath.Join(dir, "bad2.steps"), []byte("apply sel y\n"), 0o644)
	tr, vcd := filepath.Join(dir, "out.trace"), filepath.Join(dir, "out.vcd")
	for _, st := range []string{steps, filepath.Join(dir, "bad2.steps")} {
		code, _, errOut := call("run", "testdata/opsel.sw", "--steps", st, "--trace", tr, "--vcd", vcd)
		if code != 2 {
			t.Errorf("%s: exit %d, want 2", st, code)
		}
		for _, l := range strings.Split(strings.TrimSpace(errOut), "\n") {
			if !strings.HasPrefix(l, st+":") || !regexp.MustCompile(`^[^:]+:\d+(:\d+)?: \S`).MatchString(l) {
				t.Errorf("error line %q is not %s:LINE:COL: message", l, st)
			}
		}
	}
	if _, err := os.Stat(tr); err == nil {
		t.Error("a trace was written on failure")
	}
	if _, err := os.Stat(vcd); err == nil {
		t.Error("a VCD was written on failure")
	}
}

func TestReplayRoundTrip(t *testing.T) {
	dir := t.TempDir()
	for i, c := range [][]string{
		{"testdata/opsel.sw", "--ideal"},
		{"testdata/plat.sw"},
		{"testdata/plat.sw", "--full-swing"},
		{"testdata/bus.sw"},
		{"demo:static_latch"},
		{"demo:flipflop"},
		{"demo:lost_level"}, // its checks fail in physical mode; the replay still matches
		{"demo:mux4_tgate", "--ideal"},
	} {
		tr := filepath.Join(dir, strconv.Itoa(i)+".trace")
		if code, _, e := call(append([]string{"run", "--trace", tr}, c...)...); code == 2 {
			t.Fatalf("%v: exit 2: %s", c, e)
		}
		code, out, errOut := call("replay", tr)
		if code != 0 || !strings.Contains(out, "everything matches") {
			t.Errorf("%v: replay exit %d\n%s%s", c, code, out, errOut)
		}
	}
}

func TestReplayNamesTheTamperedLine(t *testing.T) {
	dir := t.TempDir()
	tr := filepath.Join(dir, "plat.trace")
	if code, _, e := call("run", "testdata/plat.sw", "--ideal", "--trace", tr); code != 0 {
		t.Fatal(e)
	}
	b, _ := os.ReadFile(tr)
	lines := strings.Split(string(b), "\n")
	// Edit the state of st in the change line of action 2 (the hold: st
	// floats holding 1): make it hold 0 instead.
	action, edited := -1, -1
	for i, l := range lines {
		if strings.HasPrefix(l, "action 2 ") {
			action = i + 1
		}
		if action > 0 && edited < 0 && strings.HasPrefix(l, "  r 1 st Z 1 ") {
			lines[i] = strings.Replace(l, "st Z 1", "st Z 0", 1)
			edited = i + 1
		}
	}
	if edited < 0 {
		t.Fatalf("no change line for st in action 2:\n%s", b)
	}
	os.WriteFile(tr, []byte(strings.Join(lines, "\n")), 0o644)
	code, out, _ := call("replay", tr)
	if code != 1 {
		t.Errorf("replay of a tampered trace: exit %d, want 1\n%s", code, out)
	}
	// The difference is reported at the action's line, FILE:LINE:COL: action 2: ...
	want := tr + ":" + strconv.Itoa(action) + ":1: action 2: "
	if !strings.Contains(out, want) || !strings.Contains(out, `"1 st Z 0 medium -"`) {
		t.Errorf("output does not name %q and the edited change:\n%s", want, out)
	}
}

func TestReplayReportsChangedDesign(t *testing.T) {
	dir := t.TempDir()
	src, _ := os.ReadFile("testdata/opsel.sw")
	steps, _ := os.ReadFile("testdata/opsel.steps")
	design := filepath.Join(dir, "opsel.sw")
	os.WriteFile(design, src, 0o644)
	os.WriteFile(filepath.Join(dir, "opsel.steps"), steps, 0o644)
	tr := filepath.Join(dir, "opsel.trace")
	if code, _, e := call("run", design, "--trace", tr); code != 0 {
		t.Fatal(e)
	}
	// A comment changes the content hash but not the circuit.
	os.WriteFile(design, append(src, []byte("# reviewed\n")...), 0o644)
	code, out, _ := call("replay", tr)
	if code != 1 || !strings.Contains(out, "the design changed since the trace was made") {
		t.Errorf("exit %d, want 1 with a changed-design message:\n%s", code, out)
	}
}

func TestFlagsAfterTheDesign(t *testing.T) {
	_, a, _ := call("run", "testdata/plat.sw", "--json", "--ideal")
	_, b, _ := call("run", "--json", "--ideal", "testdata/plat.sw")
	_, c, _ := call("run", "--ideal", "testdata/plat.sw", "--json")
	if a != b || a != c || !strings.HasPrefix(a, `{"design": "plat", "mode": "ideal"`) {
		t.Errorf("flag order changes the output:\n%s\n%s\n%s", a, b, c)
	}
	// After "--" everything is positional: "--json" is then a second design.
	if code, _, _ := call("run", "--", "testdata/plat.sw", "--json"); code != 2 {
		t.Errorf("run -- DESIGN --json: exit %d, want 2 (two designs)", code)
	}
}

func TestRunJSONLines(t *testing.T) {
	code, out, _ := call("run", "testdata/opsel.sw", "--json", "--steps", "testdata/opsel_wrong.steps")
	if code != 1 {
		t.Errorf("exit %d, want 1 (row 2 fails)", code)
	}
	lines := strings.Split(strings.TrimSpace(out), "\n")
	if len(lines) != 4 { // header, 2 steps, summary
		t.Fatalf("%d lines, want 4:\n%s", len(lines), out)
	}
	for i, l := range lines {
		var m map[string]any
		if err := json.Unmarshal([]byte(l), &m); err != nil {
			t.Errorf("line %d: %v", i+1, err)
		}
	}
	var sum struct {
		Summary struct{ Steps, Checks, Failed, Warnings int }
	}
	json.Unmarshal([]byte(lines[3]), &sum)
	if sum.Summary.Steps != 2 || sum.Summary.Checks != 2 || sum.Summary.Failed != 1 {
		t.Errorf("summary %+v, want 2 steps, 2 checks, 1 failed", sum.Summary)
	}
	// Without steps: the initial settle as step 0, and zero steps counted.
	_, out, _ = call("run", "testdata/bus.sw", "--json")
	lines = strings.Split(strings.TrimSpace(out), "\n")
	if len(lines) != 3 || !strings.HasPrefix(lines[1], `{"step": 0, "label": "initial settle"`) ||
		!strings.HasPrefix(lines[2], `{"summary": {"steps": 0, "checks": 0, "failed": 0`) {
		t.Errorf("no-steps JSON:\n%s", out)
	}
}

func TestVCDFlag(t *testing.T) {
	dir := t.TempDir()
	vcd := filepath.Join(dir, "opsel.vcd")
	if code, _, e := call("run", "testdata/opsel.sw", "--vcd", vcd); code != 0 {
		t.Fatal(e)
	}
	b, err := os.ReadFile(vcd)
	if err != nil {
		t.Fatal(err)
	}
	text := string(b)
	// IEEE 1364-2005 §18.2: the header commands, then the dump at #0;
	// 4 steps give #0 .. #4 and a closing #5.
	for _, want := range []string{"$date\n", "$timescale 1 ns $end\n", "$scope module opsel $end\n", "$var wire 1 ! sel $end\n", "$enddefinitions $end\n#0\n$dumpvars\n", "\n#4\n", "\n#5\n"} {
		if !strings.Contains(text, want) {
			t.Errorf("VCD lacks %q", want)
		}
	}
}

func TestBareNotATerminal(t *testing.T) {
	code, out, errOut := call()
	if code != 0 {
		t.Errorf("exit %d, want 0 (switchsim/FORMATS.md: not on a terminal, the demo's batch report)", code)
	}
	if !strings.HasPrefix(out, "design "+designs.Default+" ") || !strings.Contains(out, "\nsummary: ") {
		t.Errorf("not the demo's batch report:\n%s%s", out, errOut)
	}
}

func TestDesignsList(t *testing.T) {
	code, out, _ := call("designs")
	if code != 0 {
		t.Fatalf("exit %d", code)
	}
	lines := strings.Split(strings.TrimSuffix(out, "\n"), "\n")
	list := designs.All()
	if len(lines) != len(list) {
		t.Fatalf("%d lines for %d designs", len(lines), len(list))
	}
	for i, e := range list {
		f := strings.Fields(lines[i])
		if len(f) < 2 || f[0] != e.Name || !strings.HasPrefix(strings.Join(f[1:], " "), strings.Join(strings.Fields(e.Desc), " ")) {
			t.Errorf("line %q, want %s and %q", lines[i], e.Name, e.Desc)
		}
		// every listed name runs as demo:NAME
		if code, _, e := call("run", "demo:"+e.Name, "--json"); code == 2 {
			t.Errorf("demo:%s does not run: %s", list[i].Name, e)
		}
	}
}

func TestHelp(t *testing.T) {
	code, out, _ := call("--help")
	if code != 0 {
		t.Errorf("--help: exit %d", code)
	}
	for _, c := range commands {
		if !strings.Contains(out, "  "+c.name+" ") {
			t.Errorf("--help does not list %s", c.name)
		}
		code, out, errOut := call(c.name, "--help")
		if code != 0 || errOut != "" {
			t.Errorf("%s --help: exit %d, stderr %q", c.name, code, errOut)
		}
		if c.name == "serve" { // its own piece of work: only the exit code is this file's business
			continue
		}
		if !strings.HasPrefix(out, "usage: railyard "+c.name) {
			t.Errorf("%s --help does not start with its usage line:\n%s", c.name, out)
		}
		if !strings.Contains(out, "\nexamples:\n") {
			t.Errorf("%s --help has no examples", c.name)
		}
	}
	if code, out, _ := call("help", "run"); code != 0 || !strings.HasPrefix(out, "usage: railyard run") {
		t.Errorf("help run: exit %d\n%s", code, out)
	}
}

func TestCheckIgnoresBrokenSteps(t *testing.T) {
	// check reads the design alone, so a broken steps file beside it does
	// not stop it; run reads both and refuses.
	dir := t.TempDir()
	src, _ := os.ReadFile("testdata/opsel.sw")
	design := filepath.Join(dir, "opsel.sw")
	os.WriteFile(design, src, 0o644)
	os.WriteFile(filepath.Join(dir, "opsel.steps"), []byte("apply nosuch\n"), 0o644)
	if code, _, e := call("check", design); code != 0 {
		t.Errorf("check: exit %d, want 0: %s", code, e)
	}
	if code, _, e := call("run", design); code != 2 || !strings.Contains(e, "opsel.steps:1:") {
		t.Errorf("run: exit %d, want 2 with the steps file's position: %s", code, e)
	}
}
