package trace

import (
	"bytes"
	"errors"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
	"time"

	"railyard/switchsim"
	"railyard/switchsim/diag"
	"railyard/switchsim/session"
)

// record runs a session on design (with its default steps), applying do,
// and returns the trace saved into dir as name.
func record(t *testing.T, design string, mode switchsim.Mode, opt Options, dir, name string, do func(s *session.Session)) (string, Saved, *session.Session) {
	t.Helper()
	s, err := session.Open(design, "", session.Options{Mode: mode})
	if err != nil {
		t.Fatal(err)
	}
	if opt.Created.IsZero() {
		opt.Created = time.Date(2026, 3, 4, 5, 6, 7, 0, time.UTC)
	}
	w, err := Start(s, dir, opt)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { w.Close() })
	if do == nil {
		s.RunToEnd(false)
	} else {
		do(s)
	}
	p := filepath.Join(dir, name)
	saved, err := w.Save(p)
	if err != nil {
		t.Fatal(err)
	}
	return p, saved, s
}

func replayFile(t *testing.T, p string, opt ReplayOptions) (*Report, error) {
	t.Helper()
	f, err := os.Open(p)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	return Replay(p, f, opt)
}

// copyTestdata puts testdata files into dir.
func copyTestdata(t *testing.T, dir string, names ...string) {
	t.Helper()
	os.MkdirAll(dir, 0o755)
	for _, n := range names {
		b, err := os.ReadFile(filepath.Join("testdata", n))
		if err != nil {
			t.Fatal(err)
		}
		os.WriteFile(filepath.Join(dir, n), b, 0o644)
	}
}

var posRe = regexp.MustCompile(`^[^:]+:\d+:\d+: \S`)

// readErr reads text as a trace and returns its errors, each checked to be
// FILE:LINE:COL: message.
func readErr(t *testing.T, text string) []string {
	t.Helper()
	_, _, err := ReadAll("t.trace", []byte(text))
	if err == nil {
		return nil
	}
	var list diag.List
	if !errors.As(err, &list) {
		t.Fatalf("the error is %T, not a diag.List: %v", err, err)
	}
	lines := strings.Split(err.Error(), "\n")
	for _, l := range lines {
		if !posRe.MatchString(l) && !strings.Contains(l, "too many errors") {
			t.Errorf("error %q is not FILE:LINE:COL: message", l)
		}
	}
	return lines
}

func TestRoundTripAndCounts(t *testing.T) {
	dir := t.TempDir()
	copyTestdata(t, dir, "plat.sw", "plat.steps")
	// steps, a back, a set, another back: undone actions and backs are
	// actions like any other, counted the same by Save and by replay.
	p, saved, s := record(t, filepath.Join(dir, "plat.sw"), switchsim.Physical, Options{}, dir, "plat.trace", func(s *session.Session) {
		s.Next()
		s.Next()
		s.GoBack()
		s.SetByName("d", switchsim.Drive1)
		s.GoBack()
		s.RunToEnd(false)
	})
	if saved.Actions != s.Actions() || saved.Actions != 1+2+1+1+1+3 {
		t.Errorf("saved %d actions, the session took %d, want 9", saved.Actions, s.Actions())
	}
	rep, err := replayFile(t, p, ReplayOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if !rep.Match() || rep.Actions != saved.Actions || len(rep.Notes) != 0 {
		t.Errorf("replay: match %v, %d actions (saved %d), notes %v, differences %v", rep.Match(), rep.Actions, saved.Actions, rep.Notes, rep.Differences)
	}
	b, _ := os.ReadFile(p)
	// The design is named relative to the trace's folder (both are in dir).
	if !strings.Contains(string(b), "\ndesign plat.sw\n") || !strings.Contains(string(b), "\nsteps plat.steps\n") {
		t.Errorf("the trace does not name plat.sw and plat.steps relative to itself:\n%s", b)
	}
	if !strings.HasSuffix(string(b), "\nend 9\n") {
		t.Errorf("the trace does not end with end 9")
	}
}

// The tech line holds the thresholds in force, not the unset overrides
// (0): for an inverter VIL < VM < VIH, all inside the supply (the
// definition of the noise-margin points, common practice).
func TestTechLineValuesInForce(t *testing.T) {
	dir := t.TempDir()
	p, _, _ := record(t, "testdata/plat.sw", switchsim.Physical, Options{}, dir, "p.trace", nil)
	b, _ := os.ReadFile(p)
	m := regexp.MustCompile(`(?m)^tech .*\bvdd=([0-9.e+-]+) .*\bvih=([0-9.e+-]+) vil=([0-9.e+-]+) `).FindStringSubmatch(string(b))
	if m == nil {
		t.Fatalf("no tech line with vdd, vih, vil:\n%s", b)
	}
	vdd, _ := strconv.ParseFloat(m[1], 64)
	vih, _ := strconv.ParseFloat(m[2], 64)
	vil, _ := strconv.ParseFloat(m[3], 64)
	if !(0 < vil && vil < vdd/2 && vdd/2 < vih && vih < vdd) {
		t.Errorf("vil %v vih %v for vdd %v: want 0 < vil < vdd/2 < vih < vdd", vil, vih, vdd)
	}
}

func TestCapKeepsAReplayablePrefix(t *testing.T) {
	dir := t.TempDir()
	var w *Writer
	s, err := session.Open("testdata/opsel.sw", "", session.Options{Mode: switchsim.Ideal})
	if err != nil {
		t.Fatal(err)
	}
	if w, err = Start(s, dir, Options{MaxBytes: 8000}); err != nil {
		t.Fatal(err)
	}
	defer w.Close()
	for i := 0; i < 200; i++ {
		s.Toggle(s.Netlist().Inputs()[i%3])
	}
	capped, skipped, why := w.Capped()
	if !capped || skipped == 0 || !strings.Contains(why, "cap") {
		t.Fatalf("Capped() = %v %d %q after 200 toggles under an 8,000-byte cap", capped, skipped, why)
	}
	if w.Actions()+skipped != s.Actions() {
		t.Errorf("%d written + %d skipped != %d taken", w.Actions(), skipped, s.Actions())
	}
	p := filepath.Join(dir, "capped.trace")
	saved, err := w.Save(p)
	if err != nil {
		t.Fatal(err)
	}
	if fi, _ := os.Stat(p); fi.Size() > 8000 {
		t.Errorf("the capped trace is %d bytes, over its cap of 8000", fi.Size())
	}
	rep, err := replayFile(t, p, ReplayOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if !rep.Match() || rep.Actions != saved.Actions || rep.Capped != skipped {
		t.Errorf("replay of the capped trace: match %v, %d actions (saved %d), capped %d (skipped %d)", rep.Match(), rep.Actions, saved.Actions, rep.Capped, skipped)
	}
}

func TestSaveRefusesInputs(t *testing.T) {
	dir := t.TempDir()
	copyTestdata(t, dir, "plat.sw", "plat.steps")
	design := filepath.Join(dir, "plat.sw")
	s, _ := session.Open(design, "", session.Options{Mode: switchsim.Ideal})
	w, err := Start(s, dir, Options{})
	if err != nil {
		t.Fatal(err)
	}
	defer w.Close()
	before, _ := os.ReadFile(design)
	for _, p := range []string{design, filepath.Join(dir, "plat.steps")} {
		if _, err := Save(s, p); err == nil || !strings.Contains(err.Error(), "refusing to write over it") {
			t.Errorf("Save over %s: %v", p, err)
		}
	}
	if after, _ := os.ReadFile(design); !bytes.Equal(before, after) {
		t.Error("the design was changed")
	}
	// A session without a Writer has no trace to save.
	s2, _ := session.Open(design, "", session.Options{})
	if _, err := Save(s2, filepath.Join(dir, "x.trace")); !errors.Is(err, ErrNoTrace) {
		t.Errorf("Save without a Writer: %v", err)
	}
}

// goodTrace is a small trace written by the writer, to be edited.
func goodTrace(t *testing.T) string {
	t.Helper()
	p, _, _ := record(t, "testdata/opsel.sw", switchsim.Ideal, Options{}, t.TempDir(), "o.trace", nil)
	b, err := os.ReadFile(p)
	if err != nil {
		t.Fatal(err)
	}
	if _, _, err := ReadAll("o.trace", b); err != nil {
		t.Fatalf("the writer's own trace does not read: %v", err)
	}
	return string(b)
}

func TestReadRefusesWhatCannotBeTrusted(t *testing.T) {
	good := goodTrace(t)
	lines := strings.SplitAfter(good, "\n")
	without := func(prefix string) string {
		var b strings.Builder
		for _, l := range lines {
			if !strings.HasPrefix(l, prefix) {
				b.WriteString(l)
			}
		}
		return b.String()
	}
	upTo := func(prefix string) string { // everything before the first line with prefix
		i := strings.Index(good, "\n"+prefix)
		return good[:i+1]
	}
	header := upTo("action 0 ")
	replace := func(old, new string) string {
		if !strings.Contains(good, old) {
			t.Fatalf("the trace lacks %q", old)
		}
		return strings.Replace(good, old, new, 1)
	}
	for _, c := range []struct {
		name, text, want string
	}{
		{"cut before end", strings.TrimSuffix(good, "end 5\n"), "ends without its end line"},
		{"cut at an action boundary", upTo("action 3 "), "ends without its end line"},
		{"header only", header, "has no actions"},
		{"header only with end", header + "end 0\n", "has no actions"},
		{"no design-sha256", without("design-sha256 "), "has no design-sha256 line"},
		{"no design", without("design "), "has no design line"},
		{"no mode", without("mode "), "has no mode line"},
		{"step -5", replace(`step 2 "register`, `step -5 "register`), "step number -5 is out of range"},
		{"step 0", replace(`step 2 "register`, `step 0 "register`), "step number 0 is out of range"},
		{"step 99999999999", replace(`step 2 "register`, `step 99999999999 "register`), "step number 99999999999 is out of range"},
		{"end too small", replace("end 5\n", "end 4\n"), "end says 4 actions, the trace holds 5"},
		{"end too large", replace("end 5\n", "end 6\n"), "end says 6 actions, the trace holds 5"},
		{"actions out of order", replace("action 3 ", "action 7 "), "action 7 where action 3 comes next"},
		{"no rounds", without("  rounds "), "has no rounds line"},
		{"round past rounds", replace("  r 1 ", "  r 9 "), "round 9 of an action of"},
		{"bad state", replace("  r 2 y 1 1 strong", "  r 2 y Q 1 strong"), `state "Q" is not one of`},
		{"bad drive", replace("sel=0 a=1", "sel=7 a=1"), `a step drive wants NAME=0|1|x|z, not "sel=7"`},
		{"two design lines", replace("mode ideal\n", "mode ideal\ndesign other.sw\n"), "a second design line"},
		{"header after action", replace("end 5\n", "mode ideal\nend 5\n"), "after the first action"},
		{"line after end", good + "action 5 back\n", "a line after the end line"},
		{"first action not start", replace("action 0 start", "action 0 back"), "the first action is not the start"},
		{"bad hash", replace("design-sha256 ", "design-sha256 12"), "design-sha256 wants 64 hexadecimal digits"},
		{"long line", replace("action 1 step 1", "action 1 step 1 "+strings.Repeat("x", MaxLine)), "the line is longer than the limit of 4 MiB"},
		{"NUL", replace("mode ideal", "mode id\x00eal"), "NUL byte"},
	} {
		errs := readErr(t, c.text)
		if len(errs) == 0 {
			t.Errorf("%s: read without error", c.name)
			continue
		}
		if !strings.Contains(strings.Join(errs, "\n"), c.want) {
			t.Errorf("%s: errors\n%s\nwant %q", c.name, strings.Join(errs, "\n"), c.want)
		}
	}
	// The 4 MiB line: the column is where the limit was passed.
	errs := readErr(t, replace("action 1 step 1", "action 1 step 1 "+strings.Repeat("x", MaxLine)))
	if !strings.Contains(errs[0], ":"+strconv.Itoa(MaxLine+1)+": ") {
		t.Errorf("long line error %q lacks the column %d", errs[0], MaxLine+1)
	}
}

// A file that is plainly not a trace gives one error that quotes nothing;
// garbage after a good start stops after a few errors, each quoting at
// most a short excerpt.
func TestReadStopsOnGarbage(t *testing.T) {
	secret := "root:$6$Jk9sQ2$averylongpasswordhashthatmustnotbeshownanywhere:19000:0:99999:7:::\n"
	errs := readErr(t, strings.Repeat(secret, 50))
	if len(errs) != 1 || !strings.Contains(errs[0], "not a railyard trace") || strings.Contains(errs[0], "Jk9sQ2") {
		t.Errorf("errors for a password file:\n%s", strings.Join(errs, "\n"))
	}
	errs = readErr(t, "railyard-trace 2\n"+strings.Repeat(secret, 500))
	if len(errs) > maxErrors+1 {
		t.Errorf("%d errors for 500 bad lines, want at most %d and a last line", len(errs), maxErrors+1)
	}
	if !strings.Contains(errs[len(errs)-1], "too many errors") {
		t.Errorf("the last error %q does not say the read stopped", errs[len(errs)-1])
	}
	for _, e := range errs {
		if strings.Contains(e, "averylongpasswordhash") {
			t.Errorf("an error quotes more than a short excerpt: %q", e)
		}
	}
}

// Old traces (version 1, as railyard wrote them before) still read.
func TestVersionOneReads(t *testing.T) {
	b, err := os.ReadFile("../../cmd/railyard/testdata/trace_plat_v1.trace")
	if err != nil {
		t.Fatal(err)
	}
	info, acts, err := ReadAll("v1.trace", b)
	if err != nil {
		t.Fatal(err)
	}
	// Hand-checked against the file: the start and four steps, end 5.
	if info.Header.Version != 1 || info.Actions != 5 || len(acts) != 5 || acts[2].Label != "hold: st keeps its charge while d changes" {
		t.Errorf("version %d, %d actions, %d read, label %q", info.Header.Version, info.Actions, len(acts), acts[2].Label)
	}
}

// A changed label is a difference, reported at the action's line.
func TestReplayFindsAChangedLabel(t *testing.T) {
	dir := t.TempDir()
	copyTestdata(t, dir, "opsel.sw", "opsel.steps")
	p, _, _ := record(t, filepath.Join(dir, "opsel.sw"), switchsim.Ideal, Options{}, dir, "o.trace", nil)
	b, _ := os.ReadFile(p)
	text := string(b)
	line := 1 + strings.Count(text[:strings.Index(text, "action 2 ")], "\n")
	text = strings.Replace(text, `"register operand, low"`, `"register operand, LOW"`, 1)
	os.WriteFile(p, []byte(text), 0o644)
	rep, err := replayFile(t, p, ReplayOptions{})
	if err != nil {
		t.Fatal(err)
	}
	want := p + ":" + strconv.Itoa(line) + ":1: action 2: step 2's label is"
	if rep.Match() || len(rep.Differences) != 1 || !strings.HasPrefix(rep.Differences[0], want) {
		t.Errorf("differences %q, want one starting %q", rep.Differences, want)
	}
}

// A trace whose design folder moved: replay --designs finds the design by
// its content hash, even renamed, and the steps with it.
func TestReplayFindsAMovedDesign(t *testing.T) {
	root := t.TempDir()
	cells := filepath.Join(root, "cells")
	copyTestdata(t, cells, "plat.sw", "plat.steps")
	traces := filepath.Join(root, "traces")
	os.Mkdir(traces, 0o755)
	p, _, _ := record(t, filepath.Join(cells, "plat.sw"), switchsim.Physical, Options{}, traces, "plat.trace", nil)
	b, _ := os.ReadFile(p)
	if !strings.Contains(string(b), "\ndesign ../cells/plat.sw\n") {
		t.Fatalf("the trace does not name ../cells/plat.sw:\n%s", b)
	}
	// The folder is moved elsewhere and the design renamed.
	moved := filepath.Join(t.TempDir(), "library", "latches")
	os.MkdirAll(moved, 0o755)
	for old, new := range map[string]string{"plat.sw": "latch_bit.sw", "plat.steps": "latch_bit.steps"} {
		if err := os.Rename(filepath.Join(cells, old), filepath.Join(moved, new)); err != nil {
			t.Fatal(err)
		}
	}
	if _, err := replayFile(t, p, ReplayOptions{}); err == nil || !strings.Contains(err.Error(), "was not found") || !strings.Contains(err.Error(), "--designs") {
		t.Errorf("replay without --designs: %v", err)
	}
	rep, err := replayFile(t, p, ReplayOptions{Designs: filepath.Dir(moved)})
	if err != nil {
		t.Fatal(err)
	}
	if !rep.Match() || rep.Design != filepath.Join(moved, "latch_bit.sw") || len(rep.Notes) != 0 {
		t.Errorf("replay with --designs: design %s, match %v, notes %v, %v", rep.Design, rep.Match(), rep.Notes, rep.Differences)
	}
}

// A trace may name any file as its design: one that is not a design file
// is not read at all, and one that is named like a design but plainly is
// not gives only its first errors, each cut short.
func TestReplayOfANonDesign(t *testing.T) {
	dir := t.TempDir()
	garbage := strings.Repeat("daemon:$6$Jk9sQ2$averylongpasswordhashthatmustnotbeshownanywhere:19000:0:99999:7:::\n", 40)
	good := goodTrace(t)
	for _, name := range []string{"shadow", "shadow.sw"} {
		secret := filepath.Join(dir, name)
		os.WriteFile(secret, []byte(garbage), 0o600)
		text := regexp.MustCompile(`(?m)^design .*$`).ReplaceAllString(good, "design "+secret)
		p := filepath.Join(dir, "evil.trace")
		os.WriteFile(p, []byte(text), 0o644)
		_, err := replayFile(t, p, ReplayOptions{})
		if err == nil {
			t.Fatalf("%s: a password file replayed as a design", name)
		}
		lines := strings.Split(err.Error(), "\n")
		last := lines[len(lines)-1]
		switch name {
		case "shadow":
			if len(lines) != 1 || !strings.Contains(last, "is not a design file") {
				t.Errorf("%s:\n%s", name, err)
			}
		default:
			if len(lines) > designErrors+1 || !strings.Contains(last, "does not read as a design") {
				t.Errorf("%s: %d lines:\n%s", name, len(lines), err)
			}
		}
		for _, l := range lines {
			if strings.Contains(l, "Jk9sQ2$averylong") {
				t.Errorf("%s: a line shows more than a short excerpt: %q", name, l)
			}
		}
	}
}
