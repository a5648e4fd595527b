package switchsim_test

import (
	"fmt"
	"testing"

	sw "railyard/switchsim"
	"railyard/switchsim/gen"
)

// Physical mode's settle cost against ideal mode's on the same networks
// (target: within 2x). Each iteration applies one input change and settles.
//
//	go test -run - -bench PhysicalVsIdeal ./switchsim/

// physPassMux is an nMOS-only selector tree (no pMOS halves): every level drops
// a threshold, so each settle runs the level search. Output buffered.
func physPassMux(k int) *sw.Builder {
	b := sw.NewBuilder()
	n := 1 << k
	for i := 0; i < n; i++ {
		b.Input(fmt.Sprintf("d%d", i))
	}
	prev := func(i int) string { return fmt.Sprintf("d%d", i) }
	for l := 0; l < k; l++ {
		s, sb := fmt.Sprintf("s%d", l), fmt.Sprintf("s%d_b", l)
		b.Input(s)
		b.PMOS(s+".p", s, "vdd", sb, sw.DeviceOpts{})
		b.NMOS(s+".n", s, sb, "gnd", sw.DeviceOpts{})
		names := make([]string, n>>(l+1))
		for j := range names {
			names[j] = fmt.Sprintf("m%d_%d", l+1, j)
			b.NMOS(fmt.Sprintf("p%d_%d_0", l, j), sb, prev(2*j), names[j], sw.DeviceOpts{})
			b.NMOS(fmt.Sprintf("p%d_%d_1", l, j), s, prev(2*j+1), names[j], sw.DeviceOpts{})
		}
		prev = func(i int) string { return names[i] }
	}
	b.PMOS("buf.p", prev(0), "vdd", "y", sw.DeviceOpts{})
	b.NMOS("buf.n", prev(0), "y", "gnd", sw.DeviceOpts{})
	return b
}

// physRatioedChain is n pseudo-nMOS inverters (a pull-up against an nMOS) in
// series: every other stage is a contested divider after each change.
func physRatioedChain(n int) *sw.Builder {
	b := sw.NewBuilder()
	b.Input("in")
	prev := "in"
	for i := 0; i < n; i++ {
		x := fmt.Sprintf("x%d", i)
		b.Pull("pu"+x, x, true, sw.HighZ)
		b.NMOS("pd"+x, prev, x, "gnd", sw.DeviceOpts{})
		prev = x
	}
	return b
}

type physBenchNet struct {
	name  string
	build func() *sw.Builder
	setup map[string]sw.Drive // before the first Settle; inputs not named get i mod 2
	// step applies one change: the inputs to flip (clock edges flip both clk
	// and clkb together)
	flip []string
}

// physBenchNets mirrors the engine's benchmark networks (bench_test.go:
// mux tree toggling s0 over alternating data, preset flip-flop chain clocked
// edge by edge, inverter chain) and adds networks that exercise physical
// mode's own work: an nMOS-only selector (every path degrades) and a ratioed
// chain (a contested divider in every other stage). A select toggle makes
// both gates of a tree level conduct for one round, a contest at every node
// of that level; a data toggle (the _data cases) changes one path.
func physBenchNets() []physBenchNet {
	muxSel := map[string]sw.Drive{}
	for l := 0; l < 8; l++ {
		muxSel[fmt.Sprintf("s%d", l)] = sw.Drive0
	}
	return []physBenchNet{
		{"mux256_tgate", func() *sw.Builder { return gen.MuxTree(8) }, muxSel, []string{"s0"}},
		{"mux256_tgate_data", func() *sw.Builder { return gen.MuxTree(8) }, muxSel, []string{"d0"}},
		{"mux64_nmos", func() *sw.Builder { return physPassMux(6) }, map[string]sw.Drive{}, []string{"s0"}},
		{"mux64_nmos_data", func() *sw.Builder { return physPassMux(6) }, map[string]sw.Drive{}, []string{"d0", "d1"}},
		{"ffchain59_preset", func() *sw.Builder { return gen.FlipFlopChainPreset(59) },
			map[string]sw.Drive{"clk": sw.Drive1, "clkb": sw.Drive0, "d": sw.Drive0, "pre": sw.Drive0}, []string{"clk", "clkb", "d"}},
		{"invchain1000", func() *sw.Builder { return gen.InverterChain(1000) }, map[string]sw.Drive{}, []string{"in"}},
		{"datapath200", func() *sw.Builder { return gen.Sized(200) }, map[string]sw.Drive{"clk": sw.Drive1, "clkb": sw.Drive0},
			[]string{"sel0", "clk", "clkb"}},
		{"ratioed64", func() *sw.Builder { return physRatioedChain(64) }, map[string]sw.Drive{}, []string{"in"}},
	}
}

// physBenchSim builds a settled Sim of bn in mode m and returns it with the
// step function.
func physBenchSim(tb testing.TB, bn physBenchNet, nl *sw.Netlist, m sw.Mode) (*sw.Sim, func()) {
	s := sw.NewSim(nl, sw.Options{Mode: m})
	for i, n := range nl.Inputs() {
		d, ok := bn.setup[nl.NodeName(n)]
		if !ok {
			d = sw.Drive(i & 1)
		}
		s.SetInput(n, d)
	}
	s.Settle()
	flip := make([]int, len(bn.flip))
	for i, name := range bn.flip {
		var ok bool
		if flip[i], ok = nl.Lookup(name); !ok {
			tb.Fatalf("%s: no input %s", bn.name, name)
		}
	}
	step := func() {
		for _, n := range flip {
			s.SetInput(n, 1-s.InputDrive(n))
		}
		s.Settle()
	}
	for i := 0; i < 4; i++ {
		step()
	}
	return s, step
}

func BenchmarkPhysicalVsIdeal(b *testing.B) {
	for _, bn := range physBenchNets() {
		nl, err := bn.build().Compile()
		if err != nil {
			b.Fatal(err)
		}
		for _, m := range []sw.Mode{sw.Ideal, sw.Physical} {
			b.Run(bn.name+"/"+m.String(), func(b *testing.B) {
				_, step := physBenchSim(b, bn, nl, m)
				b.ReportAllocs()
				b.ResetTimer()
				for i := 0; i < b.N; i++ {
					step()
				}
			})
		}
	}
}
