package switchsim_test

// The gallery: cells written in the shape of extracted standard-cell
// netlists (testdata/gallery/*.sw: flat, machine-made names, many small
// devices, clocks buffered inside the cell), each checked against its
// function in both modes on every single-input step from every state it
// can reach, found by a breadth-first search from the settled all-0 inputs.
// The functions are the textbook definitions (common practice): the full
// adder and XOR truth tables, the edge-triggered flip-flop, the level-
// sensitive latch, the clock gate, the selector.

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	sw "railyard/switchsim"
	"railyard/switchsim/netfile"
)

// tri is a model value: 0, 1, or unknown (never written).
type tri int8

const (
	t0 tri = iota
	t1
	tU
)

func triOf(b bool) tri {
	if b {
		return t1
	}
	return t0
}

func (t tri) value() sw.Value { return [...]sw.Value{sw.V0, sw.V1, sw.VX}[t] }

// cellModel is a cell's function: from its state bits and the present
// inputs (by name, 0 or 1) the new state bits and the outputs (by name).
// Unknown state bits are unwritten state.
type cellModel struct {
	state   int // number of state bits
	outputs []string
	step    func(st []tri, in map[string]tri) ([]tri, map[string]tri)
}

// latchBit is a level-sensitive latch bit: open, it takes d; closed, it holds.
func latchBit(open bool, d, old tri) tri {
	if open {
		return d
	}
	return old
}

func and3(a, b tri) tri {
	switch {
	case a == t0 || b == t0:
		return t0
	case a == t1 && b == t1:
		return t1
	}
	return tU
}

func masterSlave(rise bool, d func(in map[string]tri) tri) cellModel {
	return cellModel{state: 2, outputs: []string{"Q"}, step: func(st []tri, in map[string]tri) ([]tri, map[string]tri) {
		clk := in["CLK"] == t1
		m := latchBit(clk != rise, d(in), st[0]) // the master is open while CLK is at the level before the edge
		s := latchBit(clk == rise, m, st[1])
		return []tri{m, s}, map[string]tri{"Q": s}
	}}
}

var galleryModels = map[string]cellModel{
	"dff_rise":      masterSlave(true, func(in map[string]tri) tri { return in["D"] }),
	"dff_rise_tinv": masterSlave(true, func(in map[string]tri) tri { return in["D"] }),
	"dff_fall":      masterSlave(false, func(in map[string]tri) tri { return in["D"] }),
	"sdff_rise": masterSlave(true, func(in map[string]tri) tri {
		if in["SE"] == t1 {
			return in["SI"]
		}
		return in["D"]
	}),
	// Reset and set act on both latches whatever the clock; reset wins.
	"dff_rise_rs": {state: 2, outputs: []string{"Q"}, step: func(st []tri, in map[string]tri) ([]tri, map[string]tri) {
		r, s := in["RN"] == t0, in["SN"] == t0
		clk := in["CLK"] == t1
		m := latchBit(!clk, in["D"], st[0])
		q := latchBit(clk, m, st[1])
		switch {
		case r:
			m, q = t0, t0
		case s:
			m, q = t1, t1
		}
		return []tri{m, q}, map[string]tri{"Q": q}
	}},
	"dlatch_n": {state: 1, outputs: []string{"Q"}, step: func(st []tri, in map[string]tri) ([]tri, map[string]tri) {
		q := latchBit(in["GN"] == t0, in["D"], st[0])
		return []tri{q}, map[string]tri{"Q": q}
	}},
	"clkgate": {state: 1, outputs: []string{"GCLK"}, step: func(st []tri, in map[string]tri) ([]tri, map[string]tri) {
		en := latchBit(in["CLK"] == t0, in["EN"], st[0])
		return []tri{en}, map[string]tri{"GCLK": and3(in["CLK"], en)}
	}},
	"fa_tg": {outputs: []string{"SUM", "COUT"}, step: func(_ []tri, in map[string]tri) ([]tri, map[string]tri) {
		a, b, c := in["A"] == t1, in["B"] == t1, in["CI"] == t1
		return nil, map[string]tri{"SUM": triOf(a != b != c), "COUT": triOf(a && b || a && c || b && c)}
	}},
	"xor_xnor": {outputs: []string{"X", "XN"}, step: func(_ []tri, in map[string]tri) ([]tri, map[string]tri) {
		x := in["A"] != in["B"]
		return nil, map[string]tri{"X": triOf(x), "XN": triOf(!x)}
	}},
	"mux4_dec": {outputs: []string{"Y"}, step: func(_ []tri, in map[string]tri) ([]tri, map[string]tri) {
		sel := 0
		if in["S1"] == t1 {
			sel += 2
		}
		if in["S0"] == t1 {
			sel++
		}
		return nil, map[string]tri{"Y": in[fmt.Sprintf("D%d", sel)]}
	}},
}

func readGallery(t testing.TB, path string) *sw.Netlist {
	t.Helper()
	src, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	d, err := netfile.Read(path, src)
	if err != nil {
		t.Fatal(err)
	}
	return d.Netlist
}

// galleryState is one reachable state: the Sim's, the model's, and the
// inputs that reach it from the start.
type galleryState struct {
	snap  *sw.Snapshot
	in    map[string]tri
	model []tri
	path  []string
}

func stateKey(s *sw.Sim, in map[string]tri, model []tri) string {
	var b strings.Builder
	nl := s.Netlist()
	for _, n := range nl.Inputs() {
		b.WriteString(fmt.Sprint(in[nl.NodeName(n)]))
	}
	b.WriteByte('|')
	for n := 0; n < nl.NumNodes(); n++ {
		b.WriteString(s.Node(n).Value.String())
	}
	b.WriteByte('|')
	for _, m := range model {
		b.WriteString(fmt.Sprint(m))
	}
	return b.String()
}

// checkGallery searches every state the cell reaches by single-input
// steps and checks each step against the model; it returns the number of
// states and steps.
func checkGallery(t *testing.T, nl *sw.Netlist, model cellModel, mode sw.Mode) (states, steps int) {
	s := sw.NewSim(nl, sw.Options{Mode: mode})
	in := map[string]tri{}
	for _, n := range nl.Inputs() {
		in[nl.NodeName(n)] = t0
		s.SetInput(n, sw.Drive0)
	}
	s.Settle()
	st := make([]tri, model.state)
	for i := range st {
		st[i] = tU
	}
	st, _ = model.step(st, in)
	seen := map[string]bool{stateKey(s, in, st): true}
	queue := []galleryState{{s.Snapshot(), in, st, nil}}
	bad := 0
	for len(queue) > 0 && bad < 3 {
		cur := queue[0]
		queue = queue[1:]
		for _, n := range nl.Inputs() {
			name := nl.NodeName(n)
			s.Restore(cur.snap)
			next := map[string]tri{}
			for k, v := range cur.in {
				next[k] = v
			}
			next[name] = 1 - cur.in[name]
			s.SetInput(n, sw.Drive(next[name]))
			r := s.Settle()
			steps++
			mst, want := model.step(cur.model, next)
			path := append(append([]string(nil), cur.path...), fmt.Sprintf("%s=%d", name, next[name]))
			fail := func(f string, a ...any) {
				bad++
				t.Errorf("%s, after %s: %s", mode, strings.Join(path, " "), fmt.Sprintf(f, a...))
			}
			for _, w := range r.Warnings {
				if w.Kind == sw.WarnOscillation || w.Kind == sw.WarnRace {
					fail("%s: %s", w.Kind, s.Message(w))
				}
			}
			if r.Rounds > sw.DefaultRoundLimit(nl)+1 {
				fail("%d rounds", r.Rounds)
			}
			for _, o := range model.outputs {
				on, _ := nl.Lookup(o)
				got := s.Node(on)
				if w := want[o]; w != tU && got.Value != w.value() {
					fail("%s = %s, the function says %s", o, stateString(got), w.value())
				}
			}
			written := true
			for _, b := range mst {
				written = written && b != tU
			}
			if written { // no X outside genuinely unwritten state
				for m := 0; m < nl.NumNodes(); m++ {
					// A floating X is charge nothing has written yet (a
					// diffusion node between two devices that stayed off).
					if x := s.Node(m); x.Value == sw.VX && !x.Floating {
						fail("%s is X with every state bit written", nl.NodeName(m))
						break
					}
				}
			}
			if key := stateKey(s, next, mst); !seen[key] {
				seen[key] = true
				queue = append(queue, galleryState{s.Snapshot(), next, mst, path})
			}
		}
	}
	return len(seen), steps
}

func TestGalleryCells(t *testing.T) {
	files, err := filepath.Glob("testdata/gallery/*.sw")
	if err != nil || len(files) < 10 {
		t.Fatalf("gallery: %d files (%v)", len(files), err)
	}
	for _, f := range files {
		name := strings.TrimSuffix(filepath.Base(f), ".sw")
		model, ok := galleryModels[name]
		if !ok {
			t.Errorf("%s has no model", f)
			continue
		}
		t.Run(name, func(t *testing.T) {
			nl := readGallery(t, f)
			for _, mode := range []sw.Mode{sw.Ideal, sw.Physical} {
				states, steps := checkGallery(t, nl, model, mode)
				t.Logf("%s: %d states, %d steps", mode, states, steps)
			}
		})
	}
}
