package session_test

import (
	"bytes"
	"fmt"
	"regexp"
	"strconv"
	"strings"
	"testing"
	"time"

	"railyard/switchsim"
	"railyard/switchsim/netfile"
	"railyard/switchsim/session"
)

// vcdFile is a VCD read back by the test's own parser, which follows the
// syntax of IEEE 1364-2005 §18.2 and shares no code with the writer.
type vcdFile struct {
	sections []string          // the header keywords in order ("$date", "$var", ...)
	scope    string            // the module scope's name
	vars     map[string]string // identifier code -> reference
	order    []string          // identifier codes in declaration order
	times    []int             // the timestamps, in order
	// values[t][ref] is the value after all changes at times[t].
	values []map[string]byte
}

var (
	timeRe   = regexp.MustCompile(`^#([0-9]+)$`)                             // §18.2.1 simulation_time ::= # decimal_number
	scalarRe = regexp.MustCompile(`^([01xXzZ])([\x21-\x7e]+)$`)              // §18.2.1 scalar_value_change ::= value identifier_code
	refRe    = regexp.MustCompile(`^[A-Za-z_][A-Za-z0-9_$]*( \[[0-9]+\])?$`) // §18.2.3.8 reference: identifier [bit_select]
)

// parseVCD reads the whole file token by token (§18.2: the file is a
// sequence of tokens separated by white space).
func parseVCD(t *testing.T, text string) *vcdFile {
	t.Helper()
	toks := strings.Fields(text)
	f := &vcdFile{vars: map[string]string{}}
	i := 0
	next := func() string {
		if i >= len(toks) {
			t.Fatalf("VCD ends inside a section")
		}
		i++
		return toks[i-1]
	}
	// Header: declaration commands, each closed by $end.
	for done := false; !done; {
		kw := next()
		f.sections = append(f.sections, kw)
		switch kw {
		case "$date", "$version", "$comment":
			for next() != "$end" {
			}
		case "$timescale":
			num, unit := next(), next()
			// §18.2.3.6: 1, 10 or 100 of s ms us ns ps fs.
			if !regexp.MustCompile(`^(1|10|100)$`).MatchString(num) || !regexp.MustCompile(`^(s|ms|us|ns|ps|fs)$`).MatchString(unit) {
				t.Errorf("$timescale %s %s is not one of 1/10/100 s..fs", num, unit)
			}
			if e := next(); e != "$end" {
				t.Errorf("$timescale not closed: %q", e)
			}
		case "$scope":
			kind, name := next(), next()
			if kind != "module" {
				t.Errorf("scope kind %q, want module", kind)
			}
			f.scope = name
			if e := next(); e != "$end" {
				t.Errorf("$scope not closed: %q", e)
			}
		case "$var":
			typ, size, id := next(), next(), next()
			if typ != "wire" || size != "1" {
				t.Errorf("$var %s %s: want a 1-bit wire", typ, size)
			}
			for _, c := range []byte(id) {
				if c < 33 || c > 126 { // §18.2.3.8: printable ASCII 33..126
					t.Errorf("identifier code %q has byte %d outside 33..126", id, c)
				}
			}
			var ref []string
			for w := next(); w != "$end"; w = next() {
				ref = append(ref, w)
			}
			r := strings.Join(ref, " ")
			if !refRe.MatchString(r) {
				t.Errorf("reference %q is not an identifier with an optional bit select", r)
			}
			if _, dup := f.vars[id]; dup {
				t.Errorf("identifier code %q declared twice", id)
			}
			f.vars[id] = r
			f.order = append(f.order, id)
		case "$upscope":
			if e := next(); e != "$end" {
				t.Errorf("$upscope not closed: %q", e)
			}
		case "$enddefinitions":
			if e := next(); e != "$end" {
				t.Errorf("$enddefinitions not closed: %q", e)
			}
			done = true
		default:
			t.Fatalf("unexpected header token %q", kw)
		}
	}
	// Value changes: #time, $dumpvars ... $end, scalar changes.
	cur := map[string]byte{}
	inDump := false
	for i < len(toks) {
		tok := next()
		switch {
		case tok == "$dumpvars":
			if len(f.times) != 1 || f.times[0] != 0 {
				t.Errorf("$dumpvars not at #0")
			}
			inDump = true
		case tok == "$end":
			if !inDump {
				t.Errorf("stray $end")
			}
			inDump = false
		case timeRe.MatchString(tok):
			n, _ := strconv.Atoi(tok[1:])
			if len(f.times) > 0 {
				if n <= f.times[len(f.times)-1] {
					t.Errorf("time #%d does not increase", n)
				}
				f.values = append(f.values, copyMap(cur))
			}
			f.times = append(f.times, n)
		case scalarRe.MatchString(tok):
			m := scalarRe.FindStringSubmatch(tok)
			ref, ok := f.vars[m[2]]
			if !ok {
				t.Errorf("value change for undeclared identifier %q", m[2])
				continue
			}
			if len(f.times) == 0 {
				t.Errorf("value change before any time")
			}
			cur[ref] = strings.ToLower(m[1])[0]
		default:
			t.Errorf("unexpected token %q in the value changes", tok)
		}
	}
	f.values = append(f.values, copyMap(cur))
	return f
}

func copyMap(m map[string]byte) map[string]byte {
	c := make(map[string]byte, len(m))
	for k, v := range m {
		c[k] = v
	}
	return c
}

// wantLetter is the four-state letter for each of the six states: VCD's
// four-state form has no strength (IEEE 1364-2005 §18.2.1), so L and H are
// the logic values 0 and 1; a floating node is z.
var wantLetter = map[switchsim.State]byte{
	switchsim.State0: '0', switchsim.State1: '1', switchsim.StateL: '0',
	switchsim.StateH: '1', switchsim.StateZ: 'z', switchsim.StateX: 'x',
}

func runSession(t *testing.T, design string, mode switchsim.Mode) *session.Session {
	t.Helper()
	s, err := session.Open(design, "", session.Options{Mode: mode})
	if err != nil {
		t.Fatal(err)
	}
	s.RunToEnd(false)
	return s
}

func writeVCD(t *testing.T, s *session.Session) string {
	t.Helper()
	var b bytes.Buffer
	date := time.Date(2026, 3, 4, 5, 6, 7, 0, time.UTC)
	if err := s.WriteVCD(&b, session.VCDOptions{Date: date, Version: "railyard test"}); err != nil {
		t.Fatal(err)
	}
	return b.String()
}

func TestVCDHeaderOrder(t *testing.T) {
	s := runSession(t, "testdata/plat.sw", switchsim.Ideal)
	f := parseVCD(t, writeVCD(t, s))
	// §18.2.3: declaration commands, then $enddefinitions; the header
	// sections the writer promises, in this order.
	want := []string{"$date", "$version", "$comment", "$timescale", "$scope", "$var", "$var", "$var", "$var", "$upscope", "$enddefinitions"}
	if fmt.Sprint(f.sections) != fmt.Sprint(want) {
		t.Errorf("sections %v, want %v", f.sections, want)
	}
	if f.scope != "plat" {
		t.Errorf("scope %q, want the design's name plat", f.scope)
	}
	// one time unit per step: #0 the initial settle, #1..#4 the four rows,
	// and a closing #5 that gives the last state a width.
	if fmt.Sprint(f.times) != "[0 1 2 3 4 5]" {
		t.Errorf("times %v, want [0 1 2 3 4 5]", f.times)
	}
}

func TestVCDValuesMatchTheRun(t *testing.T) {
	for _, mode := range []switchsim.Mode{switchsim.Ideal, switchsim.Physical} {
		s := runSession(t, "testdata/plat.sw", mode)
		f := parseVCD(t, writeVCD(t, s))
		nl := s.Netlist()
		hist := s.History()
		// Every node but the rails is dumped (FORMAT.md), so 4 of plat's 6.
		if len(f.vars) != nl.NumNodes()-2 {
			t.Fatalf("%s: %d vars, want %d", mode, len(f.vars), nl.NumNodes()-2)
		}
		for ti, e := range hist {
			for n := 0; n < nl.NumNodes(); n++ {
				if k := nl.NodeKind(n); k == switchsim.Power || k == switchsim.Ground {
					continue
				}
				name := nl.NodeName(n)
				got, ok := f.values[ti][name]
				if !ok {
					t.Errorf("%s #%d: no value for %s", mode, ti, name)
					continue
				}
				if want := wantLetter[e.States[n].State]; got != want {
					t.Errorf("%s #%d %s = %c, the run has state %s (%c)", mode, ti, name, got, e.States[n].State, want)
				}
			}
		}
		// By the circuit (common practice): the pass device samples d
		// while clk is 1 and leaves st floating while clk is 0; q is st
		// inverted. Rows: sample 1, hold, sample 0, hold.
		wantSt := "x1z0z" // #0 all X; st is z while held
		wantQ := "x0011"
		for ti := 0; ti < 5; ti++ {
			if got := f.values[ti]["st"]; got != wantSt[ti] {
				t.Errorf("%s #%d st = %c, want %c", mode, ti, got, wantSt[ti])
			}
			if got := f.values[ti]["q"]; got != wantQ[ti] {
				t.Errorf("%s #%d q = %c, want %c", mode, ti, got, wantQ[ti])
			}
		}
	}
}

func TestVCDOnlyChangesAfterDump(t *testing.T) {
	s := runSession(t, "testdata/opsel.sw", switchsim.Ideal)
	text := writeVCD(t, s)
	// Between two timestamps a node appears at most once, and only when
	// its value differs from the one before (§18.2.1: value changes).
	_, body, _ := strings.Cut(text, "$enddefinitions $end\n")
	last := map[string]string{}
	seen := map[string]bool{}
	for _, line := range strings.Split(strings.TrimSpace(body), "\n") {
		if strings.HasPrefix(line, "#") {
			seen = map[string]bool{}
			continue
		}
		if line == "$dumpvars" || line == "$end" {
			continue
		}
		v, id := line[:1], line[1:]
		if seen[id] {
			t.Errorf("%q changes twice at one time", id)
		}
		seen[id] = true
		if last[id] == v {
			t.Errorf("%q repeats value %s", id, v)
		}
		last[id] = v
	}
}

func TestVCDIdentifierCodes(t *testing.T) {
	// §18.2.3.8: identifier codes are printable ASCII 33..126; the writer
	// counts in base 94 from '!' so the first 94 nodes get one character.
	if got := session.VCDIdentifier(0); got != "!" {
		t.Errorf("code 0 = %q, want !", got)
	}
	if got := session.VCDIdentifier(93); got != "~" {
		t.Errorf("code 93 = %q, want ~", got)
	}
	if got := session.VCDIdentifier(94); len(got) != 2 {
		t.Errorf("code 94 = %q, want two characters", got)
	}
	seen := map[string]int{}
	for i := 0; i < 94*94+200; i++ {
		id := session.VCDIdentifier(i)
		if j, dup := seen[id]; dup {
			t.Fatalf("codes %d and %d are both %q", j, i, id)
		}
		seen[id] = i
		for _, c := range []byte(id) {
			if c < 33 || c > 126 {
				t.Fatalf("code %d = %q has byte %d", i, id, c)
			}
		}
	}
}

func TestVCDReferencesAreLegal(t *testing.T) {
	s := runSession(t, "testdata/names.sw", switchsim.Ideal)
	f := parseVCD(t, writeVCD(t, s)) // the parser checks every reference's syntax
	var refs []string
	for _, id := range f.order {
		refs = append(refs, f.vars[id])
	}
	// Declared in netlist order. By the documented rule: d[0] is a bit
	// select, "q.bar" loses its dot and would collide with q_bar, so the
	// later of the two gets a suffix; names that are legal stay.
	want := map[string]bool{"d [0]": true, "en": true, "q_bar": true, "q_bar_2": true, "n [1]": true}
	for _, r := range refs {
		if !want[r] {
			t.Errorf("unexpected reference %q (all: %v)", r, refs)
		}
		delete(want, r)
	}
	for r := range want {
		t.Errorf("missing reference %q (all: %v)", r, refs)
	}
}

func TestVCDWeakLevelsAreLogicValues(t *testing.T) {
	// Physical mode (MODEL.md §4): a pMOS passes a 0 only down to Vg + |Vtp|
	// (state L) and an nMOS a 1 only up to Vg - Vtn (state H). The
	// four-state VCD has no strength (IEEE 1364-2005 §18.2.1): 0 and 1.
	src := `design legs
input en enb d
output lo hi
pmos p enb d lo
nmos n en d hi
`
	d, err := netfile.Read("legs.sw", []byte(src))
	if err != nil {
		t.Fatal(err)
	}
	s := session.New(d, "legs.sw", nil, session.Options{Mode: switchsim.Physical})
	for _, set := range [][2]string{{"en", "1"}, {"enb", "0"}, {"d", "0"}, {"d", "1"}} {
		dr, _ := switchsim.ParseDrive(set[1])
		if _, err := s.SetByName(set[0], dr); err != nil {
			t.Fatal(err)
		}
	}
	lo, _ := d.Netlist.Lookup("lo")
	hi, _ := d.Netlist.Lookup("hi")
	h := s.History()
	if st := h[3].States[lo].State; st != switchsim.StateL {
		t.Fatalf("lo after d=0 is %s, want L", st)
	}
	if st := h[4].States[hi].State; st != switchsim.StateH {
		t.Fatalf("hi after d=1 is %s, want H", st)
	}
	f := parseVCD(t, writeVCD(t, s))
	if got := f.values[3]["lo"]; got != '0' {
		t.Errorf("lo at #3 = %c, want 0 for L", got)
	}
	if got := f.values[4]["hi"]; got != '1' {
		t.Errorf("hi at #4 = %c, want 1 for H", got)
	}
}
