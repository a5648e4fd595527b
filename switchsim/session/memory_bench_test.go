package session

import (
	"fmt"
	"runtime"
	"strings"
	"testing"

	"railyard/switchsim"
	"railyard/switchsim/netfile"
	"railyard/switchsim/steps"
)

// The memory figures of the README ("Limits"): the session's live heap
// after a run, and what the run allocated in all. Run with
//
//	go test ./switchsim/session -run XXX -bench Memory -benchtime 1x

// chainDesign is a 771-byte design of 43,008 devices and 21,507 nodes: an
// inverter chain built by doubling cells, so that one input toggled
// changes every node (the worst case for "only what changed").
func chainDesign() string {
	var b strings.Builder
	b.WriteString("design chain\ninput a\noutput y\ncell b0 i o\n  use inv x i o\nend\n")
	for k := 1; k <= 14; k++ {
		fmt.Fprintf(&b, "cell b%d i o\n  use b%d l i m\n  use b%d r m o\nend\n", k, k-1, k-1)
	}
	b.WriteString("use b14 c14 a m1\nuse b12 c12 m1 m2\nuse b10 c10 m2 y\n")
	return b.String()
}

func heapAfter(f func()) (live, total uint64) {
	runtime.GC()
	var m0, m1 runtime.MemStats
	runtime.ReadMemStats(&m0)
	f()
	runtime.GC()
	runtime.ReadMemStats(&m1)
	return m1.HeapAlloc - min(m0.HeapAlloc, m1.HeapAlloc), m1.TotalAlloc - m0.TotalAlloc
}

func report(b *testing.B, live, total uint64, n int) {
	b.ReportMetric(float64(live)/(1<<20), "MiB-live")
	b.ReportMetric(float64(total)/(1<<20), "MiB-alloc")
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(n), "ns/step")
}

// BenchmarkMemoryChain: 2,000 one-input steps of the chain (before this
// work: 33 s, 9.6 GiB allocated, 2.1 GiB live).
func BenchmarkMemoryChain(b *testing.B) {
	src := chainDesign()
	d, err := netfile.Read("chain.sw", []byte(src))
	if err != nil {
		b.Fatal(err)
	}
	var st strings.Builder
	st.WriteString("apply a\n")
	for i := 0; i < 2000; i++ {
		fmt.Fprintf(&st, "%d\n", i%2)
	}
	sts, err := steps.Read("chain.steps", []byte(st.String()), d.Netlist)
	if err != nil {
		b.Fatal(err)
	}
	b.Logf("design %d bytes, %d devices, %d nodes", len(src), d.Netlist.NumDevices(), d.Netlist.NumNodes())
	measure(b, d, sts, Options{Mode: switchsim.Ideal})
}

// measure runs the steps b.N times and reports the figures of each run.
func measure(b *testing.B, d *netfile.Design, sts *steps.Steps, opt Options) {
	for i := 0; i < b.N; i++ {
		var s *Session
		live, total := heapAfter(func() {
			s = New(d, d.File, sts, opt)
			s.RunToEnd(false)
		})
		runtime.KeepAlive(s)
		report(b, live, total, len(sts.Rows))
	}
}

// BenchmarkMemoryLatch: 100,000 steps of static_latch (before: 8.7 s,
// 136 MiB live; 1M steps took 358 s).
func BenchmarkMemoryLatch(b *testing.B) {
	for _, n := range []int{100_000, 1_000_000} {
		b.Run(fmt.Sprint(n), func(b *testing.B) {
			d := latchDesign(b)
			sts := latchSteps(b, d.Netlist, n)
			measure(b, d, sts, Options{Mode: switchsim.Physical})
		})
	}
}
