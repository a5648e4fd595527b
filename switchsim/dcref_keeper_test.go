package switchsim_test

import (
	"math"
	"testing"

	sw "railyard/switchsim"
	"railyard/switchsim/load"
)

// The write of demo:strong_keeper against its keeper, near the width of
// keep.n where the fight flips, judged by the DC reference of dcref_test.go
// (the same level-1 currents and sizes, no code shared with the engine).
//
// The loop: the write drives s through the transmission gate pass against
// the keeper keep (gated by s_b); the inverter fwd makes s_b from s. With s
// at V, s_b sits at U(V), where the currents into s_b balance, and the net
// current into s is h(V) = sum of its devices' currents at (V, U(V)). The
// write starts from the stored 0 (s at 0 V, s_b at vdd), where h > 0, and
// raises s until the first V where h reaches 0: that DC point is where the
// loop ends, whatever the delays, since s can only rise while h > 0 and no
// stable point lies below. If it is at or below VIL the keeper wins (s is
// a contested 0); if h stays positive up to VIL, s leaves the 0's band and
// the write wins (the one rule of levels, DEVELOPERS.md physical mode). The
// flip width is where that first point is VIL, found by bisection on the
// width.

// refLoop evaluates the keeper loop of nodes a (written) and b (a's
// inverse) of netlist nl, every other node at its voltage in settled Sim at.
type refLoop struct {
	r    dcRef
	nl   *sw.Netlist
	at   *sw.Sim
	a, b int
}

// into is the net current into node n with a at va and b at vb.
func (l refLoop) into(n int, va, vb float64) float64 {
	volt := func(m int) float64 {
		switch m {
		case l.a:
			return va
		case l.b:
			return vb
		}
		return l.at.Node(m).Volts
	}
	sum := 0.0
	for _, d := range l.nl.ChannelDevices(n) {
		dev := l.nl.Device(d)
		vg := math.NaN()
		if dev.Gate >= 0 {
			vg = volt(dev.Gate)
		}
		i := l.r.current(dev, l.r.beta(dev), vg, volt(dev.A), volt(dev.B)) // from A to B
		if dev.A == n {
			sum -= i
		}
		if dev.B == n {
			sum += i
		}
	}
	return sum
}

// inverse is U(V): b's voltage where its currents balance with a at v (the
// current into b falls as b rises), by bisection.
func (l refLoop) inverse(v float64) float64 {
	lo, hi := 0.0, l.r.t.Vdd
	for i := 0; i < 100; i++ {
		mid := (lo + hi) / 2
		if l.into(l.b, v, mid) > 0 {
			lo = mid
		} else {
			hi = mid
		}
	}
	return (lo + hi) / 2
}

// first is the first V up from 0 where h(V) = 0 (scanned in 0.5 mV steps,
// then bisected), and false if h stays positive to vdd.
func (l refLoop) first() (float64, bool) {
	h := func(v float64) float64 { return l.into(l.a, v, l.inverse(v)) }
	const step = 0.5e-3
	for v := step; v <= l.r.t.Vdd; v += step {
		if h(v) <= 0 {
			lo, hi := v-step, v
			for i := 0; i < 60; i++ {
				if mid := (lo + hi) / 2; h(mid) > 0 {
					lo = mid
				} else {
					hi = mid
				}
			}
			return (lo + hi) / 2, true
		}
	}
	return 0, false
}

func TestDCReferenceKeeperNearTheFlip(t *testing.T) {
	ld, err := load.Host(load.Options{}).Open("demo:strong_keeper", "")
	if err != nil {
		t.Fatal(err)
	}
	base, st := ld.Design.Netlist, ld.Steps
	kn, ok := base.LookupDevice("keep.n")
	sn, ok2 := base.Lookup("s")
	sb, ok3 := base.Lookup("s_b")
	q, ok4 := base.Lookup("q")
	if !ok || !ok2 || !ok3 || !ok4 || st == nil || len(st.Rows) < 2 {
		t.Fatal("strong_keeper lacks keep.n, s, s_b, q or its first two steps")
	}
	l0 := base.Device(kn).L
	// run settles the design with keep.n at width w through the steps'
	// first two rows (clk 1, d 0, then the write of a 1) and returns the
	// Sim and the write's result.
	run := func(w float64) (*sw.Sim, *sw.Result) {
		nl, err := base.WithSize(kn, w, l0)
		if err != nil {
			t.Fatal(err)
		}
		s := sw.NewSim(nl, sw.Options{})
		s.Settle()
		var r *sw.Result
		for _, row := range st.Rows[:2] {
			for i, n := range st.Apply {
				s.SetInput(n, row.Drives[i])
			}
			r = s.Settle()
		}
		return s, r
	}
	r := newDCRef(base.Tech)
	// where the reference ends the write at width w
	point := func(w float64) (float64, bool) {
		s, _ := run(w) // only the voltages of clk, d and clk_b are read: sources and an inverter's output
		return refLoop{r: r, nl: s.Netlist(), at: s, a: sn, b: sb}.first()
	}
	keeperWins := func(w float64) bool { v, ok := point(w); return ok && v <= r.vil }
	lo, hi := 0.05e-6, 1.44e-6
	if keeperWins(lo) || !keeperWins(hi) {
		t.Fatalf("the reference: keeper wins at %g m %v, at %g m %v; want false, true", lo, keeperWins(lo), hi, keeperWins(hi))
	}
	for i := 0; i < 30; i++ {
		if mid := (lo + hi) / 2; keeperWins(mid) {
			hi = mid
		} else {
			lo = mid
		}
	}
	flip := (lo + hi) / 2
	t.Logf("the reference's flip width of keep.n: %.5g m (VIL %.4f V)", flip, r.vil)
	// The README and session's TestResizeKeeperFlipsTheWrite put it at about 0.116u.
	if flip < 0.11e-6 || flip > 0.12e-6 {
		t.Errorf("flip width %.4g m, not about 0.116u", flip)
	}
	for _, f := range []float64{0.9, 0.99, 0.999, 1.001, 1.01, 1.05, 1.2} {
		w := f * flip
		s, res := run(w)
		x := s.Node(sn)
		t.Logf("keep.n at %.3f x the flip: %d rounds, settled %v, s %v at %.4f V", f, res.Rounds, res.Settled, x.State, x.Volts)
		if !res.Settled || res.Analysis.Decided || res.Oscillated {
			t.Errorf("keep.n at %.3f x the flip: settled %v, decided by analysis %v, oscillated %v; want the rounds to settle", f, res.Settled, res.Analysis.Decided, res.Oscillated)
		}
		v, held := point(w)
		if f < 1 {
			if x.Value != sw.V1 || s.Node(q).Value != sw.V1 {
				t.Errorf("keep.n at %.3f x the flip: s %v, q %v; the reference lets the write through (h > 0 up to VIL), want 1, 1", f, x.State, s.Node(q).State)
			}
			if held && v <= r.vil {
				t.Errorf("the reference holds s at %.4f V below the flip", v)
			}
			continue
		}
		if !held || v > r.vil {
			t.Fatalf("the reference does not hold s at %.3f x the flip", f)
		}
		if x.Value != sw.V0 || x.State != sw.StateL || s.Node(q).Value != sw.V0 {
			t.Errorf("keep.n at %.3f x the flip: s %v, q %v; the reference holds s at %.4f V (VIL %.4f V): want L, 0", f, x.State, s.Node(q).State, v, r.vil)
		}
		if d := math.Abs(x.Volts - v); d > 5e-3 {
			t.Errorf("keep.n at %.3f x the flip: s at %.4f V, the reference's DC point %.4f V", f, x.Volts, v)
		}
		dcCompare(t, "strong_keeper near the flip", s)
	}
}
