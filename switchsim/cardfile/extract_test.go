package cardfile_test

import (
	"fmt"
	"railyard/switchsim/internal/simtest"
	"strings"
	"testing"

	sw "railyard/switchsim"
	"railyard/switchsim/cardfile"
)

// A two-input transmission-gate selector as layout extraction writes it
// (the style is common practice of extracted netlists; names, values and
// scenario invented): machine-made node names with # and $, device models
// wrapped as subcircuits the deck does not define (X instances, drain gate
// source bulk), body pins VPB/VNB that reach only bulk terminals, sizes in
// units of a scale given elsewhere (w=360000u), and many parasitic
// capacitors, some of them coupling two nodes.
func extractedSelector(scaleCard string, w, wp, l string, caps int) string {
	var b strings.Builder
	b.WriteString("* opsel_x1 extracted netlist\n")
	b.WriteString(scaleCard)
	b.WriteString(".subckt opsel_x1 REG IMM SEL OPND VGND VNB VPB VPWR\n")
	dev := func(i int, d, g, s, bulk, model, wd string) {
		fmt.Fprintf(&b, "X%d %s %s %s %s %s w=%s l=%s\n+ ad=1.092e+11p pd=1.36e+06u as=1.092e+11p ps=1.36e+06u\n", i, d, g, s, bulk, model, wd, l)
	}
	// sel inverter
	dev(0, "a_27_47#", "SEL", "VGND", "VNB", "cellkit_pr__nfet_01v8", w)
	dev(1, "a_27_47#", "SEL", "VPWR", "VPB", "cellkit_pr__pfet_01v8_hvt", wp)
	// the register leg: on while SEL=0
	dev(2, "REG", "a_27_47#", "a_193_47#", "VNB", "cellkit_pr__nfet_01v8", w)
	dev(3, "REG", "SEL", "a_193_47#", "VPB", "cellkit_pr__pfet_01v8_hvt", wp)
	// the immediate leg: on while SEL=1
	dev(4, "IMM", "SEL", "a_193_47#", "VNB", "cellkit_pr__nfet_01v8", w)
	dev(5, "IMM", "a_27_47#", "a_193_47#", "VPB", "cellkit_pr__pfet_01v8_hvt", wp)
	// output buffer
	dev(6, "OPND", "a_193_47#", "VGND", "VNB", "cellkit_pr__nfet_01v8", w)
	dev(7, "OPND", "a_193_47#", "VPWR", "VPB", "cellkit_pr__pfet_01v8_hvt", wp)
	nodes := []string{"a_27_47#", "a_193_47#", "OPND", "SEL", "REG", "IMM"}
	for i := 0; i < caps; i++ {
		a := nodes[i%len(nodes)]
		to := "VGND"
		if i%3 == 2 {
			to = nodes[(i+1)%len(nodes)]
		}
		fmt.Fprintf(&b, "C%d %s %s %.4gf $ **FLOATING\n", 100+i, a, to, 0.05+0.001*float64(i))
	}
	b.WriteString(".ends\n")
	return b.String()
}

func TestExtractedSelector(t *testing.T) {
	for _, c := range []struct {
		name, scale, w, wp, l string
		scaledNote            bool
	}{
		{"huge sizes, scale elsewhere", "", "360000u", "3600000u", "150000u", true},
		{"tiny scale", ".option scale=5n\n", "72", "720", "30", false},
		{"metres", "", "0.36u", "3.6u", "0.15u", false},
	} {
		src := extractedSelector(c.scale, c.w, c.wp, c.l, 300)
		d := read(t, src, cardfile.Options{Inputs: []string{"REG", "IMM", "SEL"}})
		nl := d.Netlist
		n := notes(d)
		if got := strings.Contains(n, "sizes look scaled"); got != c.scaledNote {
			t.Errorf("%s: scaled-size note %v, want %v:\n%s", c.name, got, c.scaledNote, n)
		}
		if strings.Count(n, "sizes look scaled") > 1 {
			t.Errorf("%s: the scaled-size note is given more than once", c.name)
		}
		for _, pin := range []string{"VNB", "VPB"} {
			if !strings.Contains(n, "port "+pin+" connects to no device") {
				t.Errorf("%s: bulk-only port %s not noted:\n%s", c.name, pin, n)
			}
		}
		if nl.NodeName(nl.Power()) != "vpwr" || nl.NodeName(nl.Ground()) != "vgnd" {
			t.Errorf("%s: rails %s %s, want vpwr and vgnd", c.name, nl.NodeName(nl.Power()), nl.NodeName(nl.Ground()))
		}
		// Sizes keep their ratios whatever their scale: each pMOS ten times as wide as its nMOS here.
		n0, p0 := device(t, nl, "x0"), device(t, nl, "x1")
		if !near(p0.W/n0.W, 10) || !near(n0.W/n0.L, 2.4) {
			t.Errorf("%s: sizes %g/%g and %g: ratios lost", c.name, n0.W, n0.L, p0.W)
		}
		// Parasitics: 300 capacitors on six nodes, coupling ones counted on both.
		total := 0.0
		for i := 0; i < nl.NumNodes(); i++ {
			if i != nl.Power() && i != nl.Ground() {
				total += nl.NodeCap(i)
			}
		}
		want := 0.0
		for i := 0; i < 300; i++ {
			v := (0.05 + 0.001*float64(i)) * 1e-15
			want += v
			if i%3 == 2 {
				want += v
			}
		}
		if !near(total, want) {
			t.Errorf("%s: total node capacitance %g, want %g", c.name, total, want)
		}
		// And it selects, in both modes.
		for _, mode := range modes {
			s := simtest.New(t, nl, mode)
			for _, st := range []struct {
				apply string
				opnd  sw.State
			}{{"SEL=0 REG=1 IMM=0", sw.State0}, {"SEL=0 REG=0 IMM=1", sw.State1}, {"SEL=1 REG=0 IMM=1", sw.State0}, {"SEL=1 REG=1 IMM=0", sw.State1}} {
				s.Apply(st.apply)
				if got := s.Node("OPND").State; got != st.opnd {
					t.Errorf("%s, %s, %s: OPND %s, want %s (an inverting selector)", c.name, mode, st.apply, got, st.opnd)
				}
			}
		}
	}
}

// A flat extracted netlist of many stages stays linear: a chain of 2000
// inverters with a parasitic on every node reads, and its end follows its
// start.
func TestExtractedChain(t *testing.T) {
	var b strings.Builder
	b.WriteString("* chain\n.subckt chain in out vdd vss\n")
	prev := "in"
	for i := 0; i < 2000; i++ {
		next := fmt.Sprintf("n_%d#", i)
		if i == 1999 {
			next = "out"
		}
		fmt.Fprintf(&b, "MM%d %s %s vss vss nmos_lv w=0.36u l=0.18u\nMP%d %s %s vdd vdd pmos_lv w=0.72u l=0.18u\nC%d %s vss 0.8f\n", i, next, prev, i, next, prev, i, next)
		prev = next
	}
	b.WriteString(".ends\n")
	d := read(t, b.String(), cardfile.Options{Inputs: []string{"in"}})
	s := simtest.New(t, d.Netlist, sw.Ideal)
	s.Apply("in=1")
	if got := s.Node("out").State; got != sw.State1 {
		t.Errorf("out %s after an even number of inverters, want 1", got)
	}
}
