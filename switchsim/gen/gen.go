// Package gen builds networks for switchsim's benchmarks and tests: a
// transmission-gate mux tree, a chain of master-slave flip-flops, an
// inverter chain, a datapath block of a chosen size, and random networks.
//
// Every generator returns a *switchsim.Builder, so the caller compiles it
// (and may add to it first). The arguments are trusted code, not user
// input: a size below the documented minimum is raised to it.
package gen

import (
	"fmt"

	"railyard/switchsim"
)

// must turns a Builder error into a panic: the generators only name nodes
// and devices they made up, so an error here is a bug in this package.
func must(err error) {
	if err != nil {
		panic("gen: " + err.Error())
	}
}

// inverter adds a CMOS inverter NAME.p / NAME.n from in to out.
func inverter(b *switchsim.Builder, name, in, out string) {
	must(b.PMOS(name+".p", in, "vdd", out, switchsim.DeviceOpts{}))
	must(b.NMOS(name+".n", in, out, "gnd", switchsim.DeviceOpts{}))
}

// tgate adds a transmission gate that conducts when on is 1 (and onb 0).
func tgate(b *switchsim.Builder, name, on, onb, x, y string) {
	must(b.TGate(name, on, onb, x, y, 0, 0, 0, switchsim.HighZ))
}

// MuxTree returns a 2^k:1 selector built as a binary tree of transmission
// gates. Inputs: data d0 .. d(2^k-1) and select lines s0 .. s(k-1); s0
// chooses at the leaves, s(k-1) at the root. Each select line's complement
// sI_b comes from an inverter inside the design (not an input), so
// toggling one select line is one SetInput, and for one round after it
// both gates of that level conduct, as in silicon. The output is y; level
// L's intermediate nodes are mL_J. k below 1 is taken as 1.
//
// Size: 2^(k+1) - 2 transmission gates (twice as many devices) plus 2k
// inverter devices; 2^(k+1) + 2k + 1 nodes with the rails.
func MuxTree(k int) *switchsim.Builder {
	k = max(k, 1)
	b := switchsim.NewBuilder()
	b.SetName(fmt.Sprintf("mux%d", 1<<k), fmt.Sprintf("%d:1 transmission-gate selector tree", 1<<k))
	n := 1 << k
	for i := 0; i < n; i++ {
		must(b.Input(fmt.Sprintf("d%d", i)))
	}
	for l := 0; l < k; l++ {
		s := fmt.Sprintf("s%d", l)
		must(b.Input(s))
		inverter(b, s+"_inv", s, s+"_b")
	}
	prev := func(i int) string { return fmt.Sprintf("d%d", i) }
	for l := 0; l < k; l++ {
		s, sb := fmt.Sprintf("s%d", l), fmt.Sprintf("s%d_b", l)
		width := n >> (l + 1)
		names := make([]string, width)
		for j := 0; j < width; j++ {
			out := fmt.Sprintf("m%d_%d", l+1, j)
			if l == k-1 {
				out = "y"
			}
			names[j] = out
			// the even input passes for select 0, the odd one for select 1
			tgate(b, fmt.Sprintf("t%d_%d_0", l, j), sb, s, prev(2*j), out)
			tgate(b, fmt.Sprintf("t%d_%d_1", l, j), s, sb, prev(2*j+1), out)
		}
		prev = func(i int) string { return names[i] }
	}
	must(b.Output("y"))
	return b
}

// flipFlop adds master-slave flip-flop p (prefix p) from d to q, clocked by
// clk/clkb: the master is transparent while clk is 0 and holds through its
// gated feedback while clk is 1; the slave the other way round, so q takes
// d on the rising edge of clk. 16 devices, 6 nodes (p.m p.mb p.mf p.s p.sf q).
func flipFlop(b *switchsim.Builder, p, d, q string) {
	m, mb, mf, s, sf := p+".m", p+".mb", p+".mf", p+".s", p+".sf"
	tgate(b, p+".t_in", "clkb", "clk", d, m) // master input: open while clk = 0
	inverter(b, p+".i_m", m, mb)
	inverter(b, p+".i_mf", mb, mf)
	tgate(b, p+".t_mf", "clk", "clkb", mf, m) // master feedback: closes the loop while clk = 1
	tgate(b, p+".t_s", "clk", "clkb", mb, s)  // slave input: open while clk = 1
	inverter(b, p+".i_s", s, q)
	inverter(b, p+".i_sf", q, sf)
	tgate(b, p+".t_sf", "clkb", "clk", sf, s) // slave feedback: closes the loop while clk = 0
}

func ffChain(n int, preset bool) *switchsim.Builder {
	n = max(n, 1)
	b := switchsim.NewBuilder()
	b.SetName(fmt.Sprintf("ffchain%d", n), fmt.Sprintf("%d master-slave flip-flops in a shift chain", n))
	for _, in := range []string{"d", "clk", "clkb"} {
		must(b.Input(in))
	}
	if preset {
		must(b.Input("pre"))
	}
	d := "d"
	for i := 0; i < n; i++ {
		q := fmt.Sprintf("q%d", i)
		p := fmt.Sprintf("ff%d", i)
		flipFlop(b, p, d, q)
		if preset {
			// A supply-strength device from a rail overrides the strong
			// feedback; with clk = 1 the slave copies the master, so q_i = i mod 2.
			rail := "gnd"
			if i%2 == 1 {
				rail = "vdd"
			}
			must(b.NMOS(p+".pre", "pre", p+".m", rail, switchsim.DeviceOpts{Strength: switchsim.Supply}))
		}
		d = q
	}
	must(b.Output(d))
	return b
}

// FlipFlopChain returns n master-slave flip-flops (transmission gates and
// inverters, see flipFlop) in a shift chain: input d feeds ff0, and each
// flip-flop's output qI feeds the next one's D. The clock clk and its
// complement clkb are both inputs; q(n-1) is the output. 16 n devices,
// 6 n + 5 nodes with the rails. n below 1 is taken as 1.
func FlipFlopChain(n int) *switchsim.Builder { return ffChain(n, false) }

// FlipFlopChainPreset is FlipFlopChain with one more input, pre, and one
// supply-strength nMOS per flip-flop that, while pre is 1 and clk is 1,
// loads the alternating pattern q_i = i mod 2. From that pattern every
// clock edge switches every flip-flop (each one takes its neighbour's
// opposite value); filling it through d would take n clock cycles.
// 17 n devices.
func FlipFlopChainPreset(n int) *switchsim.Builder { return ffChain(n, true) }

// InverterChain returns n CMOS inverters in series from input in through
// x1 .. xn; xn is the output. 2 n devices, n + 3 nodes. n below 1 is 1.
func InverterChain(n int) *switchsim.Builder {
	n = max(n, 1)
	b := switchsim.NewBuilder()
	b.SetName(fmt.Sprintf("invchain%d", n), fmt.Sprintf("%d inverters in series", n))
	must(b.Input("in"))
	prev := "in"
	for i := 1; i <= n; i++ {
		x := fmt.Sprintf("x%d", i)
		inverter(b, fmt.Sprintf("inv%d", i), prev, x)
		prev = x
	}
	must(b.Output(prev))
	return b
}

// Sized returns a datapath block of exactly nodes nodes (rails included;
// at least 21): operand selector slices, each a 4:1 transmission-gate
// selector of operands aJ bJ cJ dJ by sel0/sel1 feeding a pipeline
// flip-flop that drives qJ, and, to make up the count, an inverter chain
// (buffer stages bufI) after the last slice. The explorer's render
// benchmark uses it at 200 nodes.
func Sized(nodes int) *switchsim.Builder {
	const shared, perSlice = 8, 13 // vdd gnd sel0 sel1 sel0_b sel1_b clk clkb; 4 operands + 2 + 1 + 6
	nodes = max(nodes, shared+perSlice)
	slices := (nodes - shared) / perSlice
	b := switchsim.NewBuilder()
	b.SetName(fmt.Sprintf("datapath%d", nodes), "operand selector slices with a pipeline latch")
	for _, in := range []string{"sel0", "sel1", "clk", "clkb"} {
		must(b.Input(in))
	}
	inverter(b, "sel0_inv", "sel0", "sel0_b")
	inverter(b, "sel1_inv", "sel1", "sel1_b")
	last := ""
	for j := 0; j < slices; j++ {
		ops := make([]string, 4)
		for i, o := range []string{"a", "b", "c", "d"} {
			ops[i] = fmt.Sprintf("%s%d", o, j)
			must(b.Input(ops[i]))
		}
		p := fmt.Sprintf("sl%d", j)
		lo, hi, sel := p+".lo", p+".hi", p+".sel"
		tgate(b, p+".t_a", "sel0_b", "sel0", ops[0], lo)
		tgate(b, p+".t_b", "sel0", "sel0_b", ops[1], lo)
		tgate(b, p+".t_c", "sel0_b", "sel0", ops[2], hi)
		tgate(b, p+".t_d", "sel0", "sel0_b", ops[3], hi)
		tgate(b, p+".t_lo", "sel1_b", "sel1", lo, sel)
		tgate(b, p+".t_hi", "sel1", "sel1_b", hi, sel)
		last = fmt.Sprintf("q%d", j)
		flipFlop(b, p+".ff", sel, last)
		must(b.Output(last))
	}
	for i := 1; i <= nodes-shared-slices*perSlice; i++ {
		x := fmt.Sprintf("buf%d", i)
		inverter(b, fmt.Sprintf("buf%d_inv", i), last, x)
		last = x
	}
	return b
}
