package switchsim

import (
	"math"
	"testing"
)

// Tests of physical mode (MODEL.md §4). Expected voltages are computed here
// from their closed forms or by the test's own numerical solutions, never
// taken from the engine.

func phSim(t *testing.T, b *Builder, m Mode) *Sim {
	t.Helper()
	return NewSim(mustCompile(t, b), Options{Mode: m})
}

func phApply(t *testing.T, s *Sim, drives map[string]Drive) *Result {
	t.Helper()
	for name, d := range drives {
		set(t, s, name, d)
	}
	return s.Settle()
}

func phDev(t *testing.T, s *Sim, name string) int {
	t.Helper()
	d, ok := s.Netlist().LookupDevice(name)
	if !ok {
		t.Fatalf("no device %s", name)
	}
	return d
}

// phWarning returns the warnings of kind on node name.
func phWarning(s *Sim, r *Result, kind WarnKind, name string) []Warning {
	n, _ := s.Netlist().Lookup(name)
	var out []Warning
	for _, w := range r.Warnings {
		if w.Kind == kind && w.Node == n {
			out = append(out, w)
		}
	}
	return out
}

func phNear(t *testing.T, what string, got, want, tol float64) {
	t.Helper()
	if math.IsNaN(got) || math.Abs(got-want) > tol {
		t.Errorf("%s = %.9g, want %.9g (±%g)", what, got, want, tol)
	}
}

func TestPhysPassDegradesOnce(t *testing.T) {
	b := NewBuilder()
	b.Input("in")
	b.Input("en")
	b.NMOS("m1", "en", "in", "y", DeviceOpts{})
	b.PMOS("ip", "y", "vdd", "z", DeviceOpts{}) // y gates an inverter
	b.NMOS("in_", "y", "z", "gnd", DeviceOpts{})
	s := phSim(t, b, Physical)
	tc := s.Netlist().Tech
	r := phApply(t, s, map[string]Drive{"in": Drive1, "en": Drive1})
	// An nMOS passes a 1 only up to V = Vg - Vt(V) (MODEL.md §4; numerical solution here).
	want := passHighNumeric(tc, tc.Vdd)
	y := node(s, "y")
	phNear(t, "y volts", y.Volts, want, 1e-9)
	if y.Value != V1 || y.State != StateH {
		t.Errorf("y = %v/%v, want a degraded 1 (H)", y.Value, y.State)
	}
	w := phWarning(s, r, WarnDegraded, "y")
	if len(w) != 1 || w[0].Device != phDev(t, s, "m1") {
		t.Errorf("degraded warnings on y: %+v, want one naming m1", w)
	}
	// An nMOS passes a 0 fully (common practice).
	phApply(t, s, map[string]Drive{"in": Drive0})
	if y := node(s, "y"); y.State != State0 || y.Volts != 0 {
		t.Errorf("y passing 0 = %+v, want state 0 at 0 V", y)
	}
}

func TestPhysPassWithoutBodyEffect(t *testing.T) {
	b := NewBuilder()
	tc := Generic()
	tc.Gamma = 0
	b.SetTech(tc)
	b.Input("hi")
	b.Input("lo")
	b.Input("en")
	b.Input("enb")
	b.NMOS("mn", "en", "hi", "y1", DeviceOpts{})
	b.PMOS("mp", "enb", "lo", "y0", DeviceOpts{})
	s := phSim(t, b, Physical)
	phApply(t, s, map[string]Drive{"hi": Drive1, "lo": Drive0, "en": Drive1, "enb": Drive0})
	// nMOS passing vdd: vdd - vtn; pMOS passing 0: |vtp| (common practice).
	phNear(t, "nMOS passing vdd", node(s, "y1").Volts, tc.Vdd-tc.Vtn, 1e-12)
	phNear(t, "pMOS passing 0", node(s, "y0").Volts, tc.Vtp, 1e-12)
	if st := node(s, "y0").State; st != StateL {
		t.Errorf("y0 state %v, want L (degraded 0)", st)
	}
}

func TestPhysTransmissionGatePassesFull(t *testing.T) {
	// The pMOS half passes the 1 fully and the nMOS half the 0: among the
	// paths of the winning strength the best level counts (MODEL.md §4).
	b := NewBuilder()
	b.Input("in")
	b.Input("en")
	b.Input("enb")
	b.TGate("t", "en", "enb", "in", "y", 0, 0, 0, HighZ)
	s := phSim(t, b, Physical)
	for _, c := range []struct {
		d     Drive
		volts float64
		st    State
	}{{Drive1, 1.8, State1}, {Drive0, 0, State0}} {
		r := phApply(t, s, map[string]Drive{"in": c.d, "en": Drive1, "enb": Drive0})
		if y := node(s, "y"); y.Volts != c.volts || y.State != c.st {
			t.Errorf("in=%v: y = %+v, want %v at %g V", c.d, y, c.st, c.volts)
		}
		if len(phWarning(s, r, WarnDegraded, "y")) != 0 {
			t.Errorf("in=%v: degraded warning on a full level", c.d)
		}
	}
}

func TestPhysGateCascadeLosesLevel(t *testing.T) {
	// Two gate-cascaded nMOS pass devices: the second is gated by the first's
	// degraded output and drops another threshold (common practice).
	b := NewBuilder()
	b.Input("in")
	b.Input("in2")
	b.Input("en")
	b.NMOS("m1", "en", "in", "g1", DeviceOpts{})
	b.NMOS("m2", "g1", "in2", "y", DeviceOpts{})
	s := phSim(t, b, Physical)
	tc := s.Netlist().Tech
	r := phApply(t, s, map[string]Drive{"in": Drive1, "in2": Drive1, "en": Drive1})
	g1 := passHighNumeric(tc, tc.Vdd)
	want := passHighNumeric(tc, g1)
	_, vih, _ := tc.Thresholds()
	if !(want < vih) || !(g1 >= vih) {
		t.Fatalf("test setup: levels %.3f, %.3f against VIH %.3f", g1, want, vih)
	}
	phNear(t, "g1 volts", node(s, "g1").Volts, g1, 1e-9)
	y := node(s, "y")
	phNear(t, "y volts", y.Volts, want, 1e-9)
	if y.Value != VX || y.State != StateX {
		t.Errorf("y = %v/%v, want X: the level is lost, not flipped", y.Value, y.State)
	}
	w := phWarning(s, r, WarnLevelLost, "y")
	if len(w) != 1 || w[0].Device != phDev(t, s, "m2") {
		t.Errorf("level-lost warnings on y: %+v, want one naming m2", w)
	}
}

func TestPhysSeriesChainDropsOnce(t *testing.T) {
	// Devices in series with full gates drop the level only once (MODEL.md §4).
	b := NewBuilder()
	b.Input("in")
	b.Input("en")
	b.NMOS("m1", "en", "in", "a", DeviceOpts{})
	b.NMOS("m2", "en", "a", "c", DeviceOpts{})
	b.NMOS("m3", "en", "c", "y", DeviceOpts{})
	s := phSim(t, b, Physical)
	tc := s.Netlist().Tech
	r := phApply(t, s, map[string]Drive{"in": Drive1, "en": Drive1})
	want := passHighNumeric(tc, tc.Vdd)
	for _, n := range []string{"a", "c", "y"} {
		phNear(t, n+" volts", node(s, n).Volts, want, 1e-9)
		if w := phWarning(s, r, WarnDegraded, n); len(w) != 1 || w[0].Device != phDev(t, s, "m1") {
			t.Errorf("degraded warnings on %s: %+v, want one naming m1", n, w)
		}
	}
}

func TestPhysGateMovedResolves(t *testing.T) {
	// g's level rises from degraded to full while it stays 1: m2 stays on,
	// but its pass limit follows its gate and y must be solved again.
	b := NewBuilder()
	for _, n := range []string{"in", "in2", "en", "enb"} {
		b.Input(n)
	}
	b.TGate("t", "en", "enb", "in", "g", 0, 0, 0, HighZ)
	b.NMOS("m2", "g", "in2", "y", DeviceOpts{})
	s := phSim(t, b, Physical)
	tc := s.Netlist().Tech
	// the pMOS half off: g passes through the nMOS half only
	r := phApply(t, s, map[string]Drive{"in": Drive1, "in2": Drive1, "en": Drive1, "enb": Drive1})
	g := passHighNumeric(tc, tc.Vdd)
	phNear(t, "g through the nMOS half", node(s, "g").Volts, g, 1e-9)
	phNear(t, "y with a degraded gate", node(s, "y").Volts, passHighNumeric(tc, g), 1e-9)
	if node(s, "y").Value != VX || len(phWarning(s, r, WarnLevelLost, "y")) != 1 {
		t.Errorf("y = %+v, want X with a level-lost warning", node(s, "y"))
	}
	phApply(t, s, map[string]Drive{"enb": Drive0}) // the pMOS half opens: g is full
	if g := node(s, "g"); g.Volts != tc.Vdd || g.Value != V1 {
		t.Fatalf("g = %+v, want a full 1", g)
	}
	phNear(t, "y with a full gate", node(s, "y").Volts, passHighNumeric(tc, tc.Vdd), 1e-9)
	if st := node(s, "y").State; st != StateH {
		t.Errorf("y state %v, want H", st)
	}
}

func TestPhysChargeRetention(t *testing.T) {
	// A node already at 0 V driven by a 0 through a pMOS alone stays at 0 V:
	// the pMOS only stops pulling down at its limit, it cannot pull the node
	// up to it (common practice). From an unknown start the limit holds.
	b := NewBuilder()
	for _, n := range []string{"d", "en", "enb"} {
		b.Input(n)
	}
	b.TGate("t", "en", "enb", "d", "s", 0, 0, 0, HighZ)
	b.NMOS("rd", "s", "x", "gnd", DeviceOpts{})
	b.Pull("pu", "x", true, HighZ)
	s := phSim(t, b, Physical)
	tc := s.Netlist().Tech
	phApply(t, s, map[string]Drive{"d": Drive0, "en": Drive1, "enb": Drive0})
	if v := node(s, "s").Volts; v != 0 {
		t.Fatalf("s through the whole gate = %g V, want 0", v)
	}
	r := phApply(t, s, map[string]Drive{"en": Drive0}) // the nMOS half closes first
	if x := node(s, "s"); x.Volts != 0 || x.State != State0 {
		t.Errorf("s through the pMOS half = %+v, want 0 at 0 V", x)
	}
	if len(phWarning(s, r, WarnPartialOn, "s")) != 0 {
		t.Errorf("partial-on warning for a full 0")
	}
	s2 := phSim(t, b, Physical)
	phApply(t, s2, map[string]Drive{"d": Drive0, "en": Drive0, "enb": Drive0})
	phNear(t, "s from unknown through the pMOS half", node(s2, "s").Volts, passLowNumeric(tc, 0), 1e-9)
}

// ratioed builds a pMOS load (gate at ground) against an nMOS driver.
func ratioed(t *testing.T, load DeviceOpts, drv DeviceOpts) *Sim {
	b := NewBuilder()
	b.Input("a")
	b.PMOS("load", "gnd", "vdd", "y", load)
	b.NMOS("drv", "a", "y", "gnd", drv)
	return phSim(t, b, Physical)
}

func TestPhysRatioedDivider(t *testing.T) {
	tc := Generic()
	lp := 4 * tc.L
	s := ratioed(t, DeviceOpts{L: lp}, DeviceOpts{})
	r := phApply(t, s, map[string]Drive{"a": Drive1})
	rp, rn := tc.Rp*lp/tc.Wp, tc.Rn*tc.L/tc.Wn // R = r_sq L / W (MODEL.md §4)
	want := tc.Vdd * rn / (rn + rp)            // a resistive divider (Ohm's law)
	y := node(s, "y")
	phNear(t, "y volts", y.Volts, want, 1e-9)
	if y.Value != V0 || y.State != StateL || y.Strength != Strong {
		t.Errorf("y = %+v, want a contested strong 0 (L)", y)
	}
	w := phWarning(s, r, WarnContention, "y")
	if len(w) != 1 || w[0].Device != phDev(t, s, "drv") || w[0].Other != phDev(t, s, "load") {
		t.Errorf("contention warnings: %+v, want one naming drv (winner) and load", w)
	}
	n, _ := s.Netlist().Lookup("y")
	in := s.physInfo(n)
	phNear(t, "divider up", in.RUp, rp, 1e-6*rp)
	phNear(t, "divider down", in.RDown, rn, 1e-6*rn)
	// a = 0: the load alone pulls y to a full 1.
	phApply(t, s, map[string]Drive{"a": Drive0})
	if y := node(s, "y"); y.Volts != tc.Vdd || y.State != State1 {
		t.Errorf("y with the driver off = %+v, want a full 1", y)
	}
}

func TestPhysPullUpDivider(t *testing.T) {
	// A pull against a default nMOS: the pull's documented default resistance
	// is 10 x max(rn L / wn, rp L / wp) (DEVELOPERS.md, physical mode).
	b := NewBuilder()
	b.Input("a")
	b.Pull("pu", "y", true, HighZ)
	b.NMOS("drv", "a", "y", "gnd", DeviceOpts{})
	s := phSim(t, b, Physical)
	tc := s.Netlist().Tech
	phApply(t, s, map[string]Drive{"a": Drive1})
	rn := tc.Rn * tc.L / tc.Wn
	rpu := 10 * max(rn, tc.Rp*tc.L/tc.Wp)
	phNear(t, "y volts", node(s, "y").Volts, tc.Vdd*rn/(rn+rpu), 1e-9)
}

func TestPhysContentionInBand(t *testing.T) {
	tc := Generic()
	// rp L / wp = rn L / wn: equal resistances put y at vdd / 2, inside the band.
	s := ratioed(t, DeviceOpts{W: tc.Wn * tc.Rp / tc.Rn}, DeviceOpts{})
	r := phApply(t, s, map[string]Drive{"a": Drive1})
	y := node(s, "y")
	phNear(t, "y volts", y.Volts, tc.Vdd/2, 1e-9)
	if y.Value != VX || y.State != StateX {
		t.Errorf("y = %+v, want X in the undefined band", y)
	}
	if len(phWarning(s, r, WarnContention, "y")) != 1 || len(phWarning(s, r, WarnConflict, "y")) != 0 {
		t.Errorf("want one contention warning and no conflict: %+v", r.Warnings)
	}
}

func TestPhysResistanceBeatsStrength(t *testing.T) {
	// Physical mode decides a contest by the resistor network, not by
	// strength (MODEL.md §4): a long, narrow strong nMOS loses to a pull.
	b := NewBuilder()
	tc := Generic()
	b.Input("a")
	b.Pull("pu", "y", true, HighZ)
	w, l := tc.L, 20*tc.L
	b.NMOS("drv", "a", "y", "gnd", DeviceOpts{W: w, L: l})
	nl := mustCompile(t, b)
	for _, m := range []Mode{Ideal, Physical} {
		s := NewSim(nl, Options{Mode: m})
		phApply(t, s, map[string]Drive{"a": Drive1})
		y := node(s, "y")
		if m == Ideal {
			if y.Value != V0 {
				t.Errorf("ideal: y = %+v, want 0 (strong beats pull)", y)
			}
			continue
		}
		rn := tc.Rn * l / w
		rpu := 10 * tc.RefResistance()
		phNear(t, "y volts", y.Volts, tc.Vdd*rn/(rn+rpu), 1e-9)
		if y.Value != V1 || y.State != StateH || y.Strength != Pull {
			t.Errorf("physical: y = %+v, want H at pull strength", y)
		}
	}
}

func TestPhysWriteAgainstKeeper(t *testing.T) {
	// A write through an nMOS against a weak keeper to ground: the write path
	// is a source at its limited level in series with its resistance, so the
	// node sits at Vlim Rk / (Rw + Rk) (MODEL.md §4 and Ohm's law).
	b := NewBuilder()
	b.Input("d")
	b.Input("wr")
	b.Input("kb")
	b.NMOS("write", "wr", "d", "s", DeviceOpts{})
	b.NMOS("keep", "kb", "s", "gnd", DeviceOpts{Strength: Weak})
	s := phSim(t, b, Physical)
	tc := s.Netlist().Tech
	phApply(t, s, map[string]Drive{"d": Drive1, "wr": Drive1, "kb": Drive1})
	rw := tc.Rn * tc.L / tc.Wn
	rk := 40 * tc.RefResistance() // the documented default for a weak device without a size
	lim := passHighNumeric(tc, tc.Vdd)
	phNear(t, "s volts", node(s, "s").Volts, lim*rk/(rw+rk), 1e-9)
	if st := node(s, "s").State; st != StateH {
		t.Errorf("s state %v, want H (the write wins, contested)", st)
	}
}

func TestPhysNetworkLargeMatchesDense(t *testing.T) {
	// A stack of three nMOS against a pMOS load: node k up from ground sits at
	// vdd k Rn / (3 Rn + Rp) (series resistors, Ohm's law), by the dense
	// method and by the iterative one.
	tc := Generic()
	lp := 8 * tc.L
	b := NewBuilder()
	b.Input("a")
	b.PMOS("load", "gnd", "vdd", "y", DeviceOpts{L: lp})
	b.NMOS("n3", "a", "y", "x2", DeviceOpts{})
	b.NMOS("n2", "a", "x2", "x1", DeviceOpts{})
	b.NMOS("n1", "a", "x1", "gnd", DeviceOpts{})
	nl := mustCompile(t, b)
	rn, rp := tc.Rn*tc.L/tc.Wn, tc.Rp*lp/tc.Wp
	for _, dense := range []int{physDenseMax, 0} {
		s := NewSim(nl, Options{})
		s.phys.net.denseMax = dense
		phApply(t, s, map[string]Drive{"a": Drive1})
		for k, n := range []string{"x1", "x2", "y"} {
			phNear(t, n, node(s, n).Volts, tc.Vdd*float64(k+1)*rn/(3*rn+rp), 1e-9)
		}
	}
}

func TestPhysXSourceRange(t *testing.T) {
	// An X input through a weak device against a strong 0: the X may stand
	// anywhere from 0 to vdd; at vdd it is a source at the nMOS's limit in
	// series with the weak resistance (MODEL.md §4), still below VIL.
	b := NewBuilder()
	b.Input("x")
	b.Input("a")
	b.NMOS("drv", "a", "y", "gnd", DeviceOpts{})
	b.NMOS("leak", "a", "x", "y", DeviceOpts{Strength: Weak})
	s := phSim(t, b, Physical)
	tc := s.Netlist().Tech
	phApply(t, s, map[string]Drive{"x": DriveX, "a": Drive1})
	rn, rw := tc.Rn*tc.L/tc.Wn, 40*tc.RefResistance()
	want := passHighNumeric(tc, tc.Vdd) * rn / (rn + rw)
	y := node(s, "y")
	phNear(t, "y volts (worst case)", y.Volts, want, 1e-9)
	if y.Value != V0 || y.State != StateL {
		t.Errorf("y = %+v, want a contested 0", y)
	}
}

// sharing builds two nodes a and b of the given capacitances, a charged
// through pre (pMOS) and b cleared through clr (nMOS), joined by a
// transmission gate en/enb.
func sharing(t *testing.T, ca, cb float64) *Sim {
	b := NewBuilder()
	for _, n := range []string{"pre", "clr", "en", "enb"} {
		b.Input(n)
	}
	b.Node("a", ca, HighZ)
	b.Node("b", cb, HighZ)
	b.PMOS("mp", "pre", "vdd", "a", DeviceOpts{})
	b.NMOS("mc", "clr", "b", "gnd", DeviceOpts{})
	b.TGate("t", "en", "enb", "a", "b", 0, 0, 0, HighZ)
	b.PMOS("ia", "a", "vdd", "ya", DeviceOpts{}) // a and b gate something
	b.PMOS("ib", "b", "vdd", "yb", DeviceOpts{})
	s := phSim(t, b, Physical)
	phApply(t, s, map[string]Drive{"pre": Drive0, "clr": Drive1, "en": Drive0, "enb": Drive1})
	phApply(t, s, map[string]Drive{"pre": Drive1, "clr": Drive0})
	return s
}

func TestPhysChargeSharing(t *testing.T) {
	tc := Generic()
	vil, vih, _ := tc.Thresholds()
	for _, c := range []struct {
		ca, cb float64
		want   Value
	}{{10e-15, 40e-15, V0}, {40e-15, 10e-15, V1}, {20e-15, 20e-15, VX}} {
		s := sharing(t, c.ca, c.cb)
		if a := node(s, "a"); a.State != StateZ || a.Value != V1 || a.Volts != tc.Vdd {
			t.Fatalf("a before sharing = %+v, want a stored 1 at vdd", a)
		}
		r := phApply(t, s, map[string]Drive{"en": Drive1, "enb": Drive0})
		// charge conservation: V = sum(C V) / sum(C)
		want := (c.ca*tc.Vdd + c.cb*0) / (c.ca + c.cb)
		for _, n := range []string{"a", "b"} {
			x := node(s, n)
			phNear(t, n+" volts", x.Volts, want, 1e-12)
			if x.State != StateZ || x.Value != c.want {
				t.Errorf("C %g/%g: %s = %+v, want Z holding %v (VIL %.3f VIH %.3f)", c.ca, c.cb, n, x, c.want, vil, vih)
			}
			w := phWarning(s, r, WarnChargeSharing, n)
			if len(w) != 1 || math.Abs(w[0].Volts-want) > 1e-12 {
				t.Errorf("%s: charge-sharing warnings %+v, want one at %.4f V", n, w, want)
			}
		}
		an, _ := s.Netlist().Lookup("a")
		sh := s.physSharing(an)
		if len(sh) != 2 {
			t.Fatalf("sharing group %+v", sh)
		}
		for _, m := range sh {
			before := map[string]float64{"a": tc.Vdd, "b": 0}[s.Netlist().NodeName(m.Node)]
			if m.Before != before {
				t.Errorf("%s held %g before sharing, want %g", s.Netlist().NodeName(m.Node), m.Before, before)
			}
		}
		// a settle that changes nothing there keeps the result (conservation is idempotent)
		phApply(t, s, map[string]Drive{"clr": Drive0})
		phNear(t, "a volts after another settle", node(s, "a").Volts, want, 1e-12)
	}
}

func TestPhysElmoreLadder(t *testing.T) {
	// A uniform RC ladder of N sections: the far end's Elmore delay is
	// R C N (N + 1) / 2 (Elmore 1948), node k's R C sum_{i<=k} (N - i + 1).
	const N = 8
	const c = 7e-15
	b := NewBuilder()
	b.Input("in")
	b.Input("en")
	prev := "in"
	names := make([]string, N)
	for k := range names {
		names[k] = "n" + string(rune('1'+k))
		b.Node(names[k], c, HighZ)
		b.NMOS("m"+names[k], "en", prev, names[k], DeviceOpts{})
		prev = names[k]
	}
	s := phSim(t, b, Physical)
	tc := s.Netlist().Tech
	phApply(t, s, map[string]Drive{"in": Drive1, "en": Drive1})
	r := phApply(t, s, map[string]Drive{"in": Drive0})
	rr := tc.Rn * tc.L / tc.Wn
	got := map[string]float64{}
	for i, n := range r.Changed {
		got[s.Netlist().NodeName(int(n))] = r.Delay[i]
	}
	sum := 0.0
	for k, n := range names {
		sum += float64(N - k)
		phNear(t, "delay of "+n, got[n], rr*c*sum, 1e-9*rr*c)
	}
	phNear(t, "far end", got[names[N-1]], rr*c*N*(N+1)/2, 1e-9*rr*c)
}

func TestPhysElmoreTransmissionGates(t *testing.T) {
	// Through transmission gates both halves conduct in parallel:
	// R = Rn Rp / (Rn + Rp) per section (Ohm's law), and a two-section
	// ladder's far end has the Elmore delay R C 3 (Elmore 1948).
	const c = 5e-15
	b := NewBuilder()
	for _, n := range []string{"in", "en", "enb"} {
		b.Input(n)
	}
	b.Node("a", c, HighZ)
	b.Node("y", c, HighZ)
	b.TGate("t1", "en", "enb", "in", "a", 0, 0, 0, HighZ)
	b.TGate("t2", "en", "enb", "a", "y", 0, 0, 0, HighZ)
	s := phSim(t, b, Physical)
	tc := s.Netlist().Tech
	phApply(t, s, map[string]Drive{"in": Drive0, "en": Drive1, "enb": Drive0})
	r := phApply(t, s, map[string]Drive{"in": Drive1})
	rn, rp := tc.Rn*tc.L/tc.Wn, tc.Rp*tc.L/tc.Wp
	rr := rn * rp / (rn + rp)
	yn, _ := s.Netlist().Lookup("y")
	for i, n := range r.Changed {
		if int(n) == yn {
			phNear(t, "delay of y", r.Delay[i], 3*rr*c, 1e-9*rr*c)
			return
		}
	}
	t.Fatal("y did not change")
}

func TestPhysPartialOn(t *testing.T) {
	// A degraded 0 (through a pMOS) on a gate: the nMOS it gates is off by
	// logic, but Vgs = PassLow(0) exceeds vtn, so it leaks (common practice).
	b := NewBuilder()
	b.Input("lo")
	b.Input("pg")
	b.PMOS("mp", "pg", "lo", "g", DeviceOpts{})
	b.Pull("pu", "z", true, HighZ)
	b.NMOS("leaky", "g", "z", "gnd", DeviceOpts{})
	b.NMOS("tight", "lo", "z", "gnd", DeviceOpts{}) // gated by a full 0: no warning
	s := phSim(t, b, Physical)
	tc := s.Netlist().Tech
	r := phApply(t, s, map[string]Drive{"lo": Drive0, "pg": Drive0})
	vg := passLowNumeric(tc, 0)
	if !(vg > tc.Vtn) {
		t.Fatalf("test setup: gate %.3f V not above vtn", vg)
	}
	phNear(t, "g volts", node(s, "g").Volts, vg, 1e-9)
	w := phWarning(s, r, WarnPartialOn, "g")
	if len(w) != 1 || w[0].Device != phDev(t, s, "leaky") {
		t.Errorf("partial-on warnings %+v, want one naming leaky", w)
	}
	for _, x := range r.Warnings {
		if x.Kind == WarnPartialOn && x.Device == phDev(t, s, "tight") {
			t.Errorf("partial-on for a device gated by a full 0")
		}
	}
}

func TestPhysIdealUntouched(t *testing.T) {
	// In ideal mode (--ideal, MODEL.md §2-§3) there are no voltages, no delay
	// estimates and no physical warnings; a passed 1 is a strong 1.
	b := NewBuilder()
	b.Input("in")
	b.Input("en")
	b.NMOS("m1", "en", "in", "g1", DeviceOpts{})
	b.NMOS("m2", "g1", "in", "y", DeviceOpts{})
	s := phSim(t, b, Ideal)
	r := phApply(t, s, map[string]Drive{"in": Drive1, "en": Drive1})
	for _, n := range []string{"g1", "y"} {
		if x := node(s, n); x.State != State1 || !math.IsNaN(x.Volts) {
			t.Errorf("ideal %s = %+v, want 1 with no voltage", n, x)
		}
	}
	for i := range r.Changed {
		if !math.IsNaN(r.Delay[i]) {
			t.Errorf("ideal delay %g, want NaN", r.Delay[i])
		}
	}
	for _, w := range r.Warnings {
		switch w.Kind {
		case WarnDegraded, WarnLevelLost, WarnPartialOn:
			t.Errorf("ideal mode gave %s", w.Kind)
		}
	}
}

func TestPhysSnapshotRestore(t *testing.T) {
	b := NewBuilder()
	b.Input("in")
	b.Input("en")
	b.NMOS("m1", "en", "in", "g1", DeviceOpts{})
	b.NMOS("m2", "g1", "in", "y", DeviceOpts{})
	s := phSim(t, b, Physical)
	phApply(t, s, map[string]Drive{"in": Drive1, "en": Drive1})
	yn, _ := s.Netlist().Lookup("y")
	before, info := s.Node(yn), s.physInfo(yn)
	snap := s.Snapshot()
	phApply(t, s, map[string]Drive{"in": Drive0})
	if s.Node(yn).Value != V0 {
		t.Fatalf("y did not change")
	}
	s.Restore(snap)
	if got := s.Node(yn); got.Value != before.Value || got.Volts != before.Volts {
		t.Errorf("restored y = %+v, want %+v", got, before)
	}
	if got := s.physInfo(yn); got.Drop != info.Drop || got.How != info.How {
		t.Errorf("restored info %+v, want %+v", got, info)
	}
	// and the restored state settles on as before: dropping in again gives 0
	phApply(t, s, map[string]Drive{"in": Drive0})
	if s.Node(yn).Value != V0 {
		t.Errorf("after restore, y = %+v", s.Node(yn))
	}
}

func TestPhysSettleAllocFree(t *testing.T) {
	// Once warm, a physical settle allocates nothing beyond what the same
	// settle allocates in ideal mode (the hooks keep their scratch).
	build := func() *Builder {
		b := NewBuilder()
		for _, n := range []string{"a", "en", "enb", "pre"} {
			b.Input(n)
		}
		b.PMOS("load", "gnd", "vdd", "y", DeviceOpts{L: 0.72e-6})
		b.NMOS("drv", "a", "y", "gnd", DeviceOpts{})
		b.NMOS("m1", "en", "a", "g1", DeviceOpts{})
		b.NMOS("m2", "g1", "a", "g2", DeviceOpts{})
		b.PMOS("mp", "pre", "vdd", "p", DeviceOpts{})
		b.TGate("t", "en", "enb", "p", "q", 0, 0, 0, HighZ)
		b.PMOS("iq", "q", "vdd", "z", DeviceOpts{})
		b.NMOS("nq", "q", "z", "gnd", DeviceOpts{})
		return b
	}
	nl := mustCompile(t, build())
	allocs := map[Mode]float64{}
	for _, m := range []Mode{Ideal, Physical} {
		s := NewSim(nl, Options{Mode: m})
		step := 0
		run := func() {
			step++
			d := Drive(step & 1)
			for _, n := range []string{"a", "en", "pre"} {
				set(t, s, n, d)
			}
			set(t, s, "enb", 1-d)
			s.Settle()
		}
		for i := 0; i < 8; i++ {
			run()
		}
		allocs[m] = testing.AllocsPerRun(50, run)
	}
	if allocs[Physical] > allocs[Ideal] {
		t.Errorf("allocations per settle: physical %g, ideal %g", allocs[Physical], allocs[Ideal])
	}
}

func TestPhysUnknownDeviceKeepsX(t *testing.T) {
	// With a device of unknown state, Bryant's ternary method decides what
	// could happen (Bryant 1984); where it says X, physical mode keeps X with
	// an unknown voltage.
	b := NewBuilder()
	b.Input("g")
	b.Input("en")
	b.PMOS("up", "gnd", "vdd", "y", DeviceOpts{})
	b.NMOS("dn", "g", "y", "gnd", DeviceOpts{})
	s := phSim(t, b, Physical)
	phApply(t, s, map[string]Drive{"g": DriveX})
	if y := node(s, "y"); y.Value != VX || !math.IsNaN(y.Volts) {
		t.Errorf("y = %+v, want X with unknown volts", y)
	}
	phApply(t, s, map[string]Drive{"g": Drive0})
	if y := node(s, "y"); y.State != State1 || y.Volts != 1.8 {
		t.Errorf("y = %+v, want a full 1", y)
	}
}

func TestPhysRingStillOscillates(t *testing.T) {
	// The round limit works the same in physical mode (MODEL.md §5).
	b := gatedRing()
	s := phSim(t, b, Physical)
	if r := phApply(t, s, map[string]Drive{"en": Drive0}); r.Oscillated {
		t.Fatal("disabled ring oscillated")
	}
	if r := phApply(t, s, map[string]Drive{"en": Drive1}); !r.Oscillated {
		t.Fatalf("enabled ring did not oscillate: rounds %d", r.Rounds)
	}
	if n1 := node(s, "n1"); n1.Value != VX || !math.IsNaN(n1.Volts) {
		t.Errorf("n1 = %+v, want X with unknown volts", n1)
	}
}
