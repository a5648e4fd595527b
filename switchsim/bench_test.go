package switchsim_test

// Benchmarks on generated networks (switchsim/gen). Each reports, besides
// ns/op (one step: an input toggle and its settle) and allocs/op:
//
//	ns/device-step   one step's time per device
//	ns/device-full   a warm full settle (one that re-solves every group) per device
//	ns/device-first  the first Settle of a fresh Sim (every group solved, result slices still growing)
//	bfs-ns           Netlist.BreadthFirst over all nodes: the floor
//	full/bfs         the warm full settle against that floor (target: <= 3)
//	B/device         heap growth over Compile + NewSim, per device (target: <= 100)
//	B/device-warm    the same, measured after the first settle and the warm-up steps
//
// Targets are reported, never asserted. Run with
//
//	go test -run '^$' -bench . -benchtime 3x ./switchsim/
//
// The 1M-device flip-flop chain is left out unless -bench.max allows it
// (-bench.max 1100000). With -bench.full the timed loop runs the full
// settle instead of the step, so that a CPU profile shows where it goes.

import (
	"flag"
	"fmt"
	"runtime"
	"testing"
	"time"

	sw "railyard/switchsim"
	"railyard/switchsim/gen"
)

var (
	genBenchMax  = flag.Int("bench.max", 300000, "largest network (devices) the benchmarks build")
	genBenchFull = flag.Bool("bench.full", false, "time the full settle in the loop, not the step (for profiles)")
)

type genBench struct {
	races  sw.RaceMode // when race analysis runs (the zero value: when needed)
	build  func() *sw.Builder
	setup  func(b *testing.B, s *sw.Sim)               // drives before the first Settle
	after  func(b *testing.B, s *sw.Sim)               // once after the first Settle
	toggle func(s *sw.Sim, i int) *sw.Result           // one step
	full   func(s *sw.Sim, i int) *sw.Result           // re-solves every group; nil: the step does
	check  func(b *testing.B, s *sw.Sim, r *sw.Result) // after warm-up: the step did its work
}

func genInput(b *testing.B, s *sw.Sim, name string) int {
	n, ok := s.Netlist().Lookup(name)
	if !ok {
		b.Fatalf("no input %s", name)
	}
	return n
}

func heapNow() uint64 {
	runtime.GC()
	var m runtime.MemStats
	runtime.ReadMemStats(&m)
	return m.HeapAlloc
}

// minDuration runs f reps times and returns the shortest run.
func minDuration(reps int, f func() time.Duration) time.Duration {
	best := time.Duration(1<<63 - 1)
	for i := 0; i < reps; i++ {
		best = min(best, f())
	}
	return best
}

func runGenBench(b *testing.B, bn genBench) {
	bld := bn.build()
	h0 := heapNow()
	nl, err := bld.Compile()
	if err != nil {
		b.Fatal(err)
	}
	opt := sw.Options{Mode: sw.Ideal, Races: bn.races}
	s := sw.NewSim(nl, opt)
	h1 := heapNow()
	devs := float64(nl.NumDevices())
	reps := max(1, min(20, int(2e6/devs)))

	// The first Settle of a fresh Sim solves every group.
	first := minDuration(reps, func() time.Duration {
		f := sw.NewSim(nl, opt)
		bn.setup(b, f)
		t0 := time.Now()
		f.Settle()
		return time.Since(t0)
	})
	bn.setup(b, s)
	s.Settle()
	if bn.after != nil {
		bn.after(b, s)
	}

	// The floor: a breadth-first traversal over the same compiled arrays.
	nn := nl.NumNodes()
	seeds := make([]int32, nn)
	for i := range seeds {
		seeds[i] = int32(i)
	}
	seen, queue := make([]bool, nn), make([]int32, 0, nn)
	bfs := minDuration(reps, func() time.Duration {
		clear(seen)
		t0 := time.Now()
		if got := nl.BreadthFirst(seeds, seen, queue); got != nn {
			b.Fatalf("BreadthFirst visited %d of %d nodes", got, nn)
		}
		return time.Since(t0)
	})

	var r *sw.Result
	for i := 0; i < 2; i++ { // warm: scratch slices reach their size
		r = bn.toggle(s, i)
	}
	bn.check(b, s, r)
	fullOp := bn.full
	if fullOp == nil {
		fullOp = bn.toggle
	}
	fi := 0
	full := minDuration(reps+reps%2, func() time.Duration { // an even count: back to the state the steps start from
		t0 := time.Now()
		fullOp(s, fi)
		fi++
		return time.Since(t0)
	})
	h2 := heapNow()
	runtime.KeepAlive(bld) // alive in every measurement, so its size cancels out
	loop := bn.toggle
	if *genBenchFull {
		loop = fullOp
	}
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		loop(s, fi+i)
	}
	b.StopTimer()
	step := float64(b.Elapsed().Nanoseconds()) / float64(b.N)
	b.ReportMetric(step/devs, "ns/device-step")
	b.ReportMetric(float64(full.Nanoseconds())/devs, "ns/device-full")
	b.ReportMetric(float64(first.Nanoseconds())/devs, "ns/device-first")
	b.ReportMetric(float64(bfs.Nanoseconds()), "bfs-ns")
	b.ReportMetric(float64(full)/float64(bfs), "full/bfs")
	b.ReportMetric(float64(h1-h0)/devs, "B/device")
	b.ReportMetric(float64(h2-h0)/devs, "B/device-warm")
	runtime.KeepAlive(s)
}

// BenchmarkMuxTree toggles select line s0 of a 2^k:1 tree whose data
// inputs alternate, so the output changes on every toggle. It measures the
// plain unit-delay settle (race analysis off): a step changes one input, so
// race analysis would not run on it anyway, but the full op flips every data
// input at once, and under RacesWhenNeeded that is race analysis's two
// phases and not a settle (BenchmarkRaceAnalysis measures those); off, no
// step keeps the undo log's segment 0 either.
func BenchmarkMuxTree(b *testing.B) {
	for _, k := range []int{4, 8, 12, 16} {
		if 1<<(k+2) > *genBenchMax {
			continue
		}
		b.Run(fmt.Sprintf("k=%d", k), func(b *testing.B) {
			var s0, y int
			data := make([]int, 0, 1<<k) // made before the heap is read: the bytes a device are the engine's
			runGenBench(b, genBench{
				races: sw.RacesOff,
				build: func() *sw.Builder { return gen.MuxTree(k) },
				setup: func(b *testing.B, s *sw.Sim) {
					data = data[:0]
					for i := 0; i < 1<<k; i++ {
						data = append(data, genInput(b, s, fmt.Sprintf("d%d", i)))
						s.SetInput(data[i], sw.Drive(i%2))
					}
					for l := 0; l < k; l++ {
						s.SetInput(genInput(b, s, fmt.Sprintf("s%d", l)), sw.Drive0)
					}
					s0 = genInput(b, s, "s0")
					y, _ = s.Netlist().Lookup("y")
				},
				toggle: func(s *sw.Sim, i int) *sw.Result {
					s.SetInput(s0, sw.Drive((i+1)%2))
					return s.Settle()
				},
				full: func(s *sw.Sim, i int) *sw.Result { // every data input flips: every group is re-solved
					for j, n := range data {
						s.SetInput(n, sw.Drive((i+j+1)%2))
					}
					return s.Settle()
				},
				check: func(b *testing.B, s *sw.Sim, r *sw.Result) {
					// after an even number of toggles s0 is 0: y = d0 = 0 (common practice)
					if got := s.Node(y); got.Value != sw.V0 || r.Oscillated {
						b.Fatalf("y = %v after warm-up", got)
					}
				},
			})
		})
	}
}

// BenchmarkFlipFlopChain clocks a chain of master-slave flip-flops preset
// to alternating values, so that every edge switches every flip-flop: one
// step is one clock edge (clk and clkb both change). It measures the plain
// unit-delay settle (race analysis off: with clk and clkb two inputs changed
// together it would run on every edge; BenchmarkRaceAnalysis measures that).
func BenchmarkFlipFlopChain(b *testing.B) { benchFlipFlopChain(b, sw.RacesOff) }

func benchFlipFlopChain(b *testing.B, races sw.RaceMode) {
	for _, devices := range []int{1000, 10000, 100000, 1000000} {
		if devices > *genBenchMax {
			continue
		}
		n := (devices + 16) / 17 // 17 devices per flip-flop with the preset
		name := fmt.Sprintf("devices=%dk", devices/1000)
		if devices >= 1000000 {
			name = fmt.Sprintf("devices=%dM", devices/1000000)
		}
		b.Run(name, func(b *testing.B) {
			var clk, clkb, d, qLast int
			high := true
			runGenBench(b, genBench{
				races: races,
				build: func() *sw.Builder { return gen.FlipFlopChainPreset(n) },
				setup: func(b *testing.B, s *sw.Sim) {
					clk, clkb, d = genInput(b, s, "clk"), genInput(b, s, "clkb"), genInput(b, s, "d")
					s.SetInput(clk, sw.Drive1)
					s.SetInput(clkb, sw.Drive0)
					s.SetInput(d, sw.Drive0)
					s.SetInput(genInput(b, s, "pre"), sw.Drive1)
					qLast, _ = s.Netlist().Lookup(fmt.Sprintf("q%d", n-1))
				},
				after: func(b *testing.B, s *sw.Sim) {
					s.SetInput(genInput(b, s, "pre"), sw.Drive0)
					s.Settle()
					if s.Node(qLast).Value != sw.Value((n-1)%2) {
						b.Fatalf("preset: q%d = %v", n-1, s.Node(qLast))
					}
					high = true
				},
				toggle: func(s *sw.Sim, i int) *sw.Result {
					if high { // falling edge: the masters take their D; d moves too
						s.SetInput(clk, sw.Drive0)
						s.SetInput(clkb, sw.Drive1)
						s.SetInput(d, 1-s.InputDrive(d))
					} else {
						s.SetInput(clk, sw.Drive1)
						s.SetInput(clkb, sw.Drive0)
					}
					high = !high
					return s.Settle()
				},
				check: func(b *testing.B, s *sw.Sim, r *sw.Result) {
					// Every flip-flop switches: at least its q and master change per cycle.
					if r.Oscillated || len(r.Changed) < n {
						b.Fatalf("a clock edge changed %d nodes for %d flip-flops", len(r.Changed), n)
					}
				},
			})
		})
	}
}

// BenchmarkInverterChain toggles the input of a chain of n inverters: one
// step ripples through all n stages, one round each.
func BenchmarkInverterChain(b *testing.B) {
	for _, n := range []int{1000, 10000, 100000} {
		if 2*n > *genBenchMax {
			continue
		}
		b.Run(fmt.Sprintf("stages=%dk", n/1000), func(b *testing.B) {
			var in int
			runGenBench(b, genBench{
				build: func() *sw.Builder { return gen.InverterChain(n) },
				setup: func(b *testing.B, s *sw.Sim) {
					in = genInput(b, s, "in")
					s.SetInput(in, sw.Drive0)
				},
				toggle: func(s *sw.Sim, i int) *sw.Result {
					s.SetInput(in, sw.Drive((i+1)%2))
					return s.Settle()
				},
				check: func(b *testing.B, s *sw.Sim, r *sw.Result) {
					if r.Rounds != n || len(r.Changed) != n {
						b.Fatalf("a toggle took %d rounds and %d changes for %d stages", r.Rounds, len(r.Changed), n)
					}
				},
			})
		})
	}
}
