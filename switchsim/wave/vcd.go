// Package wave writes a session's waveforms as a Value Change Dump (IEEE
// 1364-2005 §18): one scalar wire per node but the rails, carrying its
// four-state letter, and in physical mode one real variable per node with
// its estimated voltage, so that a degraded high reads as 1.21 V and not
// merely as 1. One time unit is one action of the history in force: #0 is
// the initial settle and #k the state after the k-th action; the timescale
// is nominally 1 ns so that viewers show whole numbers, but a unit is one
// step, not a measured time. A trailing timestamp one unit after the last
// event gives the last state a width.
//
// The voltages are the model's first-order estimates (README, "What the
// numbers mean"), not a circuit simulation.
package wave

import (
	"bufio"
	"fmt"
	"io"
	"math"
	"regexp"
	"strconv"
	"strings"
	"time"

	"railyard/switchsim"
	"railyard/switchsim/outfile"
	"railyard/switchsim/session"
)

// Options set the header fields that vary between runs.
type Options struct {
	Date    time.Time // zero: now
	Version string    // the program's version line
	// Volts adds the real voltage variables in physical mode (the default
	// when Save and Write are used). NoVolts turns them off.
	NoVolts bool
}

// Writer streams a VCD: a header, then one time step per event Add is
// given. It keeps one letter and one voltage per node, nothing per event.
type Writer struct {
	w       *bufio.Writer
	nl      *switchsim.Netlist
	nodes   []int // the dumped nodes
	index   []int // node -> position in nodes, -1 for a rail
	ids     []string
	vids    []string // real variables' identifier codes (nil: no volts)
	letters []byte
	volts   []float64
	mark    []int // node -> the time it was last looked at
	t       int
}

// NewWriter writes the VCD header for s to w.
func NewWriter(w io.Writer, s *session.Session, opt Options) *Writer {
	nl := s.Netlist()
	v := &Writer{w: bufio.NewWriter(w), nl: nl, nodes: waveNodes(nl), t: -1}
	v.index = make([]int, nl.NumNodes())
	v.mark = make([]int, nl.NumNodes())
	for n := range v.index {
		v.index[n], v.mark[n] = -1, -1
	}
	for i, n := range v.nodes {
		v.index[n] = i
	}
	names := make([]string, len(v.nodes))
	for i, n := range v.nodes {
		names[i] = nl.NodeName(n)
	}
	withVolts := s.Options().Mode == switchsim.Physical && !opt.NoVolts
	refs, vrefs := references(names, withVolts)
	v.ids = make([]string, len(v.nodes))
	for i := range v.nodes {
		v.ids[i] = identifier(i)
	}
	if withVolts {
		v.vids = make([]string, len(v.nodes))
		for i := range v.nodes {
			v.vids[i] = identifier(len(v.nodes) + i)
		}
	}
	v.letters = make([]byte, len(v.nodes))
	v.volts = make([]float64, len(v.nodes))

	date := opt.Date
	if date.IsZero() {
		date = time.Now()
	}
	version := opt.Version
	if version == "" {
		version = "railyard"
	}
	p := func(f string, a ...any) { fmt.Fprintf(v.w, f, a...) }
	p("$date\n\t%s\n$end\n", date.UTC().Format("Mon Jan 2 15:04:05 2006 UTC"))
	p("$version\n\t%s\n$end\n", text(version))
	volts := ""
	if withVolts {
		volts = "; NAME_v are estimated node voltages in volts (first-order estimates; 0 where unknown, when the wire reads x or z)"
	}
	p("$comment\n\tdesign %s sha256 %s, mode %s; one time unit per step: #0 is the initial settle, #k the state after action k%s\n$end\n",
		text(s.DesignPath()), s.DesignHash(), s.Options().Mode, volts)
	p("$timescale 1 ns $end\n")
	p("$scope module %s $end\n", scopeName(s.Design().Name))
	for i := range v.nodes {
		p("$var wire 1 %s %s $end\n", v.ids[i], refs[i])
	}
	for i := range v.vids {
		p("$var real 64 %s %s $end\n", v.vids[i], vrefs[i])
	}
	p("$upscope $end\n")
	p("$enddefinitions $end\n")
	return v
}

// Add writes the time step of one event; node reads the states just
// after it. The first call dumps every node; later ones the nodes the
// event changed and the inputs it drove, where their letter or voltage
// moved.
func (v *Writer) Add(e *session.Event, node func(n int) switchsim.NodeState) {
	v.t++
	fmt.Fprintf(v.w, "#%d\n", v.t)
	if v.t == 0 {
		v.w.WriteString("$dumpvars\n")
		for i, n := range v.nodes {
			v.put(i, node(n), true)
		}
		v.w.WriteString("$end\n")
		return
	}
	look := func(n int) {
		if i := v.index[n]; i >= 0 && v.mark[n] != v.t {
			v.mark[n] = v.t
			v.put(i, node(n), false)
		}
	}
	for _, c := range e.Changes {
		look(c.Node)
	}
	switch e.Action.Kind {
	case session.Set:
		look(e.Action.Node)
	case session.Step:
		for _, in := range e.Action.Drives {
			look(in.Node)
		}
	}
}

// put writes node i's values where they changed (all of them when first).
func (v *Writer) put(i int, st switchsim.NodeState, first bool) {
	l := letter(st)
	if first || l != v.letters[i] {
		v.letters[i] = l
		v.w.WriteByte(l)
		v.w.WriteString(v.ids[i])
		v.w.WriteByte('\n')
	}
	if v.vids == nil {
		return
	}
	volts := st.Volts
	if math.IsNaN(volts) || math.IsInf(volts, 0) {
		volts = 0
	}
	volts = math.Round(volts*1e6) / 1e6 // a microvolt: the estimates carry no more
	if first || volts != v.volts[i] {
		v.volts[i] = volts
		v.w.WriteString("r" + realNumber(volts) + " " + v.vids[i] + "\n")
	}
}

// Close writes the closing timestamp and flushes.
func (v *Writer) Close() error {
	fmt.Fprintf(v.w, "#%d\n", v.t+1)
	return v.w.Flush()
}

// Write writes the history in force of s as a VCD, re-simulating it (the
// session does not keep every state; session.Walk).
// A failed output (a full disk, a caller's size cap) ends the walk, so that
// the rest of the history is not re-simulated for nothing.
func Write(w io.Writer, s *session.Session, opt Options) error {
	out := &stickyWriter{w: w}
	v := NewWriter(out, s, opt)
	if err := s.Walk(func(e *session.Event, node func(int) switchsim.NodeState) error {
		v.Add(e, node)
		return out.err
	}); err != nil {
		return err
	}
	return v.Close()
}

// stickyWriter keeps the first error its writer returned.
type stickyWriter struct {
	w   io.Writer
	err error
}

func (s *stickyWriter) Write(p []byte) (int, error) {
	if s.err != nil {
		return 0, s.err
	}
	n, err := s.w.Write(p)
	s.err = err
	return n, err
}

// Save writes the VCD of s to path atomically, with the output checks:
// never over the design, its steps, any of keep, or anything that is not
// a regular file (README, "Output files").
func Save(s *session.Session, path string, opt Options, keep ...outfile.Keep) error {
	keep = append(keep, outfile.Keep{Path: s.DesignPath(), What: "the design"})
	if p := s.StepsPath(); p != "" {
		keep = append(keep, outfile.Keep{Path: p, What: "the steps file"})
	}
	return outfile.Write(path, keep, func(w io.Writer) error { return Write(w, s, opt) })
}

// waveNodes are the nodes dumped: every node but the rails, in netlist order.
func waveNodes(nl *switchsim.Netlist) []int {
	var ns []int
	for n := 0; n < nl.NumNodes(); n++ {
		if k := nl.NodeKind(n); k != switchsim.Power && k != switchsim.Ground {
			ns = append(ns, n)
		}
	}
	return ns
}

// letter is a node's four-state letter (IEEE 1364-2005 §18.2.1): z for a
// floating node whatever charge it holds, x for X, and the logic value for
// 0, 1, L and H (the VCD four-state form carries no strength).
func letter(st switchsim.NodeState) byte {
	switch st.State {
	case switchsim.StateZ:
		return 'z'
	case switchsim.StateX:
		return 'x'
	case switchsim.State0, switchsim.StateL:
		return '0'
	}
	return '1'
}

// realNumber prints a voltage as a real number in the grammar IEEE 1364-2005
// uses (§3.5.1: digits with a decimal point or an exponent, or both), e.g.
// "1.21", "0.0", "1e-05".
func realNumber(v float64) string {
	s := strconv.FormatFloat(v, 'g', -1, 64)
	if !strings.ContainsAny(s, ".e") {
		s += ".0"
	}
	return s
}

// identifier is the i-th identifier code: printable ASCII 33 ('!') to 126
// ('~') (IEEE 1364-2005 §18.2.3.8), as digits of base 94, shortest first.
func identifier(i int) string {
	const lo, base = 33, 94
	var b []byte
	for {
		b = append(b, byte(lo+i%base))
		i = i/base - 1
		if i < 0 {
			break
		}
	}
	return string(b)
}

var (
	simpleIdent = regexp.MustCompile(`^[A-Za-z_][A-Za-z0-9_$]*$`)
	bitSelect   = regexp.MustCompile(`^([A-Za-z_][A-Za-z0-9_$]*)\[([0-9]+)\]$`)
	illegal     = regexp.MustCompile(`[^A-Za-z0-9_$]`)
)

// references gives each node a legal reference (IEEE 1364-2005 §18.2.3.8:
// an identifier, optionally with a bit select), and with volts a second
// one for its voltage variable, NAME_v (a plain identifier). A name that
// is already a simple identifier is kept; NAME[N] becomes the bit select
// "NAME [N]"; anything else has each illegal character replaced by '_'
// (so "u1.x" becomes "u1_x"), and a leading digit or '$' is prefixed with
// '_'. A reference that collides with an earlier one gets "_2", "_3", ...
// appended (before a bit select). Each base remembers the next suffix to
// try, so 40,000 names that all map to one base take linear time.
func references(names []string, volts bool) (refs, vrefs []string) {
	used := make(map[string]bool, 2*len(names))
	next := map[string]int{}
	unique := func(base, sel string) string {
		ref := base + sel
		if !used[ref] {
			used[ref] = true
			return ref
		}
		k := max(next[base+"\x00"+sel], 2)
		for ; used[base+"_"+strconv.Itoa(k)+sel]; k++ {
		}
		next[base+"\x00"+sel] = k + 1
		ref = base + "_" + strconv.Itoa(k) + sel
		used[ref] = true
		return ref
	}
	refs = make([]string, len(names))
	for i, name := range names {
		switch {
		case simpleIdent.MatchString(name):
			refs[i] = unique(name, "")
		case bitSelect.MatchString(name):
			m := bitSelect.FindStringSubmatch(name)
			refs[i] = unique(m[1], " ["+m[2]+"]")
		default:
			refs[i] = unique(plain(name), "")
		}
	}
	if volts {
		vrefs = make([]string, len(names))
		for i, name := range names {
			vrefs[i] = unique(plain(name)+"_v", "")
		}
	}
	return refs, vrefs
}

// plain makes any name a simple identifier.
func plain(name string) string {
	ref := illegal.ReplaceAllString(name, "_")
	if ref == "" || (ref[0] >= '0' && ref[0] <= '9') || ref[0] == '$' {
		ref = "_" + ref
	}
	return ref
}

func scopeName(name string) string {
	if name == "" {
		return "design"
	}
	return plain(name)
}

// text keeps free text from closing its section early.
func text(s string) string { return strings.ReplaceAll(s, "$end", "$ end") }
