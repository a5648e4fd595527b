package designs_test

// The verdicts each demo is written to show, on its own steps, in both
// modes: where a race, a glitch, an oscillation or a failed write is
// reported and where none is. The expectations come from the circuits, as
// each demo's header explains them (common practice for what the circuits
// do; Brzozowski and Seger 1995 for the SR latch's critical race;
// Eichelberger 1965 for hazards).

import (
	"fmt"
	"slices"
	"strings"
	"testing"

	"railyard/designs"
	"railyard/switchsim"
	"railyard/switchsim/load"
)

// verdicts are "step kind node" for the kinds below, step counted from 1.
var verdictKinds = []switchsim.WarnKind{switchsim.WarnRace, switchsim.WarnGlitch,
	switchsim.WarnOscillation, switchsim.WarnWriteFail, switchsim.WarnShort}

var demoVerdicts = map[string]map[switchsim.Mode][]string{
	// Both select bits move while the stage evaluates (step 6): the
	// decoded selects 0 and 3 may pulse and open a leg whose operand bit is
	// 1, so pre's charge, and the operand, depend on which bit moves first.
	"opsel_dynamic": {
		switchsim.Ideal:    {"6 race pre", "6 race alu_b", "6 glitch s0", "6 glitch s3"},
		switchsim.Physical: {"6 race pre", "6 race alu_b", "6 glitch s0", "6 glitch s3"},
	},
	// Set and clear rise together (step 5): valid stays 0 but may pulse
	// (set first: valid_b falls, valid rises until clr arrives). Both fall
	// together (step 6): the critical race on both outputs.
	"sr_flag": {
		switchsim.Ideal:    {"5 glitch valid", "6 race valid", "6 race valid_b"},
		switchsim.Physical: {"5 glitch valid", "6 race valid", "6 race valid_b"},
	},
	// The writes of 1 over a held 0 (steps 2 and 8) lose to the keeper in
	// physical mode, which weighs the sizes; ideal mode trusts the weak label.
	"strong_keeper": {
		switchsim.Ideal:    nil,
		switchsim.Physical: {"2 write-fail s", "8 write-fail s"},
	},
	// Both inputs of the XOR change at step 3 (0 1 to 1 0): diff is 1
	// before and after, and 0 in between if one arrives first.
	"xor_tgate": {
		switchsim.Ideal:    {"3 glitch diff"},
		switchsim.Physical: {"3 glitch diff"},
	},
}

func demoWarnings(t *testing.T, name string, mode switchsim.Mode) []string {
	t.Helper()
	ld, err := load.Host(load.Options{}).Open("demo:"+name, "")
	if err != nil {
		t.Fatal(err)
	}
	d, st := ld.Design, ld.Steps
	if st == nil {
		t.Fatalf("%s has no steps", name)
	}
	s := switchsim.NewSim(d.Netlist, switchsim.Options{Mode: mode})
	s.Settle()
	var got []string
	for k, row := range st.Rows {
		for i, n := range st.Apply {
			s.SetInput(n, row.Drives[i])
		}
		for _, w := range s.Settle().Warnings {
			if slices.Contains(verdictKinds, w.Kind) {
				got = append(got, fmt.Sprintf("%d %s %s", k+1, w.Kind, d.Netlist.NodeName(w.Node)))
			}
		}
	}
	slices.Sort(got)
	return got
}

func TestDemoVerdicts(t *testing.T) {
	for _, e := range designs.List() {
		for _, mode := range []switchsim.Mode{switchsim.Ideal, switchsim.Physical} {
			want := slices.Clone(demoVerdicts[e.Name][mode])
			slices.Sort(want)
			if got := demoWarnings(t, e.Name, mode); !slices.Equal(got, want) {
				t.Errorf("%s, %s: verdicts\n  %s\nwant\n  %s", e.Name, mode, strings.Join(got, "\n  "), strings.Join(want, "\n  "))
			}
		}
	}
	listed := map[string]bool{}
	for _, e := range designs.List() {
		listed[e.Name] = true
	}
	for name := range demoVerdicts {
		if !listed[name] {
			t.Errorf("no demo %s", name)
		}
	}
}
