package wave

import (
	"bytes"
	"fmt"
	"math"
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
	types    map[string]string // identifier code -> var type (wire, real)
	order    []string          // identifier codes in declaration order
	times    []int             // the timestamps, in order
	// values[t][ref] is the value after all changes at times[t]: a
	// four-state letter for a wire, the real number's text for a real.
	values []map[string]string
}

var (
	timeRe   = regexp.MustCompile(`^#([0-9]+)$`)                             // §18.2.1 simulation_time ::= # decimal_number
	scalarRe = regexp.MustCompile(`^([01xXzZ])([\x21-\x7e]+)$`)              // §18.2.1 scalar_value_change ::= value identifier_code
	realRe   = regexp.MustCompile(`^[rR](.+)$`)                              // §18.2.1 vector_value_change ::= r real_number identifier_code
	refRe    = regexp.MustCompile(`^[A-Za-z_][A-Za-z0-9_$]*( \[[0-9]+\])?$`) // §18.2.3.8 reference: identifier [bit_select]
	// §3.5.1 (A.8.7) real_number ::= unsigned_number . unsigned_number
	//   | unsigned_number [ . unsigned_number ] exp [ sign ] unsigned_number,
	// unsigned_number ::= decimal_digit { _ | decimal_digit }.
	realNumberRe = regexp.MustCompile(`^[0-9][0-9_]*(\.[0-9][0-9_]*([eE][+-]?[0-9][0-9_]*)?|[eE][+-]?[0-9][0-9_]*)$`)
)

// parseVCD reads the whole file token by token (§18.2: the file is a
// sequence of tokens separated by white space).
func parseVCD(t *testing.T, text string) *vcdFile {
	t.Helper()
	toks := strings.Fields(text)
	f := &vcdFile{vars: map[string]string{}, types: map[string]string{}}
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
			// A wire of one bit; a real variable is dumped with size 64
			// (§18.2.3.8, from memory: a real is a 64-bit double).
			if !(typ == "wire" && size == "1") && !(typ == "real" && size == "64") {
				t.Errorf("$var %s %s: want a 1-bit wire or a 64-bit real", typ, size)
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
			f.vars[id], f.types[id] = r, typ
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
	// Value changes: #time, $dumpvars ... $end, scalar and real changes.
	cur := map[string]string{}
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
		case realRe.MatchString(tok):
			num := realRe.FindStringSubmatch(tok)[1]
			if !realNumberRe.MatchString(num) {
				t.Errorf("%q is not a real_number", num)
			}
			id := next() // the identifier code is a token of its own
			if f.types[id] != "real" {
				t.Errorf("real value change for %q, which is no real variable", id)
				continue
			}
			cur[f.vars[id]] = num
		case scalarRe.MatchString(tok):
			m := scalarRe.FindStringSubmatch(tok)
			ref, ok := f.vars[m[2]]
			if !ok || f.types[m[2]] != "wire" {
				t.Errorf("value change for undeclared wire %q", m[2])
				continue
			}
			if len(f.times) == 0 {
				t.Errorf("value change before any time")
			}
			cur[ref] = strings.ToLower(m[1])
		default:
			t.Errorf("unexpected token %q in the value changes", tok)
		}
	}
	f.values = append(f.values, copyMap(cur))
	return f
}

func copyMap(m map[string]string) map[string]string {
	c := make(map[string]string, len(m))
	for k, v := range m {
		c[k] = v
	}
	return c
}

// wantLetter is the four-state letter for each of the six states: VCD's
// four-state form has no strength (IEEE 1364-2005 §18.2.1), so L and H are
// the logic values 0 and 1; a floating node is z.
var wantLetter = map[switchsim.State]string{
	switchsim.State0: "0", switchsim.State1: "1", switchsim.StateL: "0",
	switchsim.StateH: "1", switchsim.StateZ: "z", switchsim.StateX: "x",
}

// live records every node's state just after each action as the session
// settles it: the run's own states, which the VCD (written afterwards by
// re-simulation) must match.
type live struct{ states [][]switchsim.NodeState }

func (l *live) Record(s *session.Session, e *session.Event) {
	row := make([]switchsim.NodeState, s.Netlist().NumNodes())
	for n := range row {
		row[n] = s.Node(n)
	}
	l.states = append(l.states, row)
}

func runSession(t *testing.T, design string, mode switchsim.Mode) (*session.Session, *live) {
	t.Helper()
	s, err := session.Open(design, "", session.Options{Mode: mode})
	if err != nil {
		t.Fatal(err)
	}
	l := &live{}
	if err := s.Attach(l); err != nil {
		t.Fatal(err)
	}
	s.RunToEnd(false)
	return s, l
}

var testDate = time.Date(2026, 3, 4, 5, 6, 7, 0, time.UTC)

func writeVCD(t *testing.T, s *session.Session) string {
	t.Helper()
	var b bytes.Buffer
	if err := Write(&b, s, Options{Date: testDate, Version: "railyard test"}); err != nil {
		t.Fatal(err)
	}
	return b.String()
}

func TestHeaderOrder(t *testing.T) {
	s, _ := runSession(t, "testdata/plat.sw", switchsim.Ideal)
	f := parseVCD(t, writeVCD(t, s))
	// §18.2.3: declaration commands, then $enddefinitions; the header
	// sections the writer promises, in this order. Ideal mode has no
	// voltages, so no real variables.
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

func TestValuesMatchTheRun(t *testing.T) {
	for _, mode := range []switchsim.Mode{switchsim.Ideal, switchsim.Physical} {
		s, run := runSession(t, "testdata/plat.sw", mode)
		f := parseVCD(t, writeVCD(t, s))
		nl := s.Netlist()
		// Every node but the rails is dumped (README), so 4 of plat's 6;
		// in physical mode each also has its voltage.
		wantVars := nl.NumNodes() - 2
		if mode == switchsim.Physical {
			wantVars *= 2
		}
		if len(f.vars) != wantVars {
			t.Fatalf("%s: %d vars, want %d", mode, len(f.vars), wantVars)
		}
		for ti, states := range run.states {
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
				if want := wantLetter[states[n].State]; got != want {
					t.Errorf("%s #%d %s = %s, the run has state %s (%s)", mode, ti, name, got, states[n].State, want)
				}
				if mode != switchsim.Physical {
					continue
				}
				v, err := strconv.ParseFloat(f.values[ti][name+"_v"], 64)
				want := states[n].Volts
				if math.IsNaN(want) {
					want = 0 // documented: an unknown level dumps 0 while the wire reads x or z
				}
				if err != nil || math.Abs(v-want) > 1e-6 {
					t.Errorf("%s #%d %s_v = %q, the run has %.6f V", mode, ti, name, f.values[ti][name+"_v"], want)
				}
			}
		}
		// By the circuit (common practice): the pass device samples d
		// while clk is 1 and leaves st floating while clk is 0; q is st
		// inverted. Rows: sample 1, hold, sample 0, hold.
		wantSt := "x1z0z" // #0 all X; st is z while held
		wantQ := "x0011"
		for ti := 0; ti < 5; ti++ {
			if got := f.values[ti]["st"]; got != wantSt[ti:ti+1] {
				t.Errorf("%s #%d st = %s, want %c", mode, ti, got, wantSt[ti])
			}
			if got := f.values[ti]["q"]; got != wantQ[ti:ti+1] {
				t.Errorf("%s #%d q = %s, want %c", mode, ti, got, wantQ[ti])
			}
		}
	}
}

// TestVoltagesShowTheDegradedHigh: the point of the real variables. An
// nMOS pass device passes a 1 only up to about Vdd - Vt, and with the body
// effect Vt is above Vt0 (first-order MOS model, any textbook: Vt = Vt0 +
// gamma (sqrt(phi + Vsb) - sqrt(phi))). With the generic preset (vdd 1.8,
// vtn 0.45) the sampled st is a 1 on its wire and below 1.8 - 0.45 = 1.35
// V on its voltage, while q, driven by an inverter, is at the rails but for
// the few tens of millivolts its pMOS, partly on under the degraded high,
// lifts it by (the level-1 DC point of the two devices, about 0.02 V).
func TestVoltagesShowTheDegradedHigh(t *testing.T) {
	s, _ := runSession(t, "testdata/plat.sw", switchsim.Physical)
	f := parseVCD(t, writeVCD(t, s))
	vol := func(ti int, ref string) float64 {
		v, err := strconv.ParseFloat(f.values[ti][ref], 64)
		if err != nil {
			t.Fatalf("#%d %s = %q: %v", ti, ref, f.values[ti][ref], err)
		}
		return v
	}
	if f.values[1]["st"] != "1" {
		t.Fatalf("st at #1 = %s, want 1", f.values[1]["st"])
	}
	if v := vol(1, "st_v"); !(v < 1.35 && v > 0.9) {
		t.Errorf("st_v at #1 = %v V, want a degraded high below 1.35 V (and above vdd/2)", v)
	}
	if v := vol(1, "q_v"); !(v > 0 && v < 0.05) {
		t.Errorf("q_v at #1 = %v V, want just above 0 (the inverter pulls to ground against its partly-on pMOS)", v)
	}
	if v := vol(3, "q_v"); v != 1.8 {
		t.Errorf("q_v at #3 = %v V, want vdd = 1.8", v)
	}
	for _, id := range f.order {
		if f.types[id] == "real" && !strings.HasSuffix(f.vars[id], "_v") {
			t.Errorf("real variable %q is not NAME_v", f.vars[id])
		}
	}
}

func TestOnlyChangesAfterDump(t *testing.T) {
	for _, mode := range []switchsim.Mode{switchsim.Ideal, switchsim.Physical} {
		s, _ := runSession(t, "testdata/opsel.sw", mode)
		text := writeVCD(t, s)
		// Between two timestamps a variable appears at most once, and only
		// when its value differs from the one before (§18.2.1: value changes).
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
			if num, code, ok := strings.Cut(line, " "); ok && line[0] == 'r' {
				v, id = num, code
			}
			if seen[id] {
				t.Errorf("%s: %q changes twice at one time", mode, id)
			}
			seen[id] = true
			if last[id] == v {
				t.Errorf("%s: %q repeats value %s", mode, id, v)
			}
			last[id] = v
		}
	}
}

// The streaming writer (what run --vcd uses, fed the live session) and the
// re-simulating Write (what the explorer's export uses) give the same file.
func TestStreamingEqualsWalk(t *testing.T) {
	for _, d := range []string{"demo:static_latch", "demo:lost_level", "demo:flipflop"} {
		s, err := session.Open(d, "", session.Options{Mode: switchsim.Physical})
		if err != nil {
			t.Fatal(err)
		}
		var live bytes.Buffer
		v := NewWriter(&live, s, Options{Date: testDate})
		v.Add(s.Last(), s.Node)
		for {
			e, ok := s.Next()
			if !ok {
				break
			}
			v.Add(e, s.Node)
		}
		v.Close()
		var walked bytes.Buffer
		if err := Write(&walked, s, Options{Date: testDate}); err != nil {
			t.Fatal(err)
		}
		if live.String() != walked.String() {
			t.Errorf("%s: the streamed VCD differs from the re-simulated one", d)
		}
	}
}

func TestIdentifierCodes(t *testing.T) {
	// §18.2.3.8: identifier codes are printable ASCII 33..126; the writer
	// counts in base 94 from '!' so the first 94 nodes get one character.
	if got := identifier(0); got != "!" {
		t.Errorf("code 0 = %q, want !", got)
	}
	if got := identifier(93); got != "~" {
		t.Errorf("code 93 = %q, want ~", got)
	}
	if got := identifier(94); len(got) != 2 {
		t.Errorf("code 94 = %q, want two characters", got)
	}
	seen := map[string]int{}
	for i := 0; i < 94*94+200; i++ {
		id := identifier(i)
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

func TestReferencesAreLegal(t *testing.T) {
	s, _ := runSession(t, "testdata/names.sw", switchsim.Physical)
	f := parseVCD(t, writeVCD(t, s)) // the parser checks every reference's syntax
	var refs []string
	for _, id := range f.order {
		refs = append(refs, f.vars[id])
	}
	// Declared in netlist order. By the documented rule: d[0] is a bit
	// select, "q.bar" loses its dot and would collide with q_bar, so the
	// later of the two gets a suffix; names that are legal stay; the
	// voltage variables are plain identifiers ending in _v.
	want := map[string]bool{"d [0]": true, "en": true, "q_bar": true, "q_bar_2": true, "n [1]": true,
		"d_0__v": true, "en_v": true, "q_bar_v": true, "q_bar_v_2": true, "n_1__v": true}
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

// 40,000 names that all become "__" get distinct references; the suffix
// search remembers where it stopped, so this is linear (the benchmark
// below measures it).
func TestReferencesManyCollisions(t *testing.T) {
	names := collidingNames(40000)
	refs, vrefs := references(names, true)
	seen := map[string]bool{}
	for _, r := range append(refs, vrefs...) {
		if seen[r] {
			t.Fatalf("reference %q given twice", r)
		}
		seen[r] = true
		if !refRe.MatchString(r) {
			t.Fatalf("reference %q is not legal", r)
		}
	}
	if refs[0] != "__" || refs[1] != "___2" || refs[39999] != "___40000" {
		t.Errorf("refs %q %q ... %q, want __ ___2 ... ___40000", refs[0], refs[1], refs[39999])
	}
}

// collidingNames are n distinct names made of two characters that are not
// legal in a VCD identifier, so every one becomes "__".
func collidingNames(n int) []string {
	names := make([]string, n)
	for i := range names {
		names[i] = string(rune(0x4e00+i/200)) + string(rune(0x4e00+i%200))
	}
	return names
}

func BenchmarkReferences40k(b *testing.B) {
	names := collidingNames(40000)
	for i := 0; i < b.N; i++ {
		references(names, true)
	}
}

func TestWeakLevelsAreLogicValues(t *testing.T) {
	// Physical mode (switchsim/doc.go): a pMOS passes a 0 only down to Vg
	// + |Vtp| (state L) and an nMOS a 1 only up to Vg - Vtn (state H). The
	// four-state VCD has no strength (IEEE 1364-2005 §18.2.1): 0 and 1,
	// and the voltage variable shows the degraded level.
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
	if st := s.Track([]int{lo, hi}); st[3][0] != switchsim.StateL || st[4][1] != switchsim.StateH {
		t.Fatalf("lo after d=0 is %s, hi after d=1 is %s; want L and H", st[3][0], st[4][1])
	}
	f := parseVCD(t, writeVCD(t, s))
	if got := f.values[3]["lo"]; got != "0" {
		t.Errorf("lo at #3 = %s, want 0 for L", got)
	}
	if got := f.values[4]["hi"]; got != "1" {
		t.Errorf("hi at #4 = %s, want 1 for H", got)
	}
	if v, _ := strconv.ParseFloat(f.values[4]["hi_v"], 64); !(v > 0.9 && v < 1.35) {
		t.Errorf("hi_v at #4 = %v, want a degraded high below vdd - vtn = 1.35 V", v)
	}
	if v, _ := strconv.ParseFloat(f.values[3]["lo_v"], 64); !(v > 0.45 && v < 0.9) {
		t.Errorf("lo_v at #3 = %v, want a degraded low above |vtp| = 0.45 V", v)
	}
}

func TestRealNumbers(t *testing.T) {
	// Every voltage the writer prints is a real_number of §3.5.1.
	for _, v := range []float64{0, 1, 1.8, 0.737, 1e-5, 123456789, 1.2e-12} {
		if r := realNumber(v); !realNumberRe.MatchString(r) {
			t.Errorf("realNumber(%v) = %q is not a real_number", v, r)
		}
	}
}
