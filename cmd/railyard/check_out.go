package main

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"strings"
	"time"

	"railyard/switchsim/diag"
	"railyard/switchsim/session"
)

// designResult is one design's check, in names only, so that it prints,
// goes to JSON and JUnit, and comes back from the cache the same way.
type designResult struct {
	Path        string          `json:"design"`
	Name        string          `json:"name"`
	Corner      string          `json:"corner"` // "" the design's own technology (Nominal with --corners)
	Mode        string          `json:"mode"`
	Nodes       int             `json:"nodes"`
	Devices     int             `json:"devices"`
	InputNames  []string        `json:"inputs"`
	Static      []findingResult `json:"static"`
	Exhaustive  bool            `json:"exhaustive"`
	Pairs       bool            `json:"pairs"`
	Reset       int             `json:"reset"`
	StepsPath   string          `json:"steps_path"`
	States      int             `json:"states"`
	Transitions int             `json:"transitions"`
	Depth       int             `json:"depth"`
	MaxStates   int             `json:"max_states"`
	Stopped     string          `json:"stopped"` // "" when every reachable state was explored
	Findings    []findingResult `json:"findings"`
	// Margin is the worst noise margin of an output over the search (nil:
	// none known, or no search), on MarginNode, reached by MarginSequence.
	Margin         *float64 `json:"margin"`
	MarginNode     string   `json:"margin_node"`
	MarginSequence []seqRow `json:"margin_sequence"`
	Seconds        float64  `json:"seconds"`
	Cached         bool     `json:"-"`

	err      error
	savedDir string // where --save-steps wrote this design's files
}

// findingResult is one finding, static or from the search.
type findingResult struct {
	Kind        string   `json:"kind"`
	Check       string   `json:"check"` // "static" or "exhaustive"
	Node        string   `json:"node"`
	Device      string   `json:"device"`
	Failing     bool     `json:"failing"`
	Message     string   `json:"message"`
	States      int      `json:"states"`
	Transitions int      `json:"transitions"`
	Moves       int      `json:"moves"`
	Sequence    []seqRow `json:"sequence"`
	Want        string   `json:"want"` // the node's state the search saw at the end of the sequence
	StepsFile   string   `json:"-"`
}

// seqRow is one row of a sequence: the inputs it sets, in order. In JSON it
// is an object {"input": "drive", ...} that keeps that order.
type seqRow []seqSet

type seqSet struct{ Input, Drive string }

func (r seqRow) MarshalJSON() ([]byte, error) {
	var b bytes.Buffer
	b.WriteByte('{')
	for i, s := range r {
		if i > 0 {
			b.WriteByte(',')
		}
		k, _ := json.Marshal(s.Input)
		v, _ := json.Marshal(s.Drive)
		b.Write(k)
		b.WriteByte(':')
		b.Write(v)
	}
	b.WriteByte('}')
	return b.Bytes(), nil
}

func (r *seqRow) UnmarshalJSON(data []byte) error {
	dec := json.NewDecoder(bytes.NewReader(data))
	if t, err := dec.Token(); err != nil || t != json.Delim('{') {
		return fmt.Errorf("a sequence row is an object")
	}
	*r = (*r)[:0]
	for dec.More() {
		k, err := dec.Token()
		if err != nil {
			return err
		}
		var v string
		if err := dec.Decode(&v); err != nil {
			return err
		}
		ks, ok := k.(string)
		if !ok {
			return fmt.Errorf("a sequence row's keys are input names")
		}
		*r = append(*r, seqSet{ks, v})
	}
	return nil
}

// failing lists the kinds of the failing findings, once each, in order.
func (r *designResult) failingKinds() []string {
	var out []string
	for _, f := range append(append([]findingResult(nil), r.Static...), r.Findings...) {
		if f.Failing && !contains(out, f.Kind) {
			out = append(out, f.Kind)
		}
	}
	return out
}

func contains(list []string, s string) bool {
	for _, x := range list {
		if x == s {
			return true
		}
	}
	return false
}

func (r *designResult) counts() (all, failing int) {
	for _, f := range append(append([]findingResult(nil), r.Static...), r.Findings...) {
		all++
		if f.Failing {
			failing++
		}
	}
	return all, failing
}

// pass reports whether the design passes: nothing failing, and the search,
// if any, explored every reachable state.
func (r *designResult) pass() bool {
	_, failing := r.counts()
	return failing == 0 && r.Stopped == ""
}

// checksText names the checks that ran, for the summary table.
func (r *designResult) checksText() string {
	if !r.Exhaustive {
		return "static"
	}
	s := fmt.Sprintf("static, %s", diag.Count(r.States, "state"))
	if r.Stopped != "" {
		s += " (" + r.Stopped + ")"
	}
	return s
}

func countFindings(n int) string {
	if n == 0 {
		return "no findings"
	}
	return diag.Count(n, "finding")
}

// checkReport prints the results in text or as JSON lines.
type checkReport struct {
	w     io.Writer
	o     checkOptions
	total int
	n     int // designs printed
}

func newCheckReport(w io.Writer, o checkOptions, total int) *checkReport {
	return &checkReport{w: w, o: o, total: total}
}

// maxSequenceText bounds the moves a text report spells out; --save-steps
// and --json give them all.
const maxSequenceText = 12

func (c *checkReport) design(r *designResult) {
	c.n++
	if c.o.json {
		c.jsonDesign(r)
		return
	}
	w := c.w
	if c.n > 1 {
		fmt.Fprintln(w)
	}
	cached := ""
	if r.Cached {
		cached = " (cached result)"
	}
	corner := ""
	if r.Corner != "" {
		corner = " at corner " + diag.Printable(r.Corner)
	}
	fmt.Fprintf(w, "design %s (%s)%s: %d nodes, %d devices, %d inputs%s\n",
		diag.Printable(r.Name), diag.Printable(r.Path), corner, r.Nodes, r.Devices, len(r.InputNames), cached)
	fmt.Fprintf(w, "\nstatic checks: %s\n", countFindings(len(r.Static)))
	for _, f := range r.Static {
		fmt.Fprintf(w, "  %-16s %s\n", f.Kind, diag.Printable(f.Message))
	}
	if r.Exhaustive {
		from := "every input 0"
		if r.Reset > 0 {
			from = fmt.Sprintf("the first %s of %s", diag.Count(r.Reset, "row"), diag.Printable(r.StepsPath))
		}
		moves := "single-input changes"
		if r.Pairs {
			moves = "single-input changes and pairs"
		}
		fmt.Fprintf(w, "\nexhaustive: %s, %s from %s (%s), %s\n", diag.Count(r.States, "state"), diag.Count(r.Transitions, "transition"),
			from, moves, countFindings(len(r.Findings)))
		for _, f := range r.Findings {
			fmt.Fprintf(w, "  %-16s %s\n", f.Kind, diag.Printable(f.Message))
			fmt.Fprintf(w, "  %-16s in %d of %d states, %s; shortest sequence (%s): %s\n", "", f.States, r.States,
				diag.Count(f.Transitions, "transition"), diag.Count(f.Moves, "move"), sequenceText(f, r.Reset))
			if f.StepsFile != "" {
				fmt.Fprintf(w, "  %-16s saved as %s\n", "", diag.Printable(f.StepsFile))
			}
		}
		if r.Margin != nil {
			fmt.Fprintf(w, "\nworst margin: %.3f V on %s (its noise margin, over every settle); shortest sequence: %s\n",
				*r.Margin, diag.Printable(r.MarginNode), sequenceText(findingResult{Sequence: r.MarginSequence}, r.Reset))
		}
		switch r.Stopped {
		case "cap":
			fmt.Fprintf(w, "\nexplored %d states, stopped at the cap (--max-states %d): the states beyond were not checked\n", r.States, r.MaxStates)
		case "time-limit":
			fmt.Fprintf(w, "\nexplored %d states, stopped at the time limit (--time-limit %v): the states beyond were not checked\n", r.States, c.o.timeLimit)
		case "canceled":
			fmt.Fprintf(w, "\nexplored %d states, then the search was canceled\n", r.States)
		}
	}
	all, _ := r.counts()
	switch kinds := r.failingKinds(); {
	case len(kinds) > 0:
		fmt.Fprintf(w, "\nresult: FAIL (%s)\n", strings.Join(kinds, ", "))
	case r.Stopped != "":
		fmt.Fprintln(w, "\nresult: FAIL (the search stopped before every reachable state was checked)")
	case all > 0:
		fmt.Fprintf(w, "\nresult: PASS (%s, none failing)\n", countFindings(all))
	default:
		fmt.Fprintln(w, "\nresult: PASS")
	}
}

// sequenceText spells a finding's sequence: the start, the reset, then the
// moves, a move's inputs joined by spaces, moves by "; ".
func sequenceText(f findingResult, reset int) string {
	parts := []string{"every input 0"}
	if reset > 0 {
		parts = append(parts, fmt.Sprintf("reset (%s)", diag.Count(reset, "row")))
	}
	moves := f.Sequence
	if len(moves) > 0 {
		moves = moves[min(len(moves), 1+reset):]
	}
	for i, m := range moves {
		if i == maxSequenceText {
			parts = append(parts, fmt.Sprintf("... %d more moves", len(moves)-i))
			break
		}
		var sets []string
		for _, s := range m {
			sets = append(sets, s.Input+"="+s.Drive)
		}
		parts = append(parts, strings.Join(sets, " "))
	}
	return diag.Printable(strings.Join(parts, "; "))
}

// The JSON lines of check (README, "check --json"): field names are stable.
type jsonDesignLine struct {
	Design      string   `json:"design"`
	Name        string   `json:"name"`
	Corner      *string  `json:"corner"`
	Mode        string   `json:"mode"`
	Nodes       int      `json:"nodes"`
	Devices     int      `json:"devices"`
	Inputs      int      `json:"inputs"`
	Checks      []string `json:"checks"`
	States      *int     `json:"states"`
	Transitions *int     `json:"transitions"`
	Stopped     *string  `json:"stopped"`
	Findings    int      `json:"findings"`
	Failing     int      `json:"failing"`
	Margin      *float64 `json:"margin"`
	MarginNode  *string  `json:"margin_node"`
	Pass        bool     `json:"pass"`
	Cached      bool     `json:"cached"`
	Seconds     float64  `json:"seconds"`
}

type jsonFindingLine struct {
	Finding     string   `json:"finding"`
	Design      string   `json:"design"`
	Corner      *string  `json:"corner"`
	Check       string   `json:"check"`
	Node        *string  `json:"node"`
	Device      *string  `json:"device"`
	Failing     bool     `json:"failing"`
	Message     string   `json:"message"`
	States      *int     `json:"states"`
	Transitions *int     `json:"transitions"`
	Moves       *int     `json:"moves"`
	Sequence    []seqRow `json:"sequence"`
	Want        *string  `json:"want"`
	StepsFile   *string  `json:"steps_file"`
}

// roundMargin keeps a tenth of a millivolt, as run --json does.
func roundMargin(m *float64) *float64 {
	if m == nil {
		return nil
	}
	v := math.Round(*m*1e4) / 1e4
	return &v
}

// marginText is a result's worst margin for the summary table.
func (r *designResult) marginText() string {
	if r.Margin == nil {
		return "-"
	}
	return fmt.Sprintf("%.2f V", *r.Margin)
}

func optString(s string) *string {
	if s == "" {
		return nil
	}
	s = diag.Printable(s)
	return &s
}

func (c *checkReport) jsonDesign(r *designResult) {
	all, failing := r.counts()
	line := jsonDesignLine{Design: diag.Printable(r.Path), Name: diag.Printable(r.Name), Corner: optString(r.Corner), Mode: r.Mode, Nodes: r.Nodes,
		Devices: r.Devices, Inputs: len(r.InputNames), Checks: []string{"static"}, Stopped: optString(r.Stopped),
		Findings: all, Failing: failing, Margin: roundMargin(r.Margin), MarginNode: optString(r.MarginNode), Pass: r.pass(), Cached: r.Cached, Seconds: r.Seconds}
	if r.Exhaustive {
		line.Checks = append(line.Checks, "exhaustive")
		line.States, line.Transitions = &r.States, &r.Transitions
	}
	c.emit(line)
	for _, f := range append(append([]findingResult(nil), r.Static...), r.Findings...) {
		fl := jsonFindingLine{Finding: f.Kind, Design: diag.Printable(r.Path), Corner: optString(r.Corner), Check: f.Check, Node: optString(f.Node),
			Device: optString(f.Device), Failing: f.Failing, Message: diag.Printable(f.Message), Want: optString(f.Want),
			StepsFile: optString(f.StepsFile)}
		if f.Check == "exhaustive" {
			f := f
			fl.States, fl.Transitions, fl.Moves, fl.Sequence = &f.States, &f.Transitions, &f.Moves, f.Sequence
		}
		c.emit(fl)
	}
}

func (c *checkReport) emit(v any) {
	b, _ := json.Marshal(v)
	c.w.Write(append(b, '\n'))
}

// summary ends the report: the JSON summary line, or with more than one
// design the table.
func (c *checkReport) summary(results []*designResult, took time.Duration) {
	designs, failed, findings, failing := 0, 0, 0, 0
	for _, r := range results {
		if r == nil || r.err != nil {
			continue
		}
		designs++
		if !r.pass() {
			failed++
		}
		a, f := r.counts()
		findings, failing = findings+a, failing+f
	}
	if c.o.json {
		c.emit(map[string]any{"summary": map[string]any{"designs": designs, "failed": failed, "findings": findings,
			"failing": failing, "seconds": took.Seconds()}})
		return
	}
	if c.total == 0 {
		fmt.Fprintf(c.w, "no designs to check in shard %s\n", c.o.shard.String())
		return
	}
	if c.total < 2 {
		return
	}
	what := diag.Count(designs, "design")
	if c.o.corners {
		paths := map[string]bool{}
		for _, r := range results {
			if r != nil && r.err == nil {
				paths[r.Path] = true
			}
		}
		what = fmt.Sprintf("%s at their technologies: %s", diag.Count(len(paths), "design"), diag.Count(designs, "result"))
	}
	fmt.Fprintf(c.w, "\nsummary: %s, %d failed, %d passed; %s (%d failing); %s\n",
		what, failed, designs-failed, countFindings(findings), failing, took.Round(time.Millisecond))
	corners := c.o.corners || c.o.corner != ""
	head := []string{"design", "checks", "findings", "failing", "margin", "time", "result"}
	if corners {
		head = append([]string{"design", "corner"}, head[1:]...)
	}
	rows := [][]string{head}
	for _, r := range results {
		if r == nil || r.err != nil {
			continue
		}
		a, f := r.counts()
		res, t := "PASS", fmt.Sprintf("%.2f s", r.Seconds)
		if !r.pass() {
			res = "FAIL"
		}
		if r.Cached {
			t = "cached"
		}
		row := []string{diag.Printable(r.Path), r.checksText(), fmt.Sprint(a), fmt.Sprint(f), r.marginText(), t, res}
		if corners {
			row = append([]string{row[0], diag.Printable(session.CornerLabel(r.Corner))}, row[1:]...)
		}
		rows = append(rows, row)
	}
	widths := make([]int, len(rows[0]))
	for _, row := range rows {
		for i, cell := range row {
			widths[i] = max(widths[i], len(cell))
		}
	}
	for _, row := range rows {
		var b strings.Builder
		b.WriteString(" ")
		for i, cell := range row {
			fmt.Fprintf(&b, " %-*s", widths[i], cell)
		}
		fmt.Fprintln(c.w, strings.TrimRight(b.String(), " "))
	}
}
