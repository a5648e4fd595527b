package reach

import (
	"context"
	"testing"

	"railyard/switchsim"
	"railyard/switchsim/gen"
)

// benchSearch reports states per second of the search (and the memory of
// the state table per state) on one design.
func benchSearch(b *testing.B, nl *switchsim.Netlist, opt Options) {
	b.ReportAllocs()
	var states, transitions int
	var table int64
	for i := 0; i < b.N; i++ {
		r, err := Search(context.Background(), nl, opt)
		if err != nil {
			b.Fatal(err)
		}
		states, transitions, table = r.States, r.Transitions, r.TableBytes
	}
	b.ReportMetric(float64(table)/float64(states), "table-bytes/state")
	sec := b.Elapsed().Seconds()
	b.ReportMetric(float64(states*b.N)/sec, "states/s")
	b.ReportMetric(float64(transitions*b.N)/sec, "transitions/s")
	b.ReportMetric(float64(states), "states")
}

// BenchmarkSearchFlipFlop: demo:flipflop, every reachable state, single
// flips and with pairs, in each mode.
func BenchmarkSearchFlipFlop(b *testing.B) {
	nl := design(b, "demo:flipflop", "")
	for _, m := range []switchsim.Mode{switchsim.Ideal, switchsim.Physical} {
		for _, pairs := range []bool{false, true} {
			name := m.String() + "/singles"
			if pairs {
				name = m.String() + "/pairs"
			}
			b.Run(name, func(b *testing.B) { benchSearch(b, nl, Options{Mode: m, Pairs: pairs}) })
			b.Run(name+"/noglitches", func(b *testing.B) { benchSearch(b, nl, Options{Mode: m, Pairs: pairs, NoGlitches: true}) })
		}
	}
}

// BenchmarkSearch16Inputs: a generated datapath block with 16 inputs
// (gen.Sized(47): three 4:1 operand selector slices, each into a
// master-slave flip-flop; select, clock and clock-bar inputs shared), to a
// cap of 100,000 states.
func BenchmarkSearch16Inputs(b *testing.B) {
	nl, err := gen.Sized(47).Compile()
	if err != nil {
		b.Fatal(err)
	}
	if k := len(nl.Inputs()); k != 16 {
		b.Fatalf("%d inputs", k)
	}
	for _, m := range []switchsim.Mode{switchsim.Ideal, switchsim.Physical} {
		b.Run(m.String(), func(b *testing.B) { benchSearch(b, nl, Options{Mode: m, MaxStates: 100_000}) })
		b.Run(m.String()+"/noglitches", func(b *testing.B) {
			benchSearch(b, nl, Options{Mode: m, MaxStates: 100_000, NoGlitches: true})
		})
	}
}
