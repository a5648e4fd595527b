package session_test

import (
	"errors"
	"fmt"
	"sort"
	"strings"
	"testing"

	"railyard/switchsim"
	"railyard/switchsim/load"
	"railyard/switchsim/netfile"
	"railyard/switchsim/session"
)

func TestStaticCheckFindsEachSlip(t *testing.T) {
	d, err := load.Host(load.Options{}).Design("testdata/slips.sw")
	if err != nil {
		t.Fatal(err)
	}
	got := map[string]string{} // kind -> what it names
	for _, f := range session.StaticCheck(d.Netlist) {
		name := ""
		if f.Node >= 0 {
			name = d.Netlist.NodeName(f.Node)
		}
		if f.Kind == session.FindShortedDevice || f.Kind == session.FindRailShort {
			name = d.Netlist.Device(f.Device).Name
		}
		got[f.Kind] += name + " "
	}
	// By construction of slips.sw (each line's comment says which slip it is).
	want := map[string]string{
		session.FindUnusedInput:   "spare ",
		session.FindUndrivenGate:  "ghost ",
		session.FindUndrivenNode:  "f1 f2 ",
		session.FindShortedDevice: "n2 ",
		session.FindRailShort:     "pu ", // the chain starts at the power rail
	}
	for k, v := range want {
		if got[k] != v {
			t.Errorf("%s: got %q, want %q", k, got[k], v)
		}
	}
	for k := range got {
		if _, ok := want[k]; !ok {
			t.Errorf("unexpected finding kind %s (%q)", k, got[k])
		}
	}
}

func TestStaticCheckCleanDesign(t *testing.T) {
	d, err := load.Host(load.Options{}).Design("testdata/opsel.sw")
	if err != nil {
		t.Fatal(err)
	}
	if fs := session.StaticCheck(d.Netlist); len(fs) != 0 {
		t.Errorf("a plain transmission-gate selector has findings: %+v", fs)
	}
}

func TestStaticRailShortThroughAlwaysOnGates(t *testing.T) {
	// An nMOS gated by the power rail and a pMOS gated by ground are always
	// on (common practice); in series they join the rails. The same chain
	// with an input-gated device is not a short.
	src := `design tie
input a
output y
nmos n1 vdd y gnd
pmos p1 gnd vdd y
nmos n2 a z gnd
pmos p2 gnd vdd z
`
	d, err := netfile.Read("tie.sw", []byte(src))
	if err != nil {
		t.Fatal(err)
	}
	var shorts []string
	for _, f := range session.StaticCheck(d.Netlist) {
		if f.Kind == session.FindRailShort {
			shorts = append(shorts, f.Message)
		}
	}
	if len(shorts) != 1 || !strings.Contains(shorts[0], "p1, n1") {
		t.Errorf("rail shorts %q, want one through p1, n1", shorts)
	}
}

func findings(rep *session.ExhaustiveReport, nl *switchsim.Netlist) []string {
	var out []string
	for _, f := range rep.Findings {
		out = append(out, fmt.Sprintf("%s %s @%s x%d", f.Kind, nl.NodeName(f.Node), f.Vector, f.Count))
	}
	sort.Strings(out)
	return out
}

func TestExhaustiveBus(t *testing.T) {
	s, err := session.Open("testdata/bus.sw", "", session.Options{Mode: switchsim.Ideal})
	if err != nil {
		t.Fatal(err)
	}
	var calls int
	rep, err := s.Exhaustive(session.ExhaustiveOptions{Progress: func(done, total int) {
		calls++
		if total != 8 || done > total {
			t.Errorf("progress %d/%d", done, total)
		}
	}})
	if err != nil {
		t.Fatal(err)
	}
	if rep.Vectors != 8 || calls == 0 {
		t.Fatalf("vectors %d, progress calls %d", rep.Vectors, calls)
	}
	// Counted by hand: with en=1 and a != b the two strong write devices
	// fight (2 of 8 vectors, IEEE 1364-2005 §7: equal strengths, different
	// values give X); with en=0 the bus floats (4 of 8). Gray order over
	// (en, a, b), first input fastest: 000, 100, 110, 010, 011, 111, 101,
	// 001, so the first fight is en=1 a=1 b=0 and the first float is 000.
	want := []string{
		"conflict bus @en=1 a=1 b=0 x2",
		"floating-output bus @en=0 a=0 b=0 x4",
	}
	if got := findings(rep, s.Netlist()); fmt.Sprint(got) != fmt.Sprint(want) {
		t.Errorf("findings\n %q\nwant\n %q", got, want)
	}
	if !session.AnyFailing(rep.Findings) {
		t.Error("a conflict and a floating output must fail the check (FORMAT.md)")
	}
	// The session itself is left as it was: inputs still X after the initial settle.
	if dr := s.Sim.InputDrive(s.Netlist().Inputs()[0]); dr != switchsim.DriveX {
		t.Errorf("the exhaustive check changed the session's inputs (en is %s)", dr)
	}
}

func TestExhaustiveCleanSelector(t *testing.T) {
	s, err := session.Open("testdata/opsel.sw", "", session.Options{Mode: switchsim.Ideal})
	if err != nil {
		t.Fatal(err)
	}
	rep, err := s.Exhaustive(session.ExhaustiveOptions{})
	if err != nil {
		t.Fatal(err)
	}
	// A transmission-gate selector drives its output strongly from one leg
	// for every vector (common practice).
	if len(rep.Findings) != 0 {
		t.Errorf("findings %q", findings(rep, s.Netlist()))
	}
}

func TestExhaustiveDegradedAndLostLevels(t *testing.T) {
	// Physical mode (MODEL.md §4): an nMOS passes a 1 only up to
	// Vg - Vt(Vout), so a bare pass device gives a degraded output; a
	// pass device gated by that degraded level loses the level.
	src := `design chain
input en d
output mid out
nmos n1 en d mid
nmos n2 mid d out
`
	d, err := netfile.Read("chain.sw", []byte(src))
	if err != nil {
		t.Fatal(err)
	}
	s := session.New(d, "chain.sw", nil, session.Options{Mode: switchsim.Physical})
	rep, err := s.Exhaustive(session.ExhaustiveOptions{})
	if err != nil {
		t.Fatal(err)
	}
	kinds := map[string]bool{}
	for _, f := range rep.Findings {
		kinds[f.Kind+" "+d.Netlist.NodeName(f.Node)] = true
	}
	if !kinds["degraded-output mid"] {
		t.Errorf("no degraded output on mid: %q", findings(rep, d.Netlist))
	}
	if !kinds["level-lost out"] {
		t.Errorf("no lost level on out: %q", findings(rep, d.Netlist))
	}
	if !session.AnyFailing(rep.Findings) {
		t.Error("a lost level must fail the check")
	}
}

func TestExhaustiveRefusesTooManyInputs(t *testing.T) {
	var b strings.Builder
	b.WriteString("design wide\ninput")
	for i := 0; i < 21; i++ {
		fmt.Fprintf(&b, " i%d", i)
	}
	b.WriteString("\noutput y\n")
	for i := 0; i < 21; i++ {
		fmt.Fprintf(&b, "nmos n%d i%d y gnd\n", i, i)
	}
	d, err := netfile.Read("wide.sw", []byte(b.String()))
	if err != nil {
		t.Fatal(err)
	}
	s := session.New(d, "wide.sw", nil, session.Options{Mode: switchsim.Ideal})
	_, err = s.Exhaustive(session.ExhaustiveOptions{})
	var tm *session.TooManyInputsError
	if !errors.As(err, &tm) || tm.Inputs != 21 || tm.Max != 20 {
		t.Fatalf("err %v, want a refusal of 21 inputs over the limit of 20", err)
	}
}

// BenchmarkExhaustive times the exhaustive check of an 8-way selector tree
// (3 selects + 8 data = 11 inputs, 2048 vectors) in each mode.
func BenchmarkExhaustive(b *testing.B) {
	var src strings.Builder
	src.WriteString("design tree8\ninput s0 s1 s2 d0 d1 d2 d3 d4 d5 d6 d7\noutput y\n")
	level := []string{"d0", "d1", "d2", "d3", "d4", "d5", "d6", "d7"}
	for k := 0; len(level) > 1; k++ {
		fmt.Fprintf(&src, "use inv i%d s%d s%db\n", k, k, k)
		var next []string
		for j := 0; j < len(level); j += 2 {
			out := fmt.Sprintf("m%d_%d", k, j/2)
			if len(level) == 2 {
				out = "y"
			}
			fmt.Fprintf(&src, "tgate a%d_%d s%db s%d %s %s\n", k, j, k, k, level[j], out)
			fmt.Fprintf(&src, "tgate b%d_%d s%d s%db %s %s\n", k, j, k, k, level[j+1], out)
			next = append(next, out)
		}
		level = next
	}
	d, err := netfile.Read("tree8.sw", []byte(src.String()))
	if err != nil {
		b.Fatal(err)
	}
	for _, mode := range []switchsim.Mode{switchsim.Ideal, switchsim.Physical} {
		b.Run(mode.String(), func(b *testing.B) {
			s := session.New(d, "tree8.sw", nil, session.Options{Mode: mode})
			for i := 0; i < b.N; i++ {
				rep, err := s.Exhaustive(session.ExhaustiveOptions{})
				if err != nil || len(rep.Findings) != 0 {
					b.Fatalf("%v %+v", err, rep)
				}
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*2048), "ns/vector")
		})
	}
}
