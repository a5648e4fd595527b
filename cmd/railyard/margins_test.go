package main

import (
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"

	"railyard/designs"
	"railyard/switchsim/load"
	"railyard/switchsim/netfile"
)

// The body-effect pass level of testdata/passlevel.sw, worked by hand
// (its header): V = u^2 - phi, u = (-gamma + sqrt(gamma^2 + 4 c)) / 2,
// c = Vg - Vt0 + gamma sqrt(phi) + phi, with Vg 2.5 V, Vt0 0.43 V, gamma
// 0.4, phi 0.6 V: 1.7647 V (the textbook example's 1.765 V, from memory).
// Its margin for a 1 is V - vih = 1.7647 - 1.6 V.
func passLevelByHand() (v, margin float64) {
	gamma, phi, vt0, vg := 0.4, 0.6, 0.43, 2.5
	c := vg - vt0 + gamma*math.Sqrt(phi) + phi
	u := (-gamma + math.Sqrt(gamma*gamma+4*c)) / 2
	v = u*u - phi
	return v, v - 1.6
}

func TestMinMarginFailsBelowTheHandMargin(t *testing.T) {
	v, m := passLevelByHand()
	if math.Abs(v-1.765) > 0.001 || math.Abs(m-0.1647) > 0.001 {
		t.Fatalf("the hand figures: V %.4f, margin %.4f", v, m)
	}
	design := "testdata/passlevel.sw"
	// The JSON margin of the 1 check is the hand margin (to 0.1 mV, the
	// report's rounding; the engine's pass level agrees with the closed form).
	code, out, _ := call("run", design, "--json")
	if code != exitOK {
		t.Fatalf("without --min-margin: exit %d\n%s", code, out)
	}
	lines := jsonLines(t, out)
	chk := lines[1]["checks"].([]any)[0].(map[string]any)
	if got := chk["margin"].(float64); math.Abs(got-m) > 1e-4 {
		t.Errorf("the 1 check's margin %v, by hand %.4f", got, m)
	}
	node := lines[1]["nodes"].(map[string]any)["y"].(map[string]any)
	if got := node["margin"].(float64); math.Abs(got-m) > 1e-4 {
		t.Errorf("y's margin %v, by hand %.4f", got, m)
	}
	// Below the hand margin the check stands; above it, it fails.
	for _, c := range []struct {
		min  string
		code int
	}{{"0.15", exitOK}, {"0.16", exitOK}, {"0.17", exitFail}, {"0.2", exitFail}, {"-1", exitOK}} {
		code, out, errOut := call("run", design, "--min-margin", c.min)
		if code != c.code {
			t.Errorf("--min-margin %s: exit %d, want %d\n%s%s", c.min, code, c.code, out, errOut)
		}
		failed := strings.Contains(out, "check  y want 1 got H @1.76V  margin 0.16  FAIL (margin below ")
		if failed != (c.code == exitFail) {
			t.Errorf("--min-margin %s: the 1 check's line:\n%s", c.min, out)
		}
		// The 0 check (margin vil - 0 = 0.8 V) passes at every minimum here.
		if !strings.Contains(out, "check  y want 0 got 0 @0.00V  margin 0.80  pass") {
			t.Errorf("--min-margin %s: the 0 check's line:\n%s", c.min, out)
		}
	}
	_, out, _ = call("run", design, "--min-margin", "0.2", "--json")
	chk = jsonLines(t, out)[1]["checks"].([]any)[0].(map[string]any)
	if chk["pass"] != false || chk["below_min_margin"] != true {
		t.Errorf("--min-margin 0.2 --json: check %v, want failed below the minimum", chk)
	}
	// Refused: a margin in ideal mode, a number that is no voltage.
	for _, args := range [][]string{{"--min-margin", "0.1", "--ideal"}, {"--min-margin", "lots"}, {"--min-margin", "NaN"}} {
		if code, _, _ := call(append([]string{"run", design}, args...)...); code != exitUsage {
			t.Errorf("%v: exit %d, want %d", args, code, exitUsage)
		}
	}
}

func TestMinMarginTraceReplays(t *testing.T) {
	dir := t.TempDir()
	files := copyFiles(t, dir, "passlevel.sw", "passlevel.steps")
	tr := filepath.Join(dir, "p.trace")
	if code, _, _ := call("run", files[0], "--min-margin", "0.2", "--trace", tr); code != exitFail {
		t.Fatalf("exit %d", code)
	}
	b, _ := os.ReadFile(tr)
	text := string(b)
	for _, want := range []string{"\nmin-margin 0.2\n", "\n  check y 1 H 1 FAIL 0.165\n", "\n  check y 0 0 0 pass 0.800\n", "\nwatch y\n"} {
		if !strings.Contains(text, want) {
			t.Errorf("the trace lacks %q:\n%s", want, text)
		}
	}
	if code, out, errOut := call("replay", tr); code != exitOK {
		t.Errorf("replay: exit %d\n%s%s", code, out, errOut)
	}
	// A margin changed in the trace is a difference, named at its line.
	bad := strings.Replace(text, "FAIL 0.165", "FAIL 0.300", 1)
	if err := os.WriteFile(tr, []byte(bad), 0o644); err != nil {
		t.Fatal(err)
	}
	if code, out, _ := call("replay", tr); code != exitFail || !strings.Contains(out, "checks differ") {
		t.Errorf("a changed margin: exit %d\n%s", code, out)
	}
	// A trace written before check lines had margins (five fields, no
	// min-margin or watch line) still replays as a match.
	old := regexp.MustCompile(`(?m)^(  check \S+ \S+ \S+ \S+ (?:pass|FAIL)) \S+$`).ReplaceAllString(text, "$1")
	old = strings.Replace(old, "min-margin 0.2\n", "", 1)
	old = strings.Replace(old, "  check y 1 H 1 FAIL", "  check y 1 H 1 pass", 1) // without the minimum it passed
	old = strings.Replace(old, "watch y\n", "", 1)
	if err := os.WriteFile(tr, []byte(old), 0o644); err != nil {
		t.Fatal(err)
	}
	if code, out, errOut := call("replay", tr); code != exitOK {
		t.Errorf("an older trace: exit %d\n%s%s\n%s", code, out, errOut, old)
	}
}

// keeper_corner's table (its header's hand figures): the writes of a 1
// (steps 2 and 8) and what holds them (3, 4) pass at nominal and fast and
// FAIL at slow; every write of a 0 passes everywhere.
func TestCornersTableOfKeeperCorner(t *testing.T) {
	code, out, _ := call("run", "demo:keeper_corner", "--corners")
	if code != exitFail {
		t.Fatalf("exit %d, want %d (the slow corner fails)\n%s", code, exitFail, out)
	}
	row := regexp.MustCompile(`(?m)^(\d) (s|q) want (\d) +(pass|FAIL) +(-?[0-9.]+) +(pass|FAIL) +(-?[0-9.]+) +(pass|FAIL) +(-?[0-9.]+) +(\w+) (-?[0-9.]+)( FAIL)?$`)
	rows := row.FindAllStringSubmatch(out, -1)
	if len(rows) != 16 {
		t.Fatalf("%d rows, want 16 (8 steps, s and q):\n%s", len(rows), out)
	}
	if !strings.Contains(out, "check       nominal     slow        fast        worst") {
		t.Errorf("the head names nominal, slow and fast:\n%s", out)
	}
	for _, r := range rows {
		step, want := r[1], r[3]
		slowFails := want == "1" && strings.Contains("2348", step)
		if r[4] != "pass" || r[8] != "pass" || (r[6] == "FAIL") != slowFails {
			t.Errorf("row %q: want pass at nominal and fast, slow %v", r[0], map[bool]string{true: "FAIL", false: "pass"}[slowFails])
		}
		if slowFails && (r[10] != "slow" || r[12] != " FAIL") {
			t.Errorf("row %q: the worst corner is slow, failing", r[0])
		}
	}
	// Step 2's s at slow stays at the loop's stable low point, 0.661 V by
	// the level-1 equations (the design's header): its margin for the
	// wanted 1 is 0.661 - slow VIH 0.853 = -0.19 V.
	if !regexp.MustCompile(`(?m)^2 s want 1 +pass +0\.84 +FAIL -0\.19 +pass +0\.91 +slow -0\.19 FAIL$`).MatchString(out) {
		t.Errorf("step 2's s row:\n%s", out)
	}
	if !strings.Contains(out, "nominal 0 failed, 0 warnings; slow 8 failed") || !strings.HasSuffix(out, ": FAIL at slow\n") {
		t.Errorf("summary:\n%s", out)
	}
	// One corner alone: the failing write's settled voltage is the hand
	// figure within 5 mV.
	_, out, _ = call("run", "demo:keeper_corner", "--corner", "slow", "--json")
	lines := jsonLines(t, out)
	if lines[0]["corner"] != "slow" {
		t.Errorf("--corner slow: header %v", lines[0])
	}
	s := lines[2]["nodes"].(map[string]any)["s"].(map[string]any)
	if v := s["volts"].(float64); math.Abs(v-0.661) > 0.005 {
		t.Errorf("slow: s at %.4f V after the write of a 1, the level-1 loop's stable point is 0.661 V", v)
	}
	if code, _, _ := call("run", "demo:keeper_corner", "--corner", "nominal"); code != exitOK {
		t.Errorf("--corner nominal: exit %d", code)
	}
}

func TestCornersStrongKeeperAndJSON(t *testing.T) {
	code, out, _ := call("run", "demo:strong_keeper", "--corners")
	if code != exitFail || !strings.HasSuffix(out, ": FAIL at nominal, slow, fast\n") {
		t.Errorf("strong_keeper --corners: exit %d\n%s", code, out)
	}
	code, out, _ = call("run", "demo:strong_keeper", "--corners", "--json")
	if code != exitFail {
		t.Errorf("--json: exit %d", code)
	}
	lines := jsonLines(t, out)
	// Per corner: the header, 8 steps, the summary; then the verdicts.
	if len(lines) != 3*10+1 {
		t.Fatalf("%d lines, want 31", len(lines))
	}
	for i, l := range lines[:30] {
		if want := []string{"nominal", "slow", "fast"}[i/10]; l["corner"] != want {
			t.Errorf("line %d corner %v, want %s", i+1, l["corner"], want)
		}
	}
	if v := lines[30]["corners"].(map[string]any); v["pass"] != false || len(v["failed"].([]any)) != 3 {
		t.Errorf("verdicts %v", v)
	}
	// A design without corners: only its own technology, said on stderr.
	code, out, errOut := call("run", "demo:mux2_tgate", "--corners")
	if code != exitOK || !strings.Contains(errOut, "names no corners") || !strings.Contains(out, "PASS at every corner") {
		t.Errorf("mux2_tgate --corners: exit %d\n%s%s", code, out, errOut)
	}
	// Bad input: an unknown corner, two corner flags, corners with outputs.
	for _, args := range [][]string{{"--corner", "typical"}, {"--corner", "slow", "--corners"}, {"--corners", "--trace", "x.trace"}, {"--corners", "--ideal"}} {
		if code, _, _ := call(append([]string{"run", "demo:strong_keeper"}, args...)...); code != exitUsage {
			t.Errorf("%v: exit %d, want %d", args, code, exitUsage)
		}
	}
}

func TestCornerTraceReplays(t *testing.T) {
	dir := t.TempDir()
	tr := filepath.Join(dir, "k.trace")
	if code, _, _ := call("run", "demo:keeper_corner", "--corner", "slow", "--trace", tr); code != exitFail {
		t.Fatalf("exit %d", code)
	}
	b, _ := os.ReadFile(tr)
	if !strings.Contains(string(b), "\ncorner slow\n") || !strings.Contains(string(b), " vdd=1.62 ") {
		t.Errorf("the trace names its corner and the values in force:\n%s", b)
	}
	if code, out, errOut := call("replay", tr); code != exitOK {
		t.Errorf("replay: exit %d\n%s%s", code, out, errOut)
	}
	// Without its corner line the replay runs nominal, where the writes
	// pass: differences, not a match.
	os.WriteFile(tr, []byte(strings.Replace(string(b), "corner slow\n", "", 1)), 0o644)
	if code, _, _ := call("replay", tr); code != exitFail {
		t.Errorf("replayed at nominal: exit %d, want %d", code, exitFail)
	}
	// A corner the design does not name is bad input, at its line.
	os.WriteFile(tr, []byte(strings.Replace(string(b), "corner slow\n", "corner typical\n", 1)), 0o644)
	if code, _, errOut := call("replay", tr); code != exitUsage || !strings.Contains(errOut, `no corner "typical"`) {
		t.Errorf("an unknown corner: exit %d\n%s", code, errOut)
	}
}

func TestCheckCornersJUnit(t *testing.T) {
	dir := t.TempDir()
	xml := filepath.Join(dir, "c.xml")
	// keeper_corner fails at slow alone: its write of a 1 is a write-fail there.
	code, out, _ := call("check", "demo:keeper_corner", "demo:mux2_tgate", "--exhaustive", "--corners", "--junit", xml, "--json")
	if code != exitFail {
		t.Fatalf("exit %d, want %d\n%s", code, exitFail, out)
	}
	for _, l := range jsonLines(t, out) {
		if l["finding"] == "write-fail" && l["corner"] != "slow" {
			t.Errorf("a write-fail at %v", l["corner"])
		}
		if l["finding"] == nil && l["design"] != nil && (l["pass"] == false) != (l["corner"] == "slow") {
			t.Errorf("design line %v: only slow fails", l)
		}
	}
	var corners []string
	for _, l := range jsonLines(t, out) {
		if _, ok := l["design"]; ok && l["finding"] == nil {
			corners = append(corners, l["design"].(string)+"@"+l["corner"].(string))
		}
	}
	if got := strings.Join(corners, " "); got != "demo:keeper_corner@nominal demo:keeper_corner@slow demo:keeper_corner@fast demo:mux2_tgate@nominal" {
		t.Errorf("design lines %s", got)
	}
	b, err := os.ReadFile(xml)
	if err != nil {
		t.Fatal(err)
	}
	checkJUnitStructure(t, b)
	names := regexp.MustCompile(`<testcase name="([^"]+)"`).FindAllStringSubmatch(string(b), -1)
	var got []string
	for _, n := range names {
		got = append(got, n[1])
	}
	if strings.Join(got, " ") != "keeper_corner keeper_corner@slow keeper_corner@fast mux2_tgate" {
		t.Errorf("testcases %v: one per design and corner", got)
	}
	if n := strings.Count(string(b), "<failure "); n != 1 || !strings.Contains(string(b), `type="write-fail"`) {
		t.Errorf("%d failures, want the one write-fail at slow:\n%s", n, b)
	}
	// keeper_corner's worst margin at slow: s held at 0.66 V against slow
	// VIL 0.696 V: about 0.035 V, the smallest of its three. Two findings:
	// the failed write and its contention. Phase A alone finds no hazard on
	// q on the write's step: the keeper holds s at 0 with the write's pass
	// device on or off (physical_vertex.go).
	_, text, _ := call("check", "demo:keeper_corner", "--exhaustive", "--corners")
	if !regexp.MustCompile(`(?m)^  demo:keeper_corner slow +static, 9 states +2 +1 +0\.0[34] V .* FAIL$`).MatchString(text) {
		t.Errorf("the slow row's margin:\n%s", text)
	}
	if code, _, _ := call("check", "demo:mux2_tgate", "--corner", "slow"); code != exitUsage {
		t.Errorf("a design without the corner: exit %d, want %d", code, exitUsage)
	}
}

// A netlist has no corner statement: its corners are named in the .sw its
// conversion writes (the README, "Corners"). The converted opsel_latch
// with a slow and a fast corner added under its tech line runs --corners,
// and the corners' values (from the netlist's level-1 model cards, with
// the corner's keys replaced) are those in force.
func TestCornersOnAConvertedNetlist(t *testing.T) {
	d, err := load.Host(load.Options{}).Design("demo:opsel_latch")
	if err != nil {
		t.Fatal(err)
	}
	var b strings.Builder
	if err := netfile.WriteConverted(&b, d); err != nil {
		t.Fatal(err)
	}
	src := b.String()
	i := strings.Index(src, "\ntech ")
	if i < 0 {
		t.Fatalf("no tech line in the conversion:\n%s", src)
	}
	j := i + 1 + strings.IndexByte(src[i+1:], '\n')
	src = src[:j+1] + "corner slow vdd=1.62 vtn=0.495 vtp=0.495 kn=153u kp=54u\ncorner fast vdd=1.98 vtn=0.405 vtp=0.405 kn=187u kp=66u\n" + src[j+1:]
	dir := t.TempDir()
	sw := filepath.Join(dir, "opsel_latch.sw")
	steps, _ := designs.FS.ReadFile("opsel_latch.steps")
	if os.WriteFile(sw, []byte(src), 0o644) != nil || os.WriteFile(filepath.Join(dir, "opsel_latch.steps"), steps, 0o644) != nil {
		t.Fatal("cannot write the fixture")
	}
	code, out, errOut := call("run", sw, "--corners")
	if code != exitOK {
		t.Fatalf("exit %d\n%s%s\n%s", code, out, errOut, src)
	}
	for _, want := range []string{"  slow        vdd 1.620 V, vtn 0.495 V", "  fast        vdd 1.980 V, vtn 0.405 V", ": PASS at every corner\n"} {
		if !strings.Contains(out, want) {
			t.Errorf("no %q in\n%s", want, out)
		}
	}
	// The model cards' kp (170u for nch) is the nominal kn.
	if !strings.Contains(out, "  nominal     vdd 1.800 V, vtn 0.450 V, vtp 0.450 V, kn 0.00017, kp 6e-05") {
		t.Errorf("nominal from the model cards:\n%s", out)
	}
}
