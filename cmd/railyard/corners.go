package main

// run --corners: the design's own technology and every corner it names,
// run in step with each other, reported as one table of checks by corner
// (README, "Corners").

import (
	"bufio"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"railyard/switchsim/diag"
	"railyard/switchsim/session"
)

// voltsFlag is a flag holding a voltage, and whether it was given.
type voltsFlag struct {
	set bool
	v   float64
}

func (f *voltsFlag) String() string {
	if !f.set {
		return ""
	}
	return strconv.FormatFloat(f.v, 'g', -1, 64)
}

func (f *voltsFlag) Set(s string) error {
	v, err := strconv.ParseFloat(strings.TrimSuffix(strings.TrimSpace(s), "V"), 64)
	if err != nil || math.IsNaN(v) || math.IsInf(v, 0) || math.Abs(v) > 100 {
		return fmt.Errorf("want a number of volts (e.g. 0.1), not %q", s)
	}
	f.set, f.v = true, v
	return nil
}

// runCorners runs the design at its own technology and at every corner.
// The text report is one table, a row per check, streamed as the steps
// run (every corner's session takes each step before the row is printed,
// so nothing is kept per step); --json gives each corner's whole report
// in turn, every line naming its corner, then a line of the corners'
// verdicts.
func runCorners(design string, o runOptions, stdout, stderr io.Writer) int {
	if o.load == nil {
		o.load = &loadFlags{}
	}
	files, err := o.load.loader()
	if err != nil {
		return usageError(stderr, "run", "%v", err)
	}
	nominal, err := session.OpenFrom(files, design, o.steps, o.sessionOptions())
	if err != nil {
		return loadError(stderr, err)
	}
	printNotes(stderr, nominal.Design())
	d := nominal.Design()
	if len(d.Corners) == 0 {
		fmt.Fprintf(stderr, "railyard run: %s names no corners (corner NAME KEY=VALUE ... statements): only its own technology is run\n",
			diag.Printable(design))
	}
	runs := []*session.Session{nominal}
	for _, name := range session.CornerNames(d) {
		s, err := session.Recorner(nominal, name, nil)
		if err != nil {
			return loadError(stderr, err)
		}
		runs = append(runs, s)
	}
	if o.json {
		return cornersJSON(runs, stdout, stderr)
	}
	t := newCornerTable(stdout, runs)
	t.header()
	if nominal.NumSteps() == 0 {
		t.row(events(runs, func(s *session.Session) *session.Event { return s.Last() }))
	}
	for {
		evs := events(runs, func(s *session.Session) *session.Event { e, _ := s.Next(); return e })
		if evs == nil {
			break
		}
		t.row(evs)
	}
	if err := t.close(); err != nil {
		fmt.Fprintf(stderr, "railyard run: %v\n", err)
		return exitUsage
	}
	if t.anyFailed() {
		return exitFail
	}
	return exitOK
}

// events takes one event from every run, or nil when the first has none.
func events(runs []*session.Session, next func(*session.Session) *session.Event) []*session.Event {
	out := make([]*session.Event, len(runs))
	for i, s := range runs {
		if out[i] = next(s); out[i] == nil {
			return nil
		}
	}
	return out
}

// cornersJSON writes each corner's report in turn, then the verdicts.
func cornersJSON(runs []*session.Session, stdout, stderr io.Writer) int {
	var failed []string
	for _, s := range runs {
		rep := session.NewCornerReport(stdout, s, session.JSON, true)
		if s.NumSteps() == 0 {
			rep.Add(s.Last(), s)
		}
		for {
			e, ok := s.Next()
			if !ok {
				break
			}
			rep.Add(e, s)
		}
		sum, err := rep.Close()
		if err != nil {
			fmt.Fprintf(stderr, "railyard run: %v\n", err)
			return exitUsage
		}
		if !sum.Pass() {
			failed = append(failed, s.CornerName())
		}
	}
	names := make([]string, len(runs))
	for i, s := range runs {
		names[i] = s.CornerName()
	}
	line := map[string]any{"corners": map[string]any{"run": names, "failed": append([]string{}, failed...), "pass": len(failed) == 0}}
	b, _ := json.Marshal(line)
	if _, err := stdout.Write(append(b, '\n')); err != nil {
		return exitUsage
	}
	if len(failed) > 0 {
		return exitFail
	}
	return exitOK
}

// cornerTable prints the table of checks by corner.
type cornerTable struct {
	w      *bufio.Writer
	runs   []*session.Session
	checkW int // the check column's width
	cellW  int // a corner's column width
	rows   int
	failed []int // per corner: checks failed
	warns  []int // per corner: warnings
	checks int
}

func newCornerTable(w io.Writer, runs []*session.Session) *cornerTable {
	t := &cornerTable{w: bufio.NewWriter(w), runs: runs, cellW: 11, checkW: len("check"),
		failed: make([]int, len(runs)), warns: make([]int, len(runs))}
	for _, s := range runs {
		t.cellW = max(t.cellW, len(s.CornerName())+1)
	}
	s := runs[0]
	if st := s.Steps(); st != nil {
		for _, n := range st.Check {
			t.checkW = max(t.checkW, len("99 ")+len(diag.Printable(s.Netlist().DisplayName(n)))+len(" want X"))
		}
	}
	t.checkW = min(t.checkW, 40)
	return t
}

func (t *cornerTable) p(f string, a ...any) { fmt.Fprintf(t.w, f, a...) }

func (t *cornerTable) header() {
	s := t.runs[0]
	nl := s.Netlist()
	t.p("design %s", diag.Printable(s.Design().Name))
	if nl.Desc != "" {
		t.p(" %s", strconv.Quote(diag.Printable(nl.Desc)))
	}
	t.p(" (%s)\n", diag.Printable(s.DesignPath()))
	t.p("mode %s, %d technologies: the design's own (nominal) and its corners\n", s.Options().Mode, len(t.runs))
	for _, r := range t.runs {
		tech := r.Netlist().Tech
		th := session.TechThresholds(tech)
		t.p("  %-*s vdd %.3f V, vtn %.3f V, vtp %.3f V, kn %s, kp %s: vil %.3f V, vih %.3f V, vm %.3f V\n", t.cellW, r.CornerName(),
			tech.Vdd, tech.Vtn, tech.Vtp, strconv.FormatFloat(tech.Kn, 'g', 3, 64), strconv.FormatFloat(tech.Kp, 'g', 3, 64), th.VIL, th.VIH, th.VM)
	}
	if s.Steps() != nil {
		t.p("steps %s: %d rows\n", diag.Printable(s.StepsPath()), s.NumSteps())
	} else {
		t.p("steps none: the table checks the initial settle\n")
	}
	if o := s.Options(); o.MarginCheck {
		t.p("min margin: a check whose margin is below %.3f V fails\n", o.MinMargin)
	}
	t.p("each cell: the check's verdict and margin in volts (V - VIH for a wanted 1, VIL - V for a 0)\n\n")
	t.p("%-*s", t.checkW, "check")
	for _, r := range t.runs {
		t.p(" %-*s", t.cellW, r.CornerName())
	}
	t.p(" worst\n")
}

// row prints the checks of one step, a line each, with the worst corner.
func (t *cornerTable) row(evs []*session.Event) {
	nl := t.runs[0].Netlist()
	for i, e := range evs {
		t.warns[i] += e.NumWarnings()
	}
	first := evs[0]
	step := "-"
	if first.Action.Kind == session.Step {
		step = strconv.Itoa(first.Action.Step + 1)
	}
	for c, chk := range first.Checks {
		if !session.IsCheck(chk) {
			continue
		}
		t.checks++
		label := fmt.Sprintf("%s %s want %s", step, diag.Printable(nl.DisplayName(chk.Node)), chk.Want)
		t.p("%-*s", t.checkW, label)
		worst := -1
		for i, e := range evs {
			r := e.Checks[c]
			if !r.Pass {
				t.failed[i]++
			}
			t.p(" %-*s", t.cellW, cellText(r))
			if worst < 0 || worse(r, evs[worst].Checks[c]) {
				worst = i
			}
		}
		w := evs[worst].Checks[c]
		t.p(" %s %s", t.runs[worst].CornerName(), strings.TrimSpace(marginCell(w.Margin)))
		if !w.Pass {
			t.p(" FAIL")
		}
		t.p("\n")
	}
}

// worse reports whether check a is worse than b: failing before passing,
// then the smaller margin.
func worse(a, b session.CheckResult) bool {
	if a.Pass != b.Pass {
		return !a.Pass
	}
	if math.IsNaN(b.Margin) {
		return !math.IsNaN(a.Margin)
	}
	return !math.IsNaN(a.Margin) && a.Margin < b.Margin
}

func cellText(r session.CheckResult) string {
	v := "pass"
	if !r.Pass {
		v = "FAIL"
	}
	return v + marginCell(r.Margin)
}

func marginCell(m float64) string {
	if math.IsNaN(m) {
		return ""
	}
	return fmt.Sprintf(" %5.2f", m)
}

func (t *cornerTable) anyFailed() bool {
	for _, f := range t.failed {
		if f > 0 {
			return true
		}
	}
	return false
}

// close prints the summary: each corner's failures and warnings, then the
// verdict naming the corners that fail.
func (t *cornerTable) close() error {
	if t.checks == 0 {
		t.p("(no checks: the steps check nothing)\n")
	}
	var parts, failing []string
	for i, r := range t.runs {
		parts = append(parts, fmt.Sprintf("%s %d failed, %s", r.CornerName(), t.failed[i], diag.Count(t.warns[i], "warning")))
		if t.failed[i] > 0 {
			failing = append(failing, r.CornerName())
		}
	}
	verdict := "PASS at every corner"
	if len(failing) > 0 {
		verdict = "FAIL at " + strings.Join(failing, ", ")
	}
	techs := "1 technology"
	if len(t.runs) > 1 {
		techs = fmt.Sprintf("%d technologies", len(t.runs))
	}
	t.p("\nsummary: %s, %s each; %s: %s\n", techs, diag.Count(t.checks, "check"), strings.Join(parts, "; "), verdict)
	return t.w.Flush()
}
