package session

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"regexp"
	"strconv"
	"strings"
	"time"

	"railyard/switchsim"
)

// Waveforms are written as a four-state Value Change Dump (IEEE 1364-2005
// §18.2): one scalar wire per node but the rails, one time unit per event
// of the history in force. #0 is the initial settle and #k the state after
// the k-th action; the timescale is nominally 1 ns so that viewers show
// whole numbers, but a unit is one step, not a measured time. A trailing
// timestamp one unit after the last event gives the last state a width.

// VCDOptions set the header fields that vary between runs.
type VCDOptions struct {
	Date    time.Time // zero: now
	Version string    // the program's version line
}

// ErrNoStates is returned when the history kept no node states (a design
// over Options.KeepStates nodes).
var ErrNoStates = errors.New("the session kept no node states for waveforms (design too large; raise KeepStates)")

// WriteVCD writes the history in force as a VCD.
func (s *Session) WriteVCD(w io.Writer, opt VCDOptions) error {
	hist := s.History()
	for _, e := range hist {
		if e.States == nil {
			return ErrNoStates
		}
	}
	nl := s.Netlist()
	nodes := waveNodes(nl)
	ids := make([]string, len(nodes))
	for i := range nodes {
		ids[i] = VCDIdentifier(i)
	}
	refs := VCDReferences(nl, nodes)

	date := opt.Date
	if date.IsZero() {
		date = time.Now()
	}
	version := opt.Version
	if version == "" {
		version = "railyard"
	}
	bw := bufio.NewWriter(w)
	p := func(f string, a ...any) { fmt.Fprintf(bw, f, a...) }
	p("$date\n\t%s\n$end\n", date.UTC().Format("Mon Jan 2 15:04:05 2006 UTC"))
	p("$version\n\t%s\n$end\n", vcdText(version))
	p("$comment\n\tdesign %s sha256 %s, mode %s; one time unit per step: #0 is the initial settle, #k the state after action k\n$end\n",
		vcdText(s.DesignPath), s.Hash, s.Opts.Mode)
	p("$timescale 1 ns $end\n")
	p("$scope module %s $end\n", vcdScopeName(s.Design.Name))
	for i := range nodes {
		p("$var wire 1 %s %s $end\n", ids[i], refs[i])
	}
	p("$upscope $end\n")
	p("$enddefinitions $end\n")

	var prev []byte
	for t, e := range hist {
		cur := make([]byte, len(nodes))
		for i, n := range nodes {
			cur[i] = VCDValue(e.States[n])
		}
		p("#%d\n", t)
		if t == 0 {
			p("$dumpvars\n")
		}
		for i := range nodes {
			if prev == nil || cur[i] != prev[i] {
				p("%c%s\n", cur[i], ids[i])
			}
		}
		if t == 0 {
			p("$end\n")
		}
		prev = cur
	}
	p("#%d\n", len(hist))
	return bw.Flush()
}

// SaveVCD writes the VCD to path atomically.
func (s *Session) SaveVCD(path string, opt VCDOptions) error {
	return WriteFileAtomic(path, func(w io.Writer) error { return s.WriteVCD(w, opt) })
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

// VCDValue is a node's four-state letter (IEEE 1364-2005 §18.2.1): z for a
// floating node whatever charge it holds, x for X, and the logic value for
// 0, 1, L and H (the VCD four-state form carries no strength).
func VCDValue(st switchsim.NodeState) byte {
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

// VCDIdentifier is the i-th identifier code: printable ASCII 33 ('!') to
// 126 ('~') (IEEE 1364-2005 §18.2.3.8), as digits of base 94, shortest first.
func VCDIdentifier(i int) string {
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

// VCDReferences gives each node a legal reference (IEEE 1364-2005 §18.2.3.8:
// an identifier, optionally with a bit select). A name that is already a
// simple identifier is kept; NAME[N] becomes the bit select "NAME [N]";
// anything else has each illegal character replaced by '_' (so "u1.x"
// becomes "u1_x"), and a leading digit is prefixed with '_'. A name that
// then collides with an earlier one gets "_2", "_3", ... appended.
func VCDReferences(nl *switchsim.Netlist, nodes []int) []string {
	refs := make([]string, len(nodes))
	used := map[string]bool{}
	for i, n := range nodes {
		name := nl.NodeName(n)
		ref := name
		switch {
		case simpleIdent.MatchString(name):
		case bitSelect.MatchString(name):
			m := bitSelect.FindStringSubmatch(name)
			ref = m[1] + " [" + m[2] + "]"
		default:
			ref = illegal.ReplaceAllString(name, "_")
			if ref == "" || (ref[0] >= '0' && ref[0] <= '9') || ref[0] == '$' {
				ref = "_" + ref
			}
		}
		if used[ref] {
			base := ref
			for k := 2; used[ref]; k++ {
				if strings.Contains(base, " [") { // keep the bit select last
					b, idx, _ := strings.Cut(base, " [")
					ref = b + "_" + strconv.Itoa(k) + " [" + idx
				} else {
					ref = base + "_" + strconv.Itoa(k)
				}
			}
		}
		used[ref] = true
		refs[i] = ref
	}
	return refs
}

func vcdScopeName(name string) string {
	if name == "" {
		return "design"
	}
	ref := illegal.ReplaceAllString(name, "_")
	if ref[0] >= '0' && ref[0] <= '9' || ref[0] == '$' {
		ref = "_" + ref
	}
	return ref
}

// vcdText keeps free text from closing its section early.
func vcdText(s string) string { return strings.ReplaceAll(s, "$end", "$ end") }
