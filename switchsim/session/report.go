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
	"railyard/switchsim/diag"
)

// shown is a node's name as the text report shows it: the spelling the
// design's file gave it (a netlist's Q<0>, not q[0]), made printable. The
// JSON report keeps the railyard names, which files read back.
func shown(nl *switchsim.Netlist, n int) string { return diag.Printable(nl.DisplayName(n)) }

// Summary counts what a batch report covers.
type Summary struct {
	Steps    int // step rows applied
	Checks   int // checks made ("-" columns are not checks)
	Failed   int
	Warnings int
}

// Pass reports whether every check passed.
func (m Summary) Pass() bool { return m.Failed == 0 }

// add counts one event. A dropped event's checks are gone, so only its
// failure is counted; the report streams events whole, before any drop.
func (m *Summary) add(e *Event) {
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
	if e.dropped && e.failed {
		m.Failed++
	}
	m.Warnings += e.warnings
}

// Thresholds are a technology's logic thresholds in volts, NaN where unknown.
type Thresholds struct{ VIL, VIH, VM float64 }

// TechThresholds returns the thresholds physical mode decides values by
// (switchsim §4): the reference inverter's, or the design's vil/vih overrides.
func TechThresholds(t switchsim.Tech) Thresholds {
	vil, vih, vm := t.Thresholds()
	return Thresholds{vil, vih, vm}
}

// --- the batch report, text or JSON lines, streamed ---

// Format is a report's form.
type Format uint8

const (
	Text Format = iota // the readable report
	JSON               // JSON lines (README, "run --json")
)

// reportStatesLimit bounds the designs whose text report prints a node line
// for every step: beyond it the lines would be longer than anyone reads.
const reportStatesLimit = 20000

// Report writes a batch report as the events come: a header, one part per
// event Add is given, and the summary at Close. It keeps nothing per
// event, so a run of any length reports in constant memory.
type Report struct {
	s      *Session
	w      *bufio.Writer
	format Format
	shown  []int  // the nodes a text report prints per step
	corner string // JSON: the corner every line names ("" none)
	sum    Summary
}

// NewReport starts a report of s on w and writes its header.
func NewReport(w io.Writer, s *Session, format Format) *Report {
	return NewCornerReport(w, s, format, s.Corner() != "")
}

// NewCornerReport is NewReport whose JSON lines each begin with the
// session's corner ("corner": NAME, Nominal for the design's own
// technology) when tag is true: one of the reports of `run --corners`.
// A session at a corner always tags its lines.
func NewCornerReport(w io.Writer, s *Session, format Format, tag bool) *Report {
	r := &Report{s: s, w: bufio.NewWriter(w), format: format}
	if tag || s.Corner() != "" {
		r.corner = s.CornerName()
	}
	if format == JSON {
		r.jsonHeader()
	} else {
		r.textHeader()
		if s.Netlist().NumNodes() <= reportStatesLimit {
			r.shown = reportNodes(s.Netlist())
		}
	}
	return r
}

// Add reports one event; rd reads the state just after it (the session
// itself while the event is its last, or a WalkStates reader).
func (r *Report) Add(e *Event, rd Reader) {
	r.sum.add(e)
	if r.format == JSON {
		r.w.WriteString(r.eventJSON(e, rd))
		r.w.WriteByte('\n')
		return
	}
	r.textEvent(e, rd)
}

// begin starts a JSON line with its corner, when the report names one.
func (r *Report) begin(o *jsonObject) {
	if r.corner != "" {
		o.key("corner").str(r.corner)
	}
}

// Close writes the summary, flushes, and returns the summary.
func (r *Report) Close() (Summary, error) {
	m := r.sum
	if r.format == JSON {
		var sum jsonObject
		sum.key("steps").num(float64(m.Steps))
		sum.key("checks").num(float64(m.Checks))
		sum.key("failed").num(float64(m.Failed))
		sum.key("warnings").num(float64(m.Warnings))
		var top jsonObject
		r.begin(&top)
		top.key("summary").raw(sum.close())
		r.w.WriteString(top.close())
		r.w.WriteByte('\n')
	} else {
		verdict := "PASS"
		if !m.Pass() {
			verdict = "FAIL"
		}
		fmt.Fprintf(r.w, "\nsummary: %s, %s, %d failed, %s: %s\n", diag.Count(m.Steps, "step"), diag.Count(m.Checks, "check"),
			m.Failed, diag.Count(m.Warnings, "warning"), verdict)
	}
	return m, r.w.Flush()
}

// WriteText writes the readable batch report of the history in force,
// re-simulated (see Walk): the design, each step with its inputs, rounds,
// checks and warnings, then a summary.
func (s *Session) WriteText(w io.Writer) error { return s.writeReport(w, Text) }

// WriteJSON writes the history in force as JSON lines: the run header, one
// line per step (the initial settle, as step 0, when no step was applied),
// and the summary. Keys keep a fixed order so the lines read the same
// every run.
func (s *Session) WriteJSON(w io.Writer) error { return s.writeReport(w, JSON) }

// writeReport covers the steps applied after the initial settle, or the
// initial settle alone when no step was applied (a design without steps
// still gets a report of its resting state).
func (s *Session) writeReport(w io.Writer, format Format) error {
	r := NewReport(w, s, format)
	alone := s.Len() == 1
	err := s.WalkStates(func(e *Event, rd Reader) error {
		if e.Action.Kind != Start || alone {
			r.Add(e, rd)
		}
		return nil
	})
	if err != nil {
		return err
	}
	_, err = r.Close()
	return err
}

func (r *Report) textHeader() {
	s, nl := r.s, r.s.Netlist()
	p := func(f string, a ...any) { fmt.Fprintf(r.w, f, a...) }
	p("design %s", s.design.Name)
	if nl.Desc != "" {
		p(" %s", strconv.Quote(nl.Desc))
	}
	p(" (%s)\n", s.designPath)
	th := TechThresholds(nl.Tech)
	corner := ""
	if s.Corner() != "" {
		corner = " at corner " + s.Corner()
	}
	p("mode %s, tech %s%s: vdd %s, vil %s, vih %s, vm %s\n", s.opts.Mode, techName(nl.Tech), corner,
		voltsText(nl.Tech.Vdd), voltsText(th.VIL), voltsText(th.VIH), voltsText(th.VM))
	if s.steps != nil {
		p("steps %s: %d rows\n", s.stepsPath, s.NumSteps())
	} else {
		p("steps none: the report shows the initial settle\n")
	}
	if s.opts.FullSwing {
		p("full swing: 0 and 1 checks require the strong full-level states\n")
	}
	if s.opts.MarginCheck {
		p("min margin: a check whose margin is below %s fails\n", voltsText(s.opts.MinMargin))
	}
	if s.opts.Glitches {
		p("glitches: each step that changes one input is looked at for pulses it may cause\n")
	}
}

func (r *Report) textEvent(e *Event, rd Reader) {
	s, nl := r.s, r.s.Netlist()
	p := func(f string, a ...any) { fmt.Fprintf(r.w, f, a...) }
	p("\n")
	switch e.Action.Kind {
	case Start:
		p("initial settle: %s\n", diag.Count(e.Rounds, "round"))
	case Step:
		p("step %d", e.Action.Step+1)
		if e.Action.Label != "" {
			p(" %s", strconv.Quote(e.Action.Label))
		}
		p(": %s\n", diag.Count(e.Rounds, "round"))
		if len(e.Action.Drives) > 0 {
			p("  apply  ")
			for i, in := range e.Action.Drives {
				if i > 0 {
					p(" ")
				}
				p("%s=%s", shown(nl, in.Node), in.Drive)
			}
			p("\n")
		}
	default:
		p("%s: %s\n", s.ActionString(e.Action), diag.Count(e.Rounds, "round"))
	}
	if len(r.shown) > 0 {
		p("  nodes  ")
		for i, n := range r.shown {
			if i > 0 {
				p(", ")
			}
			p("%s=%s%s", shown(nl, n), stateText(rd.Node(n)), marginText(rd.Margin(n)))
		}
		p("\n")
		if g := gatesText(nl, rd); g != "" {
			p("  gates  %s\n", g)
		}
	}
	for _, c := range e.Checks {
		if !IsCheck(c) {
			continue
		}
		verdict := passFail(c.Pass)
		if c.LowMargin {
			verdict = "FAIL (margin below " + voltsText(s.opts.MinMargin) + ")"
		}
		p("  check  %s want %s got %s%s  %s\n", shown(nl, c.Node), c.Want, stateText(c.Got),
			checkMarginText(c, rd.Margin(c.Node)), verdict)
	}
	for _, wr := range e.Warnings {
		p("  warn   %s: %s\n", wr.Kind, wr.Message)
	}
	if e.Oscillated {
		p("  the settle reached the round limit (%d): the nodes still changing were set to X\n", s.RoundLimit())
	}
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

// marginText words a node's margins for a node line: " margin 0.18", and
// for a node of a fight that drives a stage its write margin against the
// stage's VM; "" in ideal mode.
func marginText(m switchsim.Margin) string {
	if math.IsNaN(m.Noise) {
		return ""
	}
	t := " margin " + signedVolts(m.Noise)
	if !math.IsNaN(m.Write) {
		t += ", write " + signedVolts(m.Write) + " from VM " + strconv.FormatFloat(m.StageVM, 'f', 2, 64)
	}
	return t
}

// checkMarginText words a check's margin: "  margin 0.18", with the write
// margin against the driven stage's VM, signed for the wanted value, for a
// node of a fight.
func checkMarginText(c CheckResult, m switchsim.Margin) string {
	if math.IsNaN(c.Margin) {
		return ""
	}
	t := "  margin " + signedVolts(c.Margin)
	if w := WriteMargin(c.Want, c.Got, m); !math.IsNaN(w) {
		t += ", write " + signedVolts(w) + " from VM " + strconv.FormatFloat(m.StageVM, 'f', 2, 64)
	}
	return t
}

// gatesText lists the devices whose gate is not at a full level (more
// than 10 mV from either rail) and that conduct or may, with the gate's
// voltage and what it makes of the device: "load: ld at 1.14 V, on, passes
// a 1 up to 0.57 V at most; buf1.p: opnd at 1.14 V, partly on, 5.2 uA".
// "" when there are none (and in ideal mode).
func gatesText(nl *switchsim.Netlist, rd Reader) string {
	var parts []string
	vdd := nl.Tech.Vdd
	for d := 0; d < nl.NumDevices(); d++ {
		dv := nl.Device(d)
		if dv.Gate < 0 || dv.Kind >= switchsim.PullUp {
			continue
		}
		b := rd.DeviceBias(d)
		if g := b.GateVolts; math.IsNaN(g) || b.FullGate || math.Abs(g) < 0.01 || math.Abs(g-vdd) < 0.01 {
			continue
		}
		t := fmt.Sprintf("%s: %s at %s V", diag.Printable(nl.DeviceDisplayName(d)), shown(nl, dv.Gate), strconv.FormatFloat(b.GateVolts, 'f', 2, 64))
		limit := strconv.FormatFloat(b.Limit, 'f', 2, 64)
		switch {
		case b.PartlyOn:
			t += ", partly on"
			if !math.IsNaN(b.Current) {
				t += ", " + Amps(b.Current)
			}
		case rd.Node(dv.Gate).Value == switchsim.VX:
			t += ", of unknown state"
		case !onByValue(dv.Kind, rd.Node(dv.Gate).Value):
			continue // off, and not conducting: its gate changes nothing
		case math.IsNaN(b.Limit):
			t += ", on"
		case dv.Kind == switchsim.NMOS:
			t += ", on, passes a 1 up to " + limit + " V at most"
		default:
			t += ", on, passes a 0 down to " + limit + " V at best"
		}
		parts = append(parts, t)
	}
	return strings.Join(parts, "; ")
}

// onByValue reports whether a transistor is on for its gate's logic value.
func onByValue(k switchsim.DeviceKind, v switchsim.Value) bool {
	return k == switchsim.NMOS && v == switchsim.V1 || k == switchsim.PMOS && v == switchsim.V0
}

// Amps prints a current with a prefix: "3.1 uA", "250 nA".
func Amps(a float64) string {
	x := math.Abs(a)
	switch {
	case math.IsNaN(a):
		return "-"
	case x >= 1e-3:
		return strconv.FormatFloat(x*1e3, 'g', 3, 64) + " mA"
	case x >= 1e-6:
		return strconv.FormatFloat(x*1e6, 'g', 3, 64) + " uA"
	case x >= 1e-9:
		return strconv.FormatFloat(x*1e9, 'g', 3, 64) + " nA"
	}
	return strconv.FormatFloat(x*1e12, 'g', 3, 64) + " pA"
}

// signedVolts prints a margin to 10 mV: "0.18", "-0.05".
func signedVolts(v float64) string { return strconv.FormatFloat(v, 'f', 2, 64) }

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

// --- JSON lines (README, "run --json") ---

func (r *Report) jsonHeader() {
	s, nl := r.s, r.s.Netlist()
	var o jsonObject
	r.begin(&o)
	o.key("design").str(s.design.Name)
	o.key("mode").str(s.opts.Mode.String())
	o.key("tech").raw(techJSON(nl.Tech))
	r.w.WriteString(o.close())
	r.w.WriteByte('\n')
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

func (r *Report) eventJSON(e *Event, rd Reader) string {
	s := r.s
	nl := s.Netlist()
	physical := s.opts.Mode == switchsim.Physical
	var o jsonObject
	r.begin(&o)
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
		apply.key(nl.DisplayName(in.Node)).str(in.Drive.String())
	}
	if e.Action.Kind == Set {
		apply.key(nl.DisplayName(e.Action.Node)).str(e.Action.Drive.String())
	}
	o.key("apply").raw(apply.close())
	o.key("rounds").num(float64(e.Rounds))

	var nodes jsonObject
	for n := 0; n < nl.NumNodes(); n++ {
		k := nl.NodeKind(n)
		if k == switchsim.Power || k == switchsim.Ground {
			continue
		}
		st := rd.Node(n)
		var ns jsonObject
		ns.key("state").str(st.State.String())
		ns.key("value").str(st.Value.String())
		ns.key("strength").str(st.Strength.String())
		ns.key("volts").num(roundVolts(st.Volts))
		ns.key("floating").boolean(st.Floating)
		if physical {
			m := rd.Margin(n)
			ns.key("margin").num(roundVolts(NodeMargin(m)))
			if !math.IsNaN(m.Write) {
				ns.key("write_margin").num(roundVolts(m.Write))
				ns.key("stage_vm").num(roundVolts(m.StageVM))
			}
		}
		nodes.key(nl.DisplayName(n)).raw(ns.close())
	}
	o.key("nodes").raw(nodes.close())

	var checks jsonArray
	for _, c := range e.Checks {
		if !IsCheck(c) {
			continue
		}
		var co jsonObject
		co.key("node").str(nl.DisplayName(c.Node))
		co.key("want").str(c.Want.String())
		co.key("got").str(c.Got.State.String())
		co.key("pass").boolean(c.Pass)
		if physical {
			co.key("margin").num(roundVolts(c.Margin))
			if w := WriteMargin(c.Want, c.Got, rd.Margin(c.Node)); !math.IsNaN(w) {
				co.key("write_margin").num(roundVolts(w))
			}
			if c.LowMargin {
				co.key("below_min_margin").boolean(true)
			}
		}
		checks.add(co.close())
	}
	o.key("checks").raw(checks.close())

	var warns jsonArray
	for _, wr := range e.Warnings {
		var wo jsonObject
		wo.key("kind").str(string(wr.Kind))
		wo.key("node").str(nl.DisplayName(wr.Node))
		wo.key("message").str(wr.Message)
		warns.add(wo.close())
	}
	o.key("warnings").raw(warns.close())
	return o.close()
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
