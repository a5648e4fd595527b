package trace

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"railyard/switchsim"
	"railyard/switchsim/load"
	"railyard/switchsim/netfile"
	"railyard/switchsim/session"
)

// A latch in netlist cards whose rails have names no default knows (vp,
// vn), whose ports are upper case, and whose steps are not the default
// ones beside it: reading it needs --power, --ground and the inputs the
// run's steps gave.
const oddRailsLatch = `* a latch with rails of its own names
.subckt LAT D CLK Q vp vn
mn D CLK S vn nch w=0.4u l=0.18u
mp D CLKB S vp pch w=0.8u l=0.18u
mi CLKB CLK vn vn nch
mj CLKB CLK vp vp pch
mk Q S vn vn nch
ml Q S vp vp pch
.ends
`

// A netlist's trace records the reader, its options and the inputs, and
// replays from them alone: the replay is given no flags, and the steps
// file the run used is not the design's default one.
func TestNetlistTraceRecordsTheReading(t *testing.T) {
	dir := t.TempDir()
	design := filepath.Join(dir, "lat.sp")
	os.WriteFile(design, []byte(oddRailsLatch), 0o644)
	stepsFile := filepath.Join(dir, "write.steps")
	os.WriteFile(stepsFile, []byte("apply clk D\ncheck q\n1 1 | 0\n1 0 | 1\n0 1 | 1\n"), 0o644)
	files := load.Host(load.Options{ReadOptions: netfile.ReadOptions{Power: []string{"vp"}, Ground: []string{"vn"}}})
	s, err := session.OpenFrom(files, design, stepsFile, session.Options{Mode: switchsim.Physical})
	if err != nil {
		t.Fatal(err)
	}
	w, err := Start(s, dir, Options{Created: time.Date(2026, 3, 4, 5, 6, 7, 0, time.UTC)})
	if err != nil {
		t.Fatal(err)
	}
	defer w.Close()
	s.RunToEnd(false)
	p := filepath.Join(dir, "lat.trace")
	if _, err := w.Save(p); err != nil {
		t.Fatal(err)
	}
	b, _ := os.ReadFile(p)
	text := string(b)
	// The inputs are spelt as the netlist first spells them (the ports).
	for _, want := range []string{"\nformat netlist\n", "\nread power=vp ground=vn\n", "\ninputs D CLK\n"} {
		if !strings.Contains(text, want) {
			t.Errorf("the trace lacks %q:\n%s", want, text)
		}
	}
	rep, err := replayFile(t, p, ReplayOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if !rep.Match() {
		t.Errorf("the replay differs: %v", rep.Differences)
	}
	// Without the lines the netlist reads another way (its rails unknown):
	// the lines are what made the replay work.
	var stripped []string
	for _, l := range strings.SplitAfter(text, "\n") {
		if !strings.HasPrefix(l, "read ") && !strings.HasPrefix(l, "inputs ") {
			stripped = append(stripped, l)
		}
	}
	os.WriteFile(p, []byte(strings.Join(stripped, "")), 0o644)
	if rep, err := replayFile(t, p, ReplayOptions{}); err == nil && rep.Match() {
		t.Error("the trace without its read and inputs lines still replays: the test shows nothing")
	}
	// The replay's own loader options (the command's flags) fill in what
	// an older trace does not record.
	rep, err = replayFile(t, p, ReplayOptions{Files: load.Host(load.Options{ReadOptions: netfile.ReadOptions{
		Power: []string{"vp"}, Ground: []string{"vn"}, Inputs: []string{"d", "clk"}}})})
	if err != nil || !rep.Match() {
		t.Errorf("with the options given to the replay: %v %v", err, rep)
	}
}

// A .sw design's trace has none of the reader's lines.
func TestSWTraceHasNoReaderLines(t *testing.T) {
	text := goodTrace(t)
	for _, k := range []string{"\nformat ", "\nread ", "\ninputs "} {
		if strings.Contains(text, k) {
			t.Errorf("a .sw design's trace has a %q line", strings.TrimSpace(k))
		}
	}
}

// The reader's lines are checked: a known format, known option keys, and
// no options without a format.
func TestReaderLinesChecked(t *testing.T) {
	good := goodTrace(t)
	at := "\ncreated " // after the watch line (line 10): the lines inserted start at line 11
	insert := func(lines string) string { return strings.Replace(good, at, "\n"+lines+at, 1) }
	for _, c := range []struct{ name, text, want string }{
		{"unknown format", insert("format spice"), `:11:8: unknown format "spice" (want sw, netlist, verilog)`},
		{"unknown key", insert("format netlist\nread top=a scale=2"), `:12:12: unknown reader option "scale"`},
		{"empty value", insert("format netlist\nread top="), `:12:6: reader option top has no value`},
		{"bad quoted word", insert("format netlist\ninputs a \"b"), `:12:10: input "\"b" is no name`},
		{"read without format", insert("read top=a"), ":11:1: the read line needs a format line"},
		{"inputs without format", insert("inputs a b"), ":11:1: the inputs line needs a format line"},
	} {
		errs := strings.Join(readErr(t, c.text), "\n")
		if !strings.Contains(errs, c.want) {
			t.Errorf("%s: want %q, got:\n%s", c.name, c.want, errs)
		}
	}
}

// A word that is not plain printable ASCII stays one word and reads back.
func TestHeaderWords(t *testing.T) {
	for _, s := range []string{"a", "net<3>", "a b", "x\x1by", `q"`, "é,z"} {
		w := word(s)
		if strings.ContainsAny(w, " \t\x1b") {
			t.Errorf("word(%q) = %q is not one printable word", s, w)
		}
		if back, ok := unword(w); !ok || back != s {
			t.Errorf("unword(word(%q)) = %q, %v", s, back, ok)
		}
	}
}
