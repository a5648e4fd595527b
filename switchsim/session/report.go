package session

import (
	"bufio"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"railyard/switchsim"
)

// Summary counts what a batch report covers.
type Summary struct {
	Steps    int // step rows applied
	Checks   int // checks made ("-" columns are not checks)
	Failed   int
	Warnings int
}

// Pass reports whether every check passed.
func (m Summary) Pass() bool { return m.Failed == 0 }

// ReportEvents returns the events a batch report covers: the steps applied
// after the initial settle, or the initial settle alone when no step was
// applied (a design without steps still gets a report of its resting state).
func (s *Session) ReportEvents() []*Event {
	if h := s.History(); len(h) > 1 {
		return h[1:]
	}
	return s.History()
}

// Summarize counts the steps, checks, failures and warnings of events.
func Summarize(events []*Event) Summary {
	var m Summary
	for _, e := range events {
		if e.Action.Kind == Step {
			m.Steps++
		}
		for _, c := range e.Checks {
			if !IsCheck(c) {
				continue
			}
			m.Checks++
			if !c.Pass {
				m.Failed++
			}
		}
		m.Warnings += len(e.Warnings)
	}
	return m
}

// IsCheck reports whether a check column checks anything ("-" does not).
func IsCheck(c CheckResult) bool { return c.Want.String() != "-" }

// Thresholds are a technology's logic thresholds in volts, NaN where unknown.
type Thresholds struct{ VIL, VIH, VM float64 }

// TechThresholds returns the thresholds physical mode decides values by
// (MODEL.md §4): the reference inverter's, or the design's vil/vih overrides.
func TechThresholds(t switchsim.Tech) Thresholds {
	vil, vih, vm := t.Thresholds()
	return Thresholds{vil, vih, vm}
}

// --- text report ---

// WriteText writes the readable batch report: the design, each step with
// its inputs, rounds, checks and warnings, then a summary.
func (s *Session) WriteText(w io.Writer) error {
	bw := bufio.NewWriter(w)
	nl := s.Netlist()
	p := func(f string, a ...any) { fmt.Fprintf(bw, f, a...) }

	p("design %s", s.Design.Name)
	if nl.Desc != "" {
		p(" %s", strconv.Quote(nl.Desc))
	}
	p(" (%s)\n", s.DesignPath)
	th := TechThresholds(nl.Tech)
	p("mode %s, tech %s: vdd %s, vil %s, vih %s, vm %s\n", s.Opts.Mode, techName(nl.Tech),
		voltsText(nl.Tech.Vdd), voltsText(th.VIL), voltsText(th.VIH), voltsText(th.VM))
	if s.Steps != nil {
		p("steps %s: %d rows\n", s.StepsPath, s.NumSteps())
	} else {
		p("steps none: the report shows the initial settle\n")
	}
	if s.Opts.FullSwing {
		p("full swing: 0 and 1 checks require the strong full-level states\n")
	}

	events := s.ReportEvents()
	shown := reportNodes(nl)
	for _, e := range events {
		p("\n")
		switch e.Action.Kind {
		case Start:
			p("initial settle: %s\n", plural(e.Rounds, "round"))
		case Step:
			p("step %d", e.Action.Step+1)
			if e.Action.Label != "" {
				p(" %s", strconv.Quote(e.Action.Label))
			}
			p(": %s\n", plural(e.Rounds, "round"))
			if len(e.Action.Drives) > 0 {
				p("  apply  ")
				for i, in := range e.Action.Drives {
					if i > 0 {
						p(" ")
					}
					p("%s=%s", nl.NodeName(in.Node), in.Drive)
				}
				p("\n")
			}
		default:
			p("%s: %s\n", s.ActionString(e.Action), plural(e.Rounds, "round"))
		}
		if e.States != nil && len(shown) > 0 {
			p("  nodes  ")
			for i, n := range shown {
				if i > 0 {
					p(", ")
				}
				p("%s=%s", nl.NodeName(n), stateText(e.States[n]))
			}
			p("\n")
		}
		for _, c := range e.Checks {
			if !IsCheck(c) {
				continue
			}
			p("  check  %s want %s got %s  %s\n", nl.NodeName(c.Node), c.Want, stateText(c.Got), passFail(c.Pass))
		}
		for _, wr := range e.Warnings {
			p("  warn   %s: %s\n", wr.Kind, wr.Message)
		}
		if e.Oscillated {
			p("  the settle reached the round limit (%d): the nodes still changing were set to X\n", s.Sim.RoundLimit())
		}
	}
	m := Summarize(events)
	verdict := "PASS"
	if !m.Pass() {
		verdict = "FAIL"
	}
	p("\nsummary: %s, %s, %d failed, %s: %s\n", plural(m.Steps, "step"), plural(m.Checks, "check"),
		m.Failed, plural(m.Warnings, "warning"), verdict)
	return bw.Flush()
}

// reportNodes are the nodes a text report prints for every step: the
// declared outputs, or every internal node when the design declares none.
func reportNodes(nl *switchsim.Netlist) []int {
	if out := nl.Outputs(); len(out) > 0 {
		return out
	}
	var ns []int
	for n := 0; n < nl.NumNodes(); n++ {
		if nl.NodeKind(n) == switchsim.Internal {
			ns = append(ns, n)
		}
	}
	return ns
}

// stateText prints a node's state letter, the value a floating node holds,
// and the voltage where known: "1", "Z(holds 0)", "H @1.21V".
func stateText(st switchsim.NodeState) string {
	t := st.State.String()
	if st.State == switchsim.StateZ && st.Value != switchsim.VX {
		t += "(holds " + st.Value.String() + ")"
	}
	if !math.IsNaN(st.Volts) {
		t += " @" + strconv.FormatFloat(st.Volts, 'f', 2, 64) + "V"
	}
	return t
}

// voltsText prints a voltage with its unit, or "-" where unknown.
func voltsText(v float64) string {
	if math.IsNaN(v) {
		return "-"
	}
	return FormatVolts(v) + " V"
}

func techName(t switchsim.Tech) string {
	if t.Name == "" {
		return "custom"
	}
	return t.Name
}

func plural(n int, word string) string {
	if n == 1 {
		return "1 " + word
	}
	return strconv.Itoa(n) + " " + word + "s"
}

// --- JSON report (FORMAT.md "run --json") ---

// WriteJSON writes the run as JSON lines: the run header, one line per
// step (the initial settle, as step 0, when no step was applied), and the
// summary. Keys keep a fixed order so the lines read the same every run.
func (s *Session) WriteJSON(w io.Writer) error {
	bw := bufio.NewWriter(w)
	nl := s.Netlist()

	var o jsonObject
	o.key("design").str(s.Design.Name)
	o.key("mode").str(s.Opts.Mode.String())
	o.key("tech").raw(techJSON(nl.Tech))
	bw.WriteString(o.close())
	bw.WriteByte('\n')

	events := s.ReportEvents()
	for _, e := range events {
		bw.WriteString(s.eventJSON(e))
		bw.WriteByte('\n')
	}

	m := Summarize(events)
	var sum jsonObject
	sum.key("steps").num(float64(m.Steps))
	sum.key("checks").num(float64(m.Checks))
	sum.key("failed").num(float64(m.Failed))
	sum.key("warnings").num(float64(m.Warnings))
	var top jsonObject
	top.key("summary").raw(sum.close())
	bw.WriteString(top.close())
	bw.WriteByte('\n')
	return bw.Flush()
}

// techJSON holds vdd and the thresholds first (null where unknown), then
// the preset name and every other technology key.
func techJSON(t switchsim.Tech) string {
	th := TechThresholds(t)
	var o jsonObject
	o.key("vdd").num(t.Vdd)
	o.key("vil").num(roundVolts(th.VIL))
	o.key("vih").num(roundVolts(th.VIH))
	o.key("vm").num(roundVolts(th.VM))
	o.key("preset").str(techName(t))
	for _, k := range switchsim.TechKeys() {
		if k == "vdd" || k == "vil" || k == "vih" {
			continue
		}
		v, _ := t.Get(k)
		o.key(k).num(v)
	}
	return o.close()
}

func (s *Session) eventJSON(e *Event) string {
	nl := s.Netlist()
	var o jsonObject
	step := 0
	if e.Action.Kind == Step {
		step = e.Action.Step + 1
	}
	o.key("step").num(float64(step))
	label := e.Action.Label
	if e.Action.Kind == Start {
		label = "initial settle"
	}
	o.key("label").str(label)

	var apply jsonObject
	for _, in := range e.Action.Drives {
		apply.key(nl.NodeName(in.Node)).str(in.Drive.String())
	}
	if e.Action.Kind == Set {
		apply.key(nl.NodeName(e.Action.Node)).str(e.Action.Drive.String())
	}
	o.key("apply").raw(apply.close())
	o.key("rounds").num(float64(e.Rounds))

	var nodes jsonObject
	for n := 0; n < nl.NumNodes(); n++ {
		k := nl.NodeKind(n)
		if k == switchsim.Power || k == switchsim.Ground {
			continue
		}
		st := s.stateAt(e, n)
		var ns jsonObject
		ns.key("state").str(st.State.String())
		ns.key("value").str(st.Value.String())
		ns.key("strength").str(st.Strength.String())
		ns.key("volts").num(roundVolts(st.Volts))
		ns.key("floating").boolean(st.Floating)
		nodes.key(nl.NodeName(n)).raw(ns.close())
	}
	o.key("nodes").raw(nodes.close())

	var checks jsonArray
	for _, c := range e.Checks {
		if !IsCheck(c) {
			continue
		}
		var co jsonObject
		co.key("node").str(nl.NodeName(c.Node))
		co.key("want").str(c.Want.String())
		co.key("got").str(c.Got.State.String())
		co.key("pass").boolean(c.Pass)
		checks.add(co.close())
	}
	o.key("checks").raw(checks.close())

	var warns jsonArray
	for _, wr := range e.Warnings {
		var wo jsonObject
		wo.key("kind").str(string(wr.Kind))
		wo.key("node").str(nl.NodeName(wr.Node))
		wo.key("message").str(wr.Message)
		warns.add(wo.close())
	}
	o.key("warnings").raw(warns.close())
	return o.close()
}

// stateAt is node n's state after event e: from the event's kept states,
// else (a design too large to keep them) the present state, which is the
// same for the last event.
func (s *Session) stateAt(e *Event, n int) switchsim.NodeState {
	if e.States != nil {
		return e.States[n]
	}
	return s.Sim.Node(n)
}

// roundVolts keeps a tenth of a millivolt: the estimates are first order,
// and fixed digits keep the lines stable across platforms.
func roundVolts(v float64) float64 {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return math.NaN()
	}
	return math.Round(v*1e4) / 1e4
}

// jsonObject builds one JSON object with keys in insertion order.
type jsonObject struct {
	b     strings.Builder
	count int
}

func (o *jsonObject) key(k string) *jsonObject {
	if o.count == 0 {
		o.b.WriteByte('{')
	} else {
		o.b.WriteString(", ")
	}
	o.count++
	o.b.WriteString(jsonString(k))
	o.b.WriteString(": ")
	return o
}

func (o *jsonObject) str(v string) { o.b.WriteString(jsonString(v)) }
func (o *jsonObject) raw(v string) { o.b.WriteString(v) }
func (o *jsonObject) boolean(v bool) {
	o.b.WriteString(strconv.FormatBool(v))
}

// num writes a number, or null for NaN (unknown).
func (o *jsonObject) num(v float64) {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		o.b.WriteString("null")
		return
	}
	o.b.WriteString(strconv.FormatFloat(v, 'g', -1, 64))
}

func (o *jsonObject) close() string {
	if o.count == 0 {
		return "{}"
	}
	return o.b.String() + "}"
}

type jsonArray struct{ items []string }

func (a *jsonArray) add(v string) { a.items = append(a.items, v) }
func (a *jsonArray) close() string {
	return "[" + strings.Join(a.items, ", ") + "]"
}

func jsonString(s string) string {
	b, _ := json.Marshal(s) // a string always marshals
	return string(b)
}

// MaxDifferences is the most differences a replay lists.
const MaxDifferences = maxDifferences
