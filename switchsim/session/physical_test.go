package session_test

import (
	"bytes"
	"math"
	"strings"
	"testing"

	"railyard/switchsim"
	"railyard/switchsim/netfile"
	"railyard/switchsim/session"
	"railyard/switchsim/steps"
)

// fwdBit is an operand bit forwarded through one nMOS pass device to a
// node y that gates nothing and is no output: a degraded 1 there matters
// only if the steps check y (DEVELOPERS.md, physical mode: level warnings
// where a level is read).
const fwdBit = `design fwdbit
input en a
output q
nmos p en a y
node y cap=5f
use inv i1 a q
`

func openWith(t *testing.T, design, stepsSrc string, opt session.Options) *session.Session {
	t.Helper()
	d, err := netfile.Read("t.sw", []byte(design))
	if err != nil {
		t.Fatal(err)
	}
	var st *steps.Steps
	if stepsSrc != "" {
		if st, err = steps.Read("t.steps", []byte(stepsSrc), d.Netlist); err != nil {
			t.Fatal(err)
		}
	}
	return session.New(d, "t.sw", st, opt)
}

func degradedOn(e *session.Event, nl *switchsim.Netlist, node string) bool {
	for _, w := range e.Warnings {
		if w.Kind == switchsim.WarnDegraded && nl.NodeName(w.Node) == node {
			return true
		}
	}
	return false
}

func TestCheckedNodesGetLevelWarnings(t *testing.T) {
	for _, c := range []struct {
		steps string
		warn  bool
	}{
		{"apply en a\ncheck y\n1 1 | 1\n", true},  // checked: its degraded 1 is read
		{"apply en a\ncheck q\n1 1 | 0\n", false}, // not checked, gates nothing, no output: facts only
	} {
		s := openWith(t, fwdBit, c.steps, session.Options{Mode: switchsim.Physical})
		e, _ := s.Next()
		nl := s.Netlist()
		y, _ := nl.Lookup("y")
		if st := s.Node(y); st.State != switchsim.StateH {
			t.Fatalf("y is %v, want a degraded 1 (H)", st)
		}
		if got := degradedOn(e, nl, "y"); got != c.warn {
			t.Errorf("steps %q: degraded warning on y %v, want %v", c.steps, got, c.warn)
		}
		// A report re-simulates the history (Walk): it warns alike.
		var b bytes.Buffer
		if err := s.WriteText(&b); err != nil {
			t.Fatal(err)
		}
		if got := strings.Contains(b.String(), "warn   degraded: y is"); got != c.warn {
			t.Errorf("steps %q: the report's degraded warning on y %v, want %v\n%s", c.steps, got, c.warn, b.String())
		}
		if got := slicesHas(s.Watched(), y); got != c.warn {
			t.Errorf("Watched %v", s.Watched())
		}
	}
	// Options.Watch (a replayed trace's watch line) does the same without steps.
	d, _ := netfile.Read("t.sw", []byte(fwdBit))
	y, _ := d.Netlist.Lookup("y")
	en, _ := d.Netlist.Lookup("en")
	a, _ := d.Netlist.Lookup("a")
	s := session.New(d, "t.sw", nil, session.Options{Mode: switchsim.Physical, Watch: []int{y}})
	s.SetInput(en, switchsim.Drive1)
	e, _ := s.SetInput(a, switchsim.Drive1)
	if !degradedOn(e, s.Netlist(), "y") {
		t.Error("Options.Watch: no degraded warning on y")
	}
}

func slicesHas(xs []int, x int) bool {
	for _, v := range xs {
		if v == x {
			return true
		}
	}
	return false
}

// CheckMargin measures for the wanted value: a passing check has the
// node's own noise margin, a failing one says by how much it failed.
func TestCheckMargin(t *testing.T) {
	th := session.Thresholds{VIL: 0.7, VIH: 1.1, VM: 0.9}
	st := func(v float64) switchsim.NodeState { return switchsim.NodeState{Volts: v} }
	for _, c := range []struct {
		want steps.Want
		v    float64
		m    float64
	}{
		{steps.Want1, 1.8, 0.7}, {steps.WantH, 1.3, 0.2}, {steps.Want1, 0.2, -0.9},
		{steps.Want0, 0.0, 0.7}, {steps.WantL, 0.5, 0.2}, {steps.Want0, 1.8, -1.1},
	} {
		got := session.CheckMargin(c.want, st(c.v), switchsim.Margin{Noise: 99}, th)
		if math.Abs(got-c.m) > 1e-12 {
			t.Errorf("want %s at %.2f V: margin %v, want %v", c.want, c.v, got, c.m)
		}
	}
	if got := session.CheckMargin(steps.WantZ, st(0.3), switchsim.Margin{Noise: 0.4}, th); got != 0.4 {
		t.Errorf("a Z check takes the node's noise margin: %v", got)
	}
	if got := session.CheckMargin(steps.Want1, st(math.NaN()), switchsim.Margin{Noise: math.NaN()}, th); !math.IsNaN(got) {
		t.Errorf("unknown volts: %v, want NaN", got)
	}
	// The write margin of a fight node, signed for the wanted value.
	m := switchsim.Margin{Noise: 0.6, Write: 0.76, StageVM: 0.86}
	if w := session.WriteMargin(steps.Want1, st(0.10), m); math.Abs(w+0.76) > 1e-12 {
		t.Errorf("write margin %v, want -0.76 (0.10 - 0.86)", w)
	}
	if w := session.WriteMargin(steps.Want0, st(0.10), m); math.Abs(w-0.76) > 1e-12 {
		t.Errorf("write margin %v, want 0.76", w)
	}
}

// The gates line of the text report: lost_level's ld sits at 1.14 V (a
// threshold drop through and_pass), so the load device it gates passes a 1
// at most to PassHigh(1.14 V) = 0.57 V, which is dout's level. A design
// whose gates are all at full levels has no such line.
func TestReportGatesLine(t *testing.T) {
	s := runSession(t, "demo:lost_level", switchsim.Physical)
	var b bytes.Buffer
	if err := s.WriteText(&b); err != nil {
		t.Fatal(err)
	}
	tech := s.Netlist().Tech
	want := "  gates  load: ld at 1.14 V, on, passes a 1 up to 0.57 V at most"
	if lim := tech.PassHigh(1.1418); math.Abs(lim-0.5748) > 0.001 {
		t.Fatalf("PassHigh(1.1418) = %.4f", lim)
	}
	if !strings.Contains(b.String(), want) {
		t.Errorf("no %q in\n%s", want, b.String())
	}
	s = runSession(t, "demo:mux2_tgate", switchsim.Physical)
	b.Reset()
	s.WriteText(&b)
	if strings.Contains(b.String(), "gates  ") {
		t.Errorf("mux2_tgate has a gates line:\n%s", b.String())
	}
	s = runSession(t, "demo:lost_level", switchsim.Ideal)
	b.Reset()
	s.WriteText(&b)
	if strings.Contains(b.String(), "gates  ") || strings.Contains(b.String(), "margin") {
		t.Errorf("ideal mode shows gates or margins:\n%s", b.String())
	}
}

func TestRecornerReplaysTheHistory(t *testing.T) {
	s, err := session.Open("demo:keeper_corner", "", session.Options{Mode: switchsim.Physical})
	if err != nil {
		t.Fatal(err)
	}
	s.Next()
	s.Next()
	slow, err := session.Recorner(s, "slow", nil)
	if err != nil {
		t.Fatal(err)
	}
	if slow.Len() != s.Len() || slow.NextStep() != 2 || slow.Corner() != "slow" || slow.Netlist().Tech.Vdd != 1.62 {
		t.Fatalf("recornered: %d actions, next step %d, corner %q, vdd %v", slow.Len(), slow.NextStep(), slow.Corner(), slow.Netlist().Tech.Vdd)
	}
	if !slow.Last().Failed() || s.Last().Failed() {
		t.Errorf("step 2 (a write of a 1): nominal failed %v, slow failed %v; want it to fail at slow only", s.Last().Failed(), slow.Last().Failed())
	}
	back, err := session.Recorner(slow, session.Nominal, nil)
	if err != nil || back.Corner() != "" || back.Netlist().Tech.Vdd != 1.8 || back.Last().Failed() {
		t.Errorf("back to nominal: %v", err)
	}
	if _, err := session.Recorner(s, "typical", nil); err == nil || !strings.Contains(err.Error(), "slow, fast") {
		t.Errorf("an unknown corner: %v", err)
	}
}

// A corner survives the other rebuilds (a mode switch, a size tried), and
// a size tried survives a corner switch: every rebuild starts from the
// design at its own technology and puts it at the session's corner.
func TestCornerWithModeAndSize(t *testing.T) {
	s, err := session.Open("demo:keeper_corner", "", session.Options{Mode: switchsim.Physical})
	if err != nil {
		t.Fatal(err)
	}
	s.Next()
	s.Next()
	slow, err := session.Recorner(s, "slow", nil)
	if err != nil {
		t.Fatal(err)
	}
	ideal, err := session.Remode(slow, switchsim.Ideal, nil)
	if err != nil || ideal.Corner() != "slow" {
		t.Fatalf("ideal at slow: %v, corner %q", err, ideal.Corner())
	}
	back, err := session.Remode(ideal, switchsim.Physical, nil)
	if err != nil || back.Corner() != "slow" || back.Netlist().Tech.Vdd != 1.62 || !back.Last().Failed() {
		t.Fatalf("physical again: %v, corner %q, vdd %v", err, back.Corner(), back.Netlist().Tech.Vdd)
	}
	// The keeper's nMOS drawn twice as long at slow: the write of a 1 goes
	// through (a weaker keeper), and the size stays when going to nominal.
	kn, ok := back.Netlist().LookupDevice("keep.n")
	if !ok {
		t.Fatal("no keep.n")
	}
	dv := back.Netlist().Device(kn)
	sized, err := session.Resize(back, kn, dv.W, 2*dv.L, nil)
	if err != nil || sized.Corner() != "slow" || sized.Netlist().Tech.Vdd != 1.62 {
		t.Fatalf("resized at slow: %v, corner %q", err, sized.Corner())
	}
	nom, err := session.Recorner(sized, "", nil)
	if err != nil || nom.Corner() != "" || nom.Netlist().Tech.Vdd != 1.8 || !nom.Edited() {
		t.Fatalf("to nominal: %v, corner %q, edited %v", err, nom.Corner(), nom.Edited())
	}
	if got := nom.Netlist().Device(kn).L; got != 2*dv.L {
		t.Errorf("keep.n's L at nominal %g, want the size tried %g", got, 2*dv.L)
	}
	if got := nom.Original().Netlist.Tech.Vdd; got != 1.8 {
		t.Errorf("Original at vdd %v, want the design's own 1.8 V", got)
	}
}
