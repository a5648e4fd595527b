package session_test

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"sort"
	"strings"
	"testing"

	"railyard/switchsim"
	"railyard/switchsim/session"
)

// The JSON lines of `run --json`, checked field by field against switchsim/FORMATS.md.

func jsonLines(t *testing.T, s *session.Session) []map[string]any {
	t.Helper()
	var b bytes.Buffer
	if err := s.WriteJSON(&b); err != nil {
		t.Fatal(err)
	}
	var out []map[string]any
	for i, line := range strings.Split(strings.TrimSuffix(b.String(), "\n"), "\n") {
		var m map[string]any
		if err := json.Unmarshal([]byte(line), &m); err != nil {
			t.Fatalf("line %d is not one JSON object: %v\n%s", i+1, err, line)
		}
		out = append(out, m)
	}
	return out
}

func keys(m map[string]any) string {
	var ks []string
	for k := range m {
		ks = append(ks, k)
	}
	sort.Strings(ks)
	return strings.Join(ks, " ")
}

func isString(v any) bool { _, ok := v.(string); return ok }
func isNumber(v any) bool { _, ok := v.(float64); return ok }
func isBool(v any) bool   { _, ok := v.(bool); return ok }

// switchsim/FORMATS.md: state one of 0 1 L H Z X, value one of 0 1 X, strength an
// IEEE 1364 name (§7), and these warning kinds at least.
var (
	states       = "0 1 L H Z X"
	values       = "0 1 X"
	strengths    = map[string]bool{"supply": true, "strong": true, "pull": true, "large": true, "weak": true, "medium": true, "small": true, "highz": true}
	warningKinds = map[string]bool{"degraded": true, "level-lost": true, "contention": true, "conflict": true,
		"charge-sharing": true, "held-by-charge": true, "partial-on": true, "floating-gate": true, "oscillation": true}
)

func oneOf(v any, set string) bool {
	s, ok := v.(string)
	return ok && s != "" && !strings.Contains(s, " ") && strings.Contains(" "+set+" ", " "+s+" ")
}

func checkSchema(t *testing.T, s *session.Session, lines []map[string]any) {
	t.Helper()
	nl := s.Netlist()
	if len(lines) < 2 {
		t.Fatalf("%d lines, want a header, steps and a summary", len(lines))
	}
	// First line: {"design", "mode", "tech": {"vdd", "vil", "vih", "vm", ...}}.
	h := lines[0]
	if keys(h) != "design mode tech" {
		t.Errorf("header keys %q, want design mode tech", keys(h))
	}
	if h["design"] != s.Design().Name {
		t.Errorf("design %v, want %q", h["design"], s.Design().Name)
	}
	if h["mode"] != s.Options().Mode.String() || !oneOf(h["mode"], "physical ideal") {
		t.Errorf("mode %v", h["mode"])
	}
	tech, ok := h["tech"].(map[string]any)
	if !ok {
		t.Fatalf("tech is %T, want an object", h["tech"])
	}
	if !isNumber(tech["vdd"]) {
		t.Errorf("tech.vdd is %v, want a number", tech["vdd"])
	}
	for _, k := range []string{"vil", "vih", "vm"} {
		v, present := tech[k]
		if !present || (v != nil && !isNumber(v)) {
			t.Errorf("tech.%s is %v, want a number or null", k, v)
		}
	}
	// switchsim §4: 0 < VIL < VM < VIH < vdd for a working reference inverter.
	if vil, ok := tech["vil"].(float64); ok {
		vih, vm, vdd := tech["vih"].(float64), tech["vm"].(float64), tech["vdd"].(float64)
		if !(0 < vil && vil < vm && vm < vih && vih < vdd) {
			t.Errorf("thresholds out of order: vil %g vm %g vih %g vdd %g", vil, vm, vih, vdd)
		}
	}

	// Last line: {"summary": {"steps", "checks", "failed", "warnings"}}.
	last := lines[len(lines)-1]
	if keys(last) != "summary" {
		t.Fatalf("last line keys %q, want summary", keys(last))
	}
	sum, ok := last["summary"].(map[string]any)
	if !ok || keys(sum) != "checks failed steps warnings" {
		t.Fatalf("summary %v", last["summary"])
	}
	for k, v := range sum {
		if f, ok := v.(float64); !ok || f != math.Trunc(f) || f < 0 {
			t.Errorf("summary.%s = %v, want a count", k, v)
		}
	}

	var nChecks, nFailed, nWarnings, nSteps int
	for i, st := range lines[1 : len(lines)-1] {
		if keys(st) != "apply checks label nodes rounds step warnings" {
			t.Errorf("step line %d keys %q", i+1, keys(st))
			continue
		}
		if n, ok := st["step"].(float64); !ok || n != math.Trunc(n) {
			t.Errorf("step %v, want an integer", st["step"])
		} else if n > 0 {
			nSteps++
		}
		if !isString(st["label"]) || !isNumber(st["rounds"]) {
			t.Errorf("label %v rounds %v", st["label"], st["rounds"])
		}
		apply, ok := st["apply"].(map[string]any)
		if !ok {
			t.Errorf("apply is %T", st["apply"])
		}
		for name, v := range apply {
			n, found := nl.Lookup(name)
			if !found || nl.NodeKind(n) != switchsim.Input || !oneOf(v, "0 1 x z") {
				t.Errorf("apply %s=%v: want an input and one of 0 1 x z", name, v)
			}
		}
		nodes, ok := st["nodes"].(map[string]any)
		if !ok {
			t.Fatalf("nodes is %T", st["nodes"])
		}
		// every node but the rails
		if len(nodes) != nl.NumNodes()-2 {
			t.Errorf("%d nodes, want %d (every node but the two rails)", len(nodes), nl.NumNodes()-2)
		}
		for _, rail := range []int{nl.Power(), nl.Ground()} {
			if _, in := nodes[nl.NodeName(rail)]; in {
				t.Errorf("rail %s listed in nodes", nl.NodeName(rail))
			}
		}
		for name, v := range nodes {
			ns, ok := v.(map[string]any)
			want := "floating state strength value volts"
			if s.Options().Mode == switchsim.Physical {
				// switchsim/FORMATS.md: in physical mode each node also has its margin;
				// a node of a fight that drives a stage its write margin too.
				want = "floating margin state strength value volts"
				if _, fight := ns["write_margin"]; fight {
					want = "floating margin stage_vm state strength value volts write_margin"
				}
				if (ns["margin"] == nil) != (ns["volts"] == nil) {
					t.Errorf("node %s margin %v with volts %v: a margin is known exactly where the volts are", name, ns["margin"], ns["volts"])
				}
			}
			if !ok || keys(ns) != want {
				t.Errorf("node %s = %v", name, v)
				continue
			}
			if !oneOf(ns["state"], states) || !oneOf(ns["value"], values) || !strengths[fmt.Sprint(ns["strength"])] || !isBool(ns["floating"]) {
				t.Errorf("node %s = %v", name, ns)
			}
			if ns["volts"] != nil && !isNumber(ns["volts"]) {
				t.Errorf("node %s volts %v, want a number or null", name, ns["volts"])
			}
			if s.Options().Mode == switchsim.Ideal && ns["volts"] != nil {
				t.Errorf("node %s has volts %v in ideal mode (switchsim/FORMATS.md: null)", name, ns["volts"])
			}
			// A floating node is state Z (switchsim §2).
			if ns["floating"] == true && ns["state"] != "Z" {
				t.Errorf("node %s floating but state %v", name, ns["state"])
			}
		}
		checks, ok := st["checks"].([]any)
		if !ok {
			t.Fatalf("checks is %T", st["checks"])
		}
		for _, c := range checks {
			cm, ok := c.(map[string]any)
			want := "got node pass want"
			if s.Options().Mode == switchsim.Physical {
				want = "got margin node pass want"
				if _, fight := cm["write_margin"]; fight {
					want = "got margin node pass want write_margin"
				}
			}
			if !ok || keys(cm) != want {
				t.Errorf("check %v", c)
				continue
			}
			if !oneOf(cm["want"], "0 1 X Z L H") || !oneOf(cm["got"], states) || !isBool(cm["pass"]) {
				t.Errorf("check %v", cm)
			}
			if _, found := nl.Lookup(fmt.Sprint(cm["node"])); !found {
				t.Errorf("check of unknown node %v", cm["node"])
			}
			nChecks++
			if cm["pass"] == false {
				nFailed++
			}
		}
		warns, ok := st["warnings"].([]any)
		if !ok {
			t.Fatalf("warnings is %T", st["warnings"])
		}
		for _, w := range warns {
			wm, ok := w.(map[string]any)
			if !ok || keys(wm) != "kind message node" || !warningKinds[fmt.Sprint(wm["kind"])] || !isString(wm["message"]) {
				t.Errorf("warning %v", w)
			}
			nWarnings++
		}
	}
	if int(sum["steps"].(float64)) != nSteps || int(sum["checks"].(float64)) != nChecks ||
		int(sum["failed"].(float64)) != nFailed || int(sum["warnings"].(float64)) != nWarnings {
		t.Errorf("summary %v, the lines hold steps %d checks %d failed %d warnings %d", sum, nSteps, nChecks, nFailed, nWarnings)
	}
}

func TestJSONSchema(t *testing.T) {
	for _, c := range []struct {
		design string
		mode   switchsim.Mode
	}{
		{"testdata/plat.sw", switchsim.Ideal},
		{"testdata/plat.sw", switchsim.Physical},
		{"testdata/opsel.sw", switchsim.Physical},
		{"demo:static_latch", switchsim.Physical},
		{"demo:lost_level", switchsim.Physical},
		{"testdata/bus.sw", switchsim.Ideal}, // no steps: the initial settle alone
	} {
		t.Run(c.design+"/"+c.mode.String(), func(t *testing.T) {
			s := runSession(t, c.design, c.mode)
			checkSchema(t, s, jsonLines(t, s))
		})
	}
}

func TestJSONStepValues(t *testing.T) {
	s := runSession(t, "testdata/plat.sw", switchsim.Ideal)
	lines := jsonLines(t, s)
	if len(lines) != 6 {
		t.Fatalf("%d lines, want header + 4 steps + summary", len(lines))
	}
	// Row 2 of plat.steps: clk=0 d=1, st keeps its 1 as charge (switchsim/FORMATS.md:
	// a stored value counts for a 1 check) and q stays 0.
	st := lines[2]
	if st["step"] != 2.0 || st["label"] != "hold: st keeps its charge (d steady: with clk, a change would race)" {
		t.Errorf("step %v label %v", st["step"], st["label"])
	}
	if a := st["apply"].(map[string]any); a["clk"] != "0" || a["d"] != "1" {
		t.Errorf("apply %v", a)
	}
	node := st["nodes"].(map[string]any)["st"].(map[string]any)
	// ideal mode, a floating node of the default charge class medium
	// (switchsim/FORMATS.md node charge default; IEEE 1364-2005 §7 charge strengths)
	if node["state"] != "Z" || node["value"] != "1" || node["strength"] != "medium" || node["floating"] != true || node["volts"] != nil {
		t.Errorf("st = %v, want floating Z holding 1 at medium, volts null", node)
	}
	checks := st["checks"].([]any)
	if len(checks) != 2 || checks[0].(map[string]any)["got"] != "Z" || checks[0].(map[string]any)["pass"] != true {
		t.Errorf("checks %v", checks)
	}
	sum := lines[5]["summary"].(map[string]any)
	if sum["steps"] != 4.0 || sum["checks"] != 8.0 || sum["failed"] != 0.0 {
		t.Errorf("summary %v", sum)
	}
}

func TestJSONPhysicalVolts(t *testing.T) {
	s := runSession(t, "testdata/plat.sw", switchsim.Physical)
	lines := jsonLines(t, s)
	st := lines[1]["nodes"].(map[string]any)["st"].(map[string]any)
	v, ok := st["volts"].(float64)
	// switchsim §4: an nMOS with its gate at vdd passes a 1 only up to
	// vdd - Vt(Vout), and with the body effect Vt > Vtn: below 1.8 - 0.45.
	if !ok || v >= 1.8-0.45 || v < 0.9 {
		t.Errorf("st volts %v, want a degraded level below vdd - vtn = 1.35 V", st["volts"])
	}
	if st["state"] != "H" {
		t.Errorf("st state %v, want H (degraded 1)", st["state"])
	}
}

func TestSummarizeSkipsDontCare(t *testing.T) {
	// "-" checks nothing (switchsim/FORMATS.md), so it is neither counted nor listed.
	s, err := session.Open("testdata/opsel.sw", "testdata/opsel_dash.steps", session.Options{Mode: switchsim.Ideal})
	if err != nil {
		t.Fatal(err)
	}
	s.RunToEnd(false)
	r := session.NewReport(io.Discard, s, session.Text)
	for _, e := range s.History()[1:] {
		r.Add(e, s)
	}
	m, _ := r.Close()
	if m.Steps != 2 || m.Checks != 3 || m.Failed != 0 {
		t.Errorf("summary %+v, want 2 steps, 3 checks, 0 failed", m)
	}
	lines := jsonLines(t, s)
	if n := len(lines[1]["checks"].([]any)); n != 1 {
		t.Errorf("step 1 lists %d checks, want 1 (the - column is no check)", n)
	}
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
