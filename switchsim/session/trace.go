package session

import (
	"bufio"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"time"

	"railyard/switchsim"
	"railyard/switchsim/load"
	"railyard/switchsim/steps"
)

// The trace format is the project's own plain text, one fact a line:
//
//	railyard-trace 1
//	design PATH
//	design-sha256 HEX
//	steps PATH | -
//	mode physical | ideal
//	full-swing no | yes
//	tech KEY=VALUE ...
//	action SEQ KIND [details]
//	  r ROUND NODE STATE VALUE STRENGTH VOLTS DELAY
//	  check NODE WANT STATE VALUE pass|FAIL
//	  warn KIND NODE MESSAGE
//	end N
//
// Lines starting with # are comments. Step actions carry their drives and
// wanted values, so a trace replays without its steps file.
const traceMagic = "railyard-trace 1"

// WriteTrace writes the session's whole trace.
func (s *Session) WriteTrace(w io.Writer) error {
	bw := bufio.NewWriter(w)
	nl := s.Netlist()
	p := func(f string, a ...any) { fmt.Fprintf(bw, f, a...) }
	p("# railyard session trace; replay with: railyard replay FILE\n")
	p("%s\n", traceMagic)
	p("design %s\n", s.DesignPath)
	p("design-sha256 %s\n", s.Hash)
	if s.StepsPath != "" {
		p("steps %s\n", s.StepsPath)
		p("steps-sha256 %s\n", s.StepsHash)
	} else {
		p("steps -\n")
	}
	p("mode %s\n", s.Opts.Mode)
	p("full-swing %s\n", yesNo(s.Opts.FullSwing))
	p("tech %s\n", TechString(nl.Tech))
	p("created %s\n", time.Now().UTC().Format(time.RFC3339))
	for _, e := range s.trace {
		p("\naction %d %s\n", e.Seq, s.ActionString(e.Action))
		if e.Action.Kind == Back {
			continue
		}
		p("  rounds %d\n", e.Rounds)
		for _, c := range e.Changes {
			p("  r %d %s %s %s %s %s %s\n", c.Round, nl.NodeName(c.Node), c.State, c.Value, c.Strength,
				FormatVolts(c.Volts), formatDelay(c.Delay))
		}
		for _, c := range e.Checks {
			p("  check %s %s %s %s %s\n", nl.NodeName(c.Node), c.Want, c.Got.State, c.Got.Value, passFail(c.Pass))
		}
		for _, w := range e.Warnings {
			p("  warn %s %s %s\n", w.Kind, nl.NodeName(w.Node), w.Message)
		}
	}
	p("\nend %d\n", len(s.trace))
	return bw.Flush()
}

// TechString prints a technology's keys in a stable order.
func TechString(t switchsim.Tech) string {
	var parts []string
	for _, k := range switchsim.TechKeys() {
		v, _ := t.Get(k)
		parts = append(parts, k+"="+strconv.FormatFloat(v, 'g', -1, 64))
	}
	return strings.Join(parts, " ")
}

// ActionString words an action as the trace writes it.
func (s *Session) ActionString(a Action) string {
	nl := s.Netlist()
	switch a.Kind {
	case Set:
		return fmt.Sprintf("set %s=%s", nl.NodeName(a.Node), a.Drive)
	case Step:
		var b strings.Builder
		fmt.Fprintf(&b, "step %d %s", a.Step+1, strconv.Quote(a.Label))
		for _, in := range a.Drives {
			fmt.Fprintf(&b, " %s=%s", nl.NodeName(in.Node), in.Drive)
		}
		b.WriteString(" |")
		for c, n := range a.Nodes {
			if c < len(a.Checks) {
				fmt.Fprintf(&b, " %s=%s", nl.NodeName(n), a.Checks[c])
			}
		}
		return b.String()
	}
	return a.Kind.String()
}

func yesNo(b bool) string {
	if b {
		return "yes"
	}
	return "no"
}

func passFail(b bool) string {
	if b {
		return "pass"
	}
	return "FAIL"
}

func formatDelay(d float64) string {
	if math.IsNaN(d) {
		return "-"
	}
	return strconv.FormatFloat(d, 'g', 4, 64)
}

// SaveTrace writes the trace to path atomically: a temporary file in the
// same folder, synced, then renamed over path.
func (s *Session) SaveTrace(path string) error {
	return WriteFileAtomic(path, s.WriteTrace)
}

// WriteFileAtomic writes a file through fn so that path is either left as it
// was or replaced whole.
func WriteFileAtomic(path string, fn func(io.Writer) error) error {
	dir := filepath.Dir(path)
	f, err := os.CreateTemp(dir, "."+filepath.Base(path)+".tmp*")
	if err != nil {
		return err
	}
	tmp := f.Name()
	defer os.Remove(tmp) // harmless after a successful rename
	if err := fn(f); err != nil {
		f.Close()
		return err
	}
	if err := f.Sync(); err != nil {
		f.Close()
		return err
	}
	if err := f.Close(); err != nil {
		return err
	}
	if err := os.Chmod(tmp, 0o644); err != nil {
		return err
	}
	return os.Rename(tmp, path)
}

// Trace is a parsed trace file.
type Trace struct {
	File       string
	Design     string
	DesignHash string
	Steps      string
	Mode       switchsim.Mode
	FullSwing  bool
	Tech       string
	Actions    []TraceAction
}

// TraceAction is one recorded action with what it did.
type TraceAction struct {
	Line     int
	Seq      int
	Kind     Kind
	Set      [2]string   // Set: input name and drive
	Step     int         // Step: 1-based row number
	Label    string      // Step
	Drives   [][2]string // Step: input name, drive
	Checks   [][2]string // Step: node name, want
	Rounds   int
	Changes  []string // "r ROUND NODE STATE VALUE STRENGTH VOLTS DELAY" without the delay
	Results  []string // "check ..." lines
	Warnings []string // "KIND NODE"
	HasBody  bool
}

// ReadTrace parses a trace; errors carry FILE:LINE.
func ReadTrace(file string, r io.Reader) (*Trace, error) {
	t := &Trace{File: file}
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 64*1024), 4*1024*1024)
	line := 0
	bad := func(f string, a ...any) error {
		return fmt.Errorf("%s:%d: %s", file, line, fmt.Sprintf(f, a...))
	}
	magic := false
	var cur *TraceAction
	for sc.Scan() {
		line++
		text := sc.Text()
		trim := strings.TrimSpace(text)
		if trim == "" || strings.HasPrefix(trim, "#") {
			continue
		}
		if !magic {
			if trim != traceMagic {
				return nil, bad("not a railyard trace (want %q first)", traceMagic)
			}
			magic = true
			continue
		}
		key, rest, _ := strings.Cut(trim, " ")
		indented := strings.HasPrefix(text, " ")
		if indented {
			if cur == nil {
				return nil, bad("result line before any action")
			}
			switch key {
			case "rounds":
				n, err := strconv.Atoi(rest)
				if err != nil {
					return nil, bad("bad round count %q", rest)
				}
				cur.Rounds, cur.HasBody = n, true
			case "r":
				f := strings.Fields(rest)
				if len(f) != 7 {
					return nil, bad("change line wants 7 fields, has %d", len(f))
				}
				cur.Changes = append(cur.Changes, strings.Join(f[:6], " "))
			case "check":
				cur.Results = append(cur.Results, rest)
			case "warn":
				f := strings.Fields(rest)
				if len(f) < 2 {
					return nil, bad("warn line wants a kind and a node")
				}
				cur.Warnings = append(cur.Warnings, f[0]+" "+f[1])
			default:
				return nil, bad("unknown result line %q", key)
			}
			continue
		}
		switch key {
		case "design":
			t.Design = rest
		case "design-sha256":
			t.DesignHash = rest
		case "steps":
			t.Steps = rest
		case "steps-sha256", "created", "end":
		case "tech":
			t.Tech = rest
		case "mode":
			switch rest {
			case "physical":
				t.Mode = switchsim.Physical
			case "ideal":
				t.Mode = switchsim.Ideal
			default:
				return nil, bad("unknown mode %q", rest)
			}
		case "full-swing":
			t.FullSwing = rest == "yes"
		case "action":
			a, err := parseAction(rest)
			if err != nil {
				return nil, bad("%v", err)
			}
			a.Line = line
			t.Actions = append(t.Actions, a)
			cur = &t.Actions[len(t.Actions)-1]
		default:
			return nil, bad("unknown line %q", key)
		}
	}
	if err := sc.Err(); err != nil {
		return nil, fmt.Errorf("%s:%d: %v", file, line, err)
	}
	if !magic {
		return nil, fmt.Errorf("%s:1: not a railyard trace (empty)", file)
	}
	if t.Design == "" {
		return nil, fmt.Errorf("%s: the trace names no design", file)
	}
	return t, nil
}

func parseAction(rest string) (TraceAction, error) {
	var a TraceAction
	seqText, rest, _ := strings.Cut(rest, " ")
	seq, err := strconv.Atoi(seqText)
	if err != nil {
		return a, fmt.Errorf("bad action number %q", seqText)
	}
	a.Seq = seq
	kind, rest, _ := strings.Cut(rest, " ")
	switch kind {
	case "start":
		a.Kind = Start
	case "back":
		a.Kind = Back
	case "set":
		a.Kind = Set
		name, drive, ok := strings.Cut(rest, "=")
		if !ok {
			return a, fmt.Errorf("set wants NAME=DRIVE")
		}
		a.Set = [2]string{name, drive}
	case "step":
		a.Kind = Step
		numText, rest, _ := strings.Cut(rest, " ")
		if a.Step, err = strconv.Atoi(numText); err != nil {
			return a, fmt.Errorf("bad step number %q", numText)
		}
		label, after, err := cutQuoted(rest)
		if err != nil {
			return a, err
		}
		a.Label = label
		drives, checks, _ := strings.Cut(after, "|")
		for _, f := range strings.Fields(drives) {
			n, v, ok := strings.Cut(f, "=")
			if !ok {
				return a, fmt.Errorf("step drive wants NAME=DRIVE, got %q", f)
			}
			a.Drives = append(a.Drives, [2]string{n, v})
		}
		for _, f := range strings.Fields(checks) {
			n, v, ok := strings.Cut(f, "=")
			if !ok {
				return a, fmt.Errorf("step check wants NAME=WANT, got %q", f)
			}
			a.Checks = append(a.Checks, [2]string{n, v})
		}
	default:
		return a, fmt.Errorf("unknown action %q", kind)
	}
	return a, nil
}

func cutQuoted(s string) (string, string, error) {
	s = strings.TrimLeft(s, " ")
	if !strings.HasPrefix(s, `"`) {
		return "", s, nil
	}
	q, err := strconv.QuotedPrefix(s)
	if err != nil {
		return "", "", fmt.Errorf("bad quoted label")
	}
	label, _ := strconv.Unquote(q)
	return label, s[len(q):], nil
}

// ReplayReport is the outcome of a replay.
type ReplayReport struct {
	Actions       int
	DesignChanged bool     // the design's content hash differs from the trace's
	Differences   []string // the first differences, worded; empty when everything matches
}

// Match reports whether the replay reproduced the trace.
func (r *ReplayReport) Match() bool { return len(r.Differences) == 0 }

// maxDifferences bounds the differences a replay lists.
const maxDifferences = 20

// Replay re-runs a parsed trace on the design it names and compares every
// recorded result. A design path that does not exist as given is tried
// relative to the trace's folder.
func Replay(t *Trace) (*ReplayReport, error) {
	path := t.Design
	if _, demo := load.CutDemo(path); !demo && !filepath.IsAbs(path) {
		if _, err := os.Stat(path); err != nil {
			if alt := filepath.Join(filepath.Dir(t.File), path); fileExists(alt) {
				path = alt
			}
		}
	}
	d, err := load.Host(load.Options{}).Design(path)
	if err != nil {
		return nil, err
	}
	rep := &ReplayReport{DesignChanged: t.DesignHash != "" && Hash(d.Source) != t.DesignHash}
	if rep.DesignChanged {
		rep.Differences = append(rep.Differences, fmt.Sprintf("%s: the design changed since the trace was made (content hash differs)", t.Design))
	}
	s := New(d, t.Design, nil, Options{Mode: t.Mode, FullSwing: t.FullSwing})
	nl := d.Netlist
	differ := func(a TraceAction, f string, args ...any) {
		if len(rep.Differences) < maxDifferences {
			rep.Differences = append(rep.Differences, fmt.Sprintf("%s:%d: action %d: %s", t.File, a.Line, a.Seq, fmt.Sprintf(f, args...)))
		}
	}
	for i, a := range t.Actions {
		var e *Event
		switch a.Kind {
		case Start:
			if i != 0 {
				differ(a, "start is not the first action")
				continue
			}
			e = s.Last()
		case Back:
			if !s.GoBack() {
				differ(a, "back at the start of the session")
			}
			continue
		case Set:
			dr, ok := switchsim.ParseDrive(a.Set[1])
			if !ok {
				differ(a, "unknown drive %q", a.Set[1])
				continue
			}
			if e, err = s.SetByName(a.Set[0], dr); err != nil {
				differ(a, "%v", err)
				continue
			}
		case Step:
			act := Action{Kind: Step, Step: a.Step - 1, Label: a.Label}
			ok := true
			for _, in := range a.Drives {
				n, found := nl.Lookup(in[0])
				dr, okd := switchsim.ParseDrive(in[1])
				if !found || nl.NodeKind(n) != switchsim.Input || !okd {
					differ(a, "cannot apply %s=%s to this design", in[0], in[1])
					ok = false
					break
				}
				act.Drives = append(act.Drives, InputDrive{n, dr})
			}
			for _, c := range a.Checks {
				n, found := nl.Lookup(c[0])
				w, okw := steps.ParseWant(c[1])
				if !found || !okw {
					differ(a, "cannot check %s=%s on this design", c[0], c[1])
					ok = false
					break
				}
				act.Nodes, act.Checks = append(act.Nodes, n), append(act.Checks, w)
			}
			if !ok {
				continue
			}
			e = s.apply(act, a.Step)
		}
		rep.Actions++
		if !a.HasBody {
			continue
		}
		compareEvent(s, a, e, differ)
	}
	return rep, nil
}

func compareEvent(s *Session, a TraceAction, e *Event, differ func(TraceAction, string, ...any)) {
	nl := s.Netlist()
	if e.Rounds != a.Rounds {
		differ(a, "took %d rounds, the trace says %d", e.Rounds, a.Rounds)
	}
	var got []string
	for _, c := range e.Changes {
		got = append(got, fmt.Sprintf("%d %s %s %s %s %s", c.Round, nl.NodeName(c.Node), c.State, c.Value, c.Strength, FormatVolts(c.Volts)))
	}
	if d := firstDiff(got, a.Changes); d != "" {
		differ(a, "node changes differ: %s", d)
	}
	var checks []string
	for _, c := range e.Checks {
		checks = append(checks, fmt.Sprintf("%s %s %s %s %s", nl.NodeName(c.Node), c.Want, c.Got.State, c.Got.Value, passFail(c.Pass)))
	}
	if d := firstDiff(checks, a.Results); d != "" {
		differ(a, "checks differ: %s", d)
	}
	var warns []string
	for _, w := range e.Warnings {
		warns = append(warns, string(w.Kind)+" "+nl.NodeName(w.Node))
	}
	if d := firstDiff(warns, a.Warnings); d != "" {
		differ(a, "warnings differ: %s", d)
	}
}

// firstDiff words the first difference between what the replay got and
// what the trace wants, or returns "".
func firstDiff(got, want []string) string {
	for i := 0; i < len(got) || i < len(want); i++ {
		switch {
		case i >= len(got):
			return fmt.Sprintf("the trace has %q, the replay has nothing more", want[i])
		case i >= len(want):
			return fmt.Sprintf("the replay has %q, the trace has nothing more", got[i])
		case got[i] != want[i]:
			return fmt.Sprintf("replay %q, trace %q", got[i], want[i])
		}
	}
	return ""
}

func fileExists(p string) bool {
	_, err := os.Stat(p)
	return err == nil
}
