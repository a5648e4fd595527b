package switchsim

import (
	"fmt"
	"math"
	"strings"
	"testing"
)

// Tests of physical mode (DEVELOPERS.md, physical mode). Expected voltages are computed here
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

// watch tells s that the named nodes are checked (Sim.Watch).
func watch(t *testing.T, s *Sim, names ...string) {
	t.Helper()
	var ns []int
	for _, name := range names {
		n, ok := s.Netlist().Lookup(name)
		if !ok {
			t.Fatalf("no node %s", name)
		}
		ns = append(ns, n)
	}
	s.Watch(ns)
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
	// An nMOS passes a 1 only up to V = Vg - Vt(V) (DEVELOPERS.md (physical mode); numerical solution here).
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
	// paths of the winning strength the best level counts (DEVELOPERS.md, physical mode).
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
	b.Output("y") // its level matters
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
	// Devices in series with full gates drop the level only once (DEVELOPERS.md, physical mode).
	b := NewBuilder()
	b.Input("in")
	b.Input("en")
	b.NMOS("m1", "en", "in", "a", DeviceOpts{})
	b.NMOS("m2", "en", "a", "c", DeviceOpts{})
	b.NMOS("m3", "en", "c", "y", DeviceOpts{})
	s := phSim(t, b, Physical)
	watch(t, s, "a", "c", "y") // the session's checked nodes: their levels matter
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
	b.Output("y")
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
	// A pseudo-nMOS inverter: a pMOS load with its gate grounded against an
	// nMOS driver. Its low output is the textbook VOL from the level-1
	// equations (Shichman and Hodges 1968), worked by hand in pseudoNMOSVOL.
	tc := Generic()
	lp := 4 * tc.L
	s := ratioed(t, DeviceOpts{L: lp}, DeviceOpts{})
	r := phApply(t, s, map[string]Drive{"a": Drive1})
	bn, bp := betaOf(tc.Kn, tc.Wn, tc.L), betaOf(tc.Kp, tc.Wp, lp)
	want := pseudoNMOSVOL(tc, bn, bp)
	if !(want <= tc.Vtp) {
		t.Fatalf("test setup: VOL %.3f V leaves the load saturated only below |Vtp|", want)
	}
	y := node(s, "y")
	phNear(t, "y volts", y.Volts, want, 1e-9)
	if y.Value != V0 || y.State != StateL || y.Strength != Strong {
		t.Errorf("y = %+v, want a contested strong 0 (L)", y)
	}
	w := phWarning(s, r, WarnContention, "y")
	if len(w) != 1 || w[0].Device != phDev(t, s, "drv") || w[0].Other != phDev(t, s, "load") {
		t.Errorf("contention warnings: %+v, want one naming drv (winner) and load", w)
	}
	// The effective resistances at the operating point: the saturated load
	// carries I = bp (vdd - |Vtp|)^2 / 2; RUp = (vdd - V) / I, RDown = V / I.
	cur := bp / 2 * (tc.Vdd - tc.Vtp) * (tc.Vdd - tc.Vtp)
	n, _ := s.Netlist().Lookup("y")
	in := s.physInfo(n)
	phNear(t, "current", in.Amps, cur, 1e-9*cur)
	phNear(t, "divider up", in.RUp, (tc.Vdd-want)/cur, 1e-6*(tc.Vdd-want)/cur)
	phNear(t, "divider down", in.RDown, want/cur, 1e-6*want/cur)
	// a = 0: the load alone pulls y to a full 1.
	phApply(t, s, map[string]Drive{"a": Drive0})
	if y := node(s, "y"); y.Volts != tc.Vdd || y.State != State1 {
		t.Errorf("y with the driver off = %+v, want a full 1", y)
	}
}

func TestPhysPullUpDivider(t *testing.T) {
	// A resistive-load inverter: a pull (a resistor of the documented default
	// 10 x max(rn L / wn, rp L / wp), DEVELOPERS.md, physical mode) against a
	// default nMOS; VOL from the level-1 equations worked by hand
	// (resistiveLoadVOL, Shichman and Hodges 1968).
	b := NewBuilder()
	b.Input("a")
	b.Pull("pu", "y", true, HighZ)
	b.NMOS("drv", "a", "y", "gnd", DeviceOpts{})
	s := phSim(t, b, Physical)
	tc := s.Netlist().Tech
	phApply(t, s, map[string]Drive{"a": Drive1})
	rpu := 10 * max(tc.Rn*tc.L/tc.Wn, tc.Rp*tc.L/tc.Wp)
	phNear(t, "y volts", node(s, "y").Volts, resistiveLoadVOL(tc, betaOf(tc.Kn, tc.Wn, tc.L), rpu), 1e-9)
}

func TestPhysContentionInBand(t *testing.T) {
	tc := Generic()
	// A pMOS load as strong as the driver (kp wp = kn wn), both gates at
	// full levels and both sources at their rails (no body effect): the two
	// are mirror images, so y sits at vdd / 2, inside the band (symmetry).
	s := ratioed(t, DeviceOpts{W: tc.Wn * tc.Kn / tc.Kp}, DeviceOpts{})
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
	// Physical mode decides a fight by the devices, not by strength (DEVELOPERS.md,
	// physical mode): a long, narrow strong nMOS loses to a pull (resistiveLoadVOL).
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
		want := resistiveLoadVOL(tc, betaOf(tc.Kn, w, l), 10*tc.RefResistance())
		phNear(t, "y volts", y.Volts, want, 1e-9)
		if y.Value != V1 || y.State != StateH || y.Strength != Pull {
			t.Errorf("physical: y = %+v, want H at pull strength", y)
		}
	}
}

func TestPhysWriteAgainstKeeper(t *testing.T) {
	// A write through an nMOS against a weak keeper to ground. The write
	// device's source is the node, so it is saturated with the body effect;
	// the keeper (a weak device without a size: its length stretched to the
	// documented default resistance, 40 x RefResistance) is below saturation:
	// beta_w (vdd - V - Vt(V))^2 / 2 = beta_k ((vdd - Vtn) V - V^2 / 2)
	// (level-1, Shichman and Hodges 1968), solved here by bisection.
	b := NewBuilder()
	b.Input("d")
	b.Input("wr")
	b.Input("kb")
	b.NMOS("write", "wr", "d", "s", DeviceOpts{})
	b.NMOS("keep", "kb", "s", "gnd", DeviceOpts{Strength: Weak})
	s := phSim(t, b, Physical)
	tc := s.Netlist().Tech
	phApply(t, s, map[string]Drive{"d": Drive1, "wr": Drive1, "kb": Drive1})
	bw := betaOf(tc.Kn, tc.Wn, tc.L)
	bk := bw * (tc.Rn * tc.L / tc.Wn) / (40 * tc.RefResistance())
	want := rootBisect(func(v float64) float64 {
		return idsN(tc, bk, tc.Vdd, v, 0) - idsN(tc, bw, tc.Vdd, tc.Vdd, v)
	}, 0, tc.Vdd)
	phNear(t, "s volts", node(s, "s").Volts, want, 1e-9)
	if st := node(s, "s").State; st != StateH {
		t.Errorf("s state %v, want H (the write wins, contested)", st)
	}
}

func TestPhysNetworkLargeMatchesDense(t *testing.T) {
	// A stack of three nMOS against a pMOS load, by Newton on the dense
	// equations and by the sweeps. The expected voltages are found by
	// shooting on the test's own level-1 equations: for a trial x1 the stack
	// current I follows from the bottom device, x2 and y from I through the
	// devices above it, and x1 is bisected until the load carries I.
	tc := Generic()
	lp := 8 * tc.L
	b := NewBuilder()
	b.Input("a")
	b.PMOS("load", "gnd", "vdd", "y", DeviceOpts{L: lp})
	b.NMOS("n3", "a", "y", "x2", DeviceOpts{})
	b.NMOS("n2", "a", "x2", "x1", DeviceOpts{})
	b.NMOS("n1", "a", "x1", "gnd", DeviceOpts{})
	nl := mustCompile(t, b)
	bn, bp := betaOf(tc.Kn, tc.Wn, tc.L), betaOf(tc.Kp, tc.Wp, lp)
	up := func(i, below float64) float64 { // the node above a device carrying i
		return rootBisect(func(v float64) float64 { return idsN(tc, bn, tc.Vdd, v, below) - i }, below, tc.Vdd)
	}
	chain := func(x1 float64) (x2, y, i float64) {
		i = idsN(tc, bn, tc.Vdd, x1, 0)
		x2 = up(i, x1)
		return x2, up(i, x2), i
	}
	x1 := rootBisect(func(x1 float64) float64 {
		_, y, i := chain(x1)
		return i - idsP(tc, bp, 0, tc.Vdd, y)
	}, 0, 0.3)
	x2, y, _ := chain(x1)
	for _, dense := range []int{physDenseMax, 0} {
		s := NewSim(nl, Options{})
		s.phys.net.denseMax = dense
		phApply(t, s, map[string]Drive{"a": Drive1})
		for n, want := range map[string]float64{"x1": x1, "x2": x2, "y": y} {
			phNear(t, n, node(s, n).Volts, want, 1e-7)
		}
	}
}

func TestPhysXSourceRange(t *testing.T) {
	// An X input through a weak device against a strong 0: the X may stand
	// anywhere from 0 to vdd; at vdd the weak device (saturated, its source
	// the node, body effect) fights the strong nMOS below saturation
	// (level-1, solved here by bisection), still below VIL.
	b := NewBuilder()
	b.Input("x")
	b.Input("a")
	b.NMOS("drv", "a", "y", "gnd", DeviceOpts{})
	b.NMOS("leak", "a", "x", "y", DeviceOpts{Strength: Weak})
	s := phSim(t, b, Physical)
	tc := s.Netlist().Tech
	phApply(t, s, map[string]Drive{"x": DriveX, "a": Drive1})
	bn := betaOf(tc.Kn, tc.Wn, tc.L)
	bw := bn * (tc.Rn * tc.L / tc.Wn) / (40 * tc.RefResistance())
	want := rootBisect(func(v float64) float64 {
		return idsN(tc, bn, tc.Vdd, v, 0) - idsN(tc, bw, tc.Vdd, tc.Vdd, v)
	}, 0, tc.Vdd)
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
	// In ideal mode (--ideal, switchsim §2-§3) there are no voltages, no delay
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
	// The round limit works the same in physical mode (switchsim §5).
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

// shareThrough builds two stored nodes a (ca, charged to vdd through a
// pMOS) and b (cb, cleared through an nMOS) joined by one pass device of
// kind k, gated by en (an nMOS) or enb (a pMOS), with technology tc.
func shareThrough(t *testing.T, tc Tech, k DeviceKind, ca, cb float64) *Sim {
	b := NewBuilder()
	b.SetTech(tc)
	for _, n := range []string{"pre", "clr", "en", "enb"} {
		b.Input(n)
	}
	b.Node("a", ca, HighZ)
	b.Node("b", cb, HighZ)
	b.PMOS("mp", "pre", "vdd", "a", DeviceOpts{})
	b.NMOS("mc", "clr", "b", "gnd", DeviceOpts{})
	if k == NMOS {
		b.NMOS("share", "en", "a", "b", DeviceOpts{})
	} else {
		b.PMOS("share", "enb", "a", "b", DeviceOpts{})
	}
	s := phSim(t, b, Physical)
	phApply(t, s, map[string]Drive{"pre": Drive0, "clr": Drive1, "en": Drive0, "enb": Drive1})
	phApply(t, s, map[string]Drive{"pre": Drive1, "clr": Drive0})
	return s
}

func TestPhysChargeSharingThroughThreshold(t *testing.T) {
	// An nMOS of threshold 0.45 V (gamma 0) with its gate at 1.8 V between a
	// 90 fF node at 1.8 V and a 10 fF node at 0 V: charge flows only until
	// the lower side reaches Vg - Vt = 1.35 V, so b ends at 1.35 V and a at
	// 1.8 - (10/90) 1.35 = 1.65 V, not both at the mean 1.62 V (charge
	// conservation, common practice).
	tc := Generic()
	tc.Gamma = 0
	s := shareThrough(t, tc, NMOS, 90e-15, 10e-15)
	r := phApply(t, s, map[string]Drive{"en": Drive1})
	a, b := node(s, "a"), node(s, "b")
	phNear(t, "a volts", a.Volts, 1.65, 1e-9)
	phNear(t, "b volts", b.Volts, 1.35, 1e-9)
	phNear(t, "charge", 90e-15*a.Volts+10e-15*b.Volts, 90e-15*1.8, 1e-24)
	for _, x := range []NodeState{a, b} {
		if x.State != StateZ || x.Value != V1 {
			t.Errorf("after sharing %+v, want Z holding 1 (above VIH)", x)
		}
	}
	if len(phWarning(s, r, WarnChargeSharing, "a")) != 1 || len(phWarning(s, r, WarnChargeSharing, "b")) != 1 {
		t.Errorf("want a charge-sharing warning on both: %+v", r.Warnings)
	}
	// The mirror image: a pMOS with its gate at 0 V passes charge down only
	// until the higher side falls to |Vtp| = 0.45 V: from a 10 fF node at
	// 1.8 V into a 90 fF node at 0 V (the mean would be 0.18 V), a stops at
	// 0.45 V and b takes (10/90) (1.8 - 0.45) = 0.15 V.
	s = shareThrough(t, tc, PMOS, 10e-15, 90e-15)
	phApply(t, s, map[string]Drive{"enb": Drive0})
	phNear(t, "a volts (pMOS)", node(s, "a").Volts, 0.45, 1e-9)
	phNear(t, "b volts (pMOS)", node(s, "b").Volts, 0.15, 1e-9)
	// Where the limit does not bite (the mean below it) both sides meet:
	// 10 fF at 1.8 V into 40 fF at 0 V through the nMOS: 0.36 V on both.
	s = shareThrough(t, tc, NMOS, 10e-15, 40e-15)
	phApply(t, s, map[string]Drive{"en": Drive1})
	phNear(t, "a volts (mean)", node(s, "a").Volts, 0.36, 1e-9)
	phNear(t, "b volts (mean)", node(s, "b").Volts, 0.36, 1e-9)
}

func TestPhysLevelWarningsWhereLevelMatters(t *testing.T) {
	// A degraded 1 on a node that gates nothing and is neither an output nor
	// checked: its level is read by nobody, so no warning (DEVELOPERS.md, physical mode), but
	// the facts stay (state H, the device of the drop in the explanation).
	build := func(gates bool) *Sim {
		b := NewBuilder()
		b.Input("in")
		b.Input("en")
		b.NMOS("m1", "en", "in", "y", DeviceOpts{})
		if gates {
			b.PMOS("ip", "y", "vdd", "z", DeviceOpts{})
			b.NMOS("in_", "y", "z", "gnd", DeviceOpts{})
		}
		return phSim(t, b, Physical)
	}
	s := build(false)
	r := phApply(t, s, map[string]Drive{"in": Drive1, "en": Drive1})
	yn, _ := s.Netlist().Lookup("y")
	if y := node(s, "y"); y.State != StateH || len(phWarning(s, r, WarnDegraded, "y")) != 0 {
		t.Errorf("y = %+v with warnings %+v: want H and no warning", y, r.Warnings)
	}
	if e := s.Explain(yn); e.Degrader != phDev(t, s, "m1") {
		t.Errorf("explanation of y names degrader %d, want m1", e.Degrader)
	}
	watch(t, s, "y") // now the session checks it
	phApply(t, s, map[string]Drive{"in": Drive0})
	if r := phApply(t, s, map[string]Drive{"in": Drive1}); len(phWarning(s, r, WarnDegraded, "y")) != 1 {
		t.Errorf("watched y: warnings %+v, want one degraded", r.Warnings)
	}
	s = build(true) // y gates an inverter
	if r := phApply(t, s, map[string]Drive{"in": Drive1, "en": Drive1}); len(phWarning(s, r, WarnDegraded, "y")) != 1 {
		t.Errorf("y gating a stage: warnings %+v, want one degraded", r.Warnings)
	}
}

func TestPhysLevelLostSaysWhichSide(t *testing.T) {
	// A gate-cascaded nMOS pass: the 1 reaches y at PassHigh(PassHigh(vdd)),
	// 0.57 V with the generic preset, below VIL (0.737 V): the next stage
	// reads a 0, so the value would be flipped; it stays X (DEVELOPERS.md, physical mode).
	b := NewBuilder()
	b.Input("in")
	b.Input("en")
	b.NMOS("m1", "en", "in", "g1", DeviceOpts{})
	b.NMOS("m2", "g1", "in", "y", DeviceOpts{})
	b.Output("y")
	s := phSim(t, b, Physical)
	tc := s.Netlist().Tech
	r := phApply(t, s, map[string]Drive{"in": Drive1, "en": Drive1})
	vil, vih, _ := tc.Thresholds()
	yv := passHighNumeric(tc, passHighNumeric(tc, tc.Vdd))
	if !(yv < vil) {
		t.Fatalf("test setup: y at %.3f V not below VIL %.3f V", yv, vil)
	}
	w := phWarning(s, r, WarnLevelLost, "y")
	if len(w) != 1 {
		t.Fatalf("level-lost warnings %+v", r.Warnings)
	}
	msg := s.Message(w[0])
	for _, want := range []string{"its 1 is lost", "below VIL", "reads a 0", "flipped", "m2"} {
		if !strings.Contains(msg, want) {
			t.Errorf("message %q lacks %q", msg, want)
		}
	}
	yn, _ := s.Netlist().Lookup("y")
	l := s.Explain(yn).Lost
	if l == nil || l.Value != V1 || l.Reads != V0 || l.Cause != LostByDrop || l.Device != phDev(t, s, "m2") {
		t.Errorf("explanation's lost level %+v, want the 1 lost, read as 0, dropped by m2", l)
	}
	if m := s.Margin(yn); math.Abs(m.Noise-(yv-vih)) > 1e-9 {
		t.Errorf("noise margin %g, want V - VIH = %g for the lost 1", m.Noise, yv-vih)
	}
	// Inside the band: thresholds overridden to 1.0 / 1.3 V put one drop
	// (1.14 V) in the band: the next stage's reading is unknown.
	tc.VIL, tc.VIH = 1.0, 1.3
	b2 := NewBuilder()
	b2.SetTech(tc)
	b2.Input("in")
	b2.Input("en")
	b2.NMOS("m1", "en", "in", "y", DeviceOpts{})
	b2.Output("y")
	s2 := phSim(t, b2, Physical)
	r2 := phApply(t, s2, map[string]Drive{"in": Drive1, "en": Drive1})
	w = phWarning(s2, r2, WarnLevelLost, "y")
	if len(w) != 1 || !strings.Contains(s2.Message(w[0]), "inside the undefined band") || strings.Contains(s2.Message(w[0]), "flipped") {
		t.Errorf("in-band warnings %+v (%v)", w, r2.Warnings)
	}
	yn2, _ := s2.Netlist().Lookup("y")
	if l := s2.Explain(yn2).Lost; l == nil || l.Reads != VX {
		t.Errorf("in-band lost level %+v, want read as X", l)
	}
}

func TestPhysSharingLosesStoredValue(t *testing.T) {
	// A large-class node storing 1 (10 fF) shares through a transmission
	// gate with a 40 fF medium node storing 0: the switch-level model keeps
	// the larger class's 1 (IEEE 1364-2005 §7), but the charge settles at
	// 10/50 x 1.8 = 0.36 V (charge conservation), below VIL: by the one rule
	// of levels the 1 is lost and the node is X, not read back as a 0.
	b := NewBuilder()
	for _, n := range []string{"pre", "clr", "en", "enb"} {
		b.Input(n)
	}
	b.Node("a", 10e-15, Large)
	b.Node("b", 40e-15, HighZ)
	b.PMOS("mp", "pre", "vdd", "a", DeviceOpts{})
	b.NMOS("mc", "clr", "b", "gnd", DeviceOpts{})
	b.TGate("t", "en", "enb", "a", "b", 0, 0, 0, HighZ)
	b.Output("a")
	s := phSim(t, b, Physical)
	phApply(t, s, map[string]Drive{"pre": Drive0, "clr": Drive1, "en": Drive0, "enb": Drive1})
	phApply(t, s, map[string]Drive{"pre": Drive1, "clr": Drive0})
	r := phApply(t, s, map[string]Drive{"en": Drive1, "enb": Drive0})
	a := node(s, "a")
	phNear(t, "a volts", a.Volts, 0.36, 1e-9)
	if a.Value != VX || a.State != StateZ {
		t.Errorf("a = %+v, want Z holding X (its 1 lost)", a)
	}
	w := phWarning(s, r, WarnChargeSharing, "a")
	if len(w) != 1 || !strings.Contains(s.Message(w[0]), "stored 1 is lost") || !strings.Contains(s.Message(w[0]), "reads a 0") {
		t.Errorf("charge-sharing warnings %+v", w)
	}
	an, _ := s.Netlist().Lookup("a")
	if l := s.Explain(an).Lost; l == nil || l.Cause != LostBySharing || l.Value != V1 || l.Reads != V0 {
		t.Errorf("lost level %+v", l)
	}
}

func TestPhysPartlyOnMovesTheNode(t *testing.T) {
	// An inverter whose input is an nMOS-passed 1, PassHigh(vdd) = 1.142 V:
	// its pMOS, off by logic, has Vsg = 0.658 V > |Vtp| and is saturated,
	// I = beta_p (Vsg - |Vtp|)^2 / 2, against the nMOS below saturation
	// (level-1, Shichman and Hodges 1968), so the output leaves 0 V:
	// beta_n ((Vg - Vtn) V - V^2 / 2) = I, about 0.022 V (hand calculation).
	b := NewBuilder()
	b.Input("in")
	b.Input("en")
	b.NMOS("pass", "en", "in", "x", DeviceOpts{})
	b.PMOS("inv.p", "x", "vdd", "y", DeviceOpts{})
	b.NMOS("inv.n", "x", "y", "gnd", DeviceOpts{})
	s := phSim(t, b, Physical)
	tc := s.Netlist().Tech
	r := phApply(t, s, map[string]Drive{"in": Drive1, "en": Drive1})
	vg := passHighNumeric(tc, tc.Vdd)
	bp, bn := betaOf(tc.Kp, tc.Wp, tc.L), betaOf(tc.Kn, tc.Wn, tc.L)
	cur := bp / 2 * (tc.Vdd - vg - tc.Vtp) * (tc.Vdd - vg - tc.Vtp)
	ov := vg - tc.Vtn
	want := ov - math.Sqrt(ov*ov-2*cur/bn)
	y := node(s, "y")
	phNear(t, "y volts", y.Volts, want, 1e-9)
	if y.Value != V0 || y.State != StateL {
		t.Errorf("y = %+v, want a 0 off its rail (L)", y)
	}
	w := phWarning(s, r, WarnPartialOn, "x")
	if len(w) != 1 || w[0].Device != phDev(t, s, "inv.p") || !strings.Contains(s.Message(w[0]), "µA of static current") {
		t.Errorf("partial-on warnings %+v", w)
	}
	bias := s.DeviceBias(phDev(t, s, "inv.p"))
	if !bias.PartlyOn || bias.FullGate {
		t.Errorf("bias %+v, want partly on with a gate off the rails", bias)
	}
	phNear(t, "gate volts", bias.GateVolts, vg, 1e-9)
	phNear(t, "static current", bias.Current, cur, 1e-9*cur) // from terminal A (vdd) to B (y)
	if len(phWarning(s, r, WarnContention, "y")) != 0 {
		t.Errorf("a partly-on device is not a contention: %+v", r.Warnings)
	}
	yn, _ := s.Netlist().Lookup("y")
	if d := s.Explain(yn).Divider; d == nil || math.Abs(d.Amps-cur) > 1e-9*cur {
		t.Errorf("explanation's operating point %+v, want %g A through y", d, cur)
	}
}

func TestPhysMargins(t *testing.T) {
	// Noise margins (DEVELOPERS.md, physical mode): V - VIH for a 1, VIL - V for a 0.
	tc := Generic()
	vil, vih, vm := tc.Thresholds()
	b := NewBuilder()
	b.Input("in")
	b.Input("en")
	b.Input("a")
	b.NMOS("m1", "en", "in", "y", DeviceOpts{}) // a degraded 1 on y
	b.PMOS("ip", "y", "vdd", "z", DeviceOpts{}) // y drives a reference inverter
	b.NMOS("in_", "y", "z", "gnd", DeviceOpts{})
	// a pseudo-nMOS fight on f, which drives an inverter with a 4x pMOS
	b.PMOS("load", "gnd", "vdd", "f", DeviceOpts{L: 4 * tc.L})
	b.NMOS("drv", "a", "f", "gnd", DeviceOpts{})
	b.PMOS("sp", "f", "vdd", "g", DeviceOpts{W: 4 * tc.Wp})
	b.NMOS("sn", "f", "g", "gnd", DeviceOpts{})
	s := phSim(t, b, Physical)
	phApply(t, s, map[string]Drive{"in": Drive1, "en": Drive1, "a": Drive1})
	look := func(name string) int { n, _ := s.Netlist().Lookup(name); return n }
	yv := passHighNumeric(tc, tc.Vdd)
	m := s.Margin(look("y"))
	phNear(t, "noise margin of the degraded 1", m.Noise, yv-vih, 1e-9)
	phNear(t, "VM of the stage y drives (the reference inverter)", m.StageVM, vm, 1e-12)
	if !math.IsNaN(m.Write) {
		t.Errorf("write margin %g on a node no fight reaches, want NaN", m.Write)
	}
	phNear(t, "noise margin of a full 1", s.Margin(look("g")).Noise, tc.Vdd-vih, 1e-12)
	// f: VOL of the pseudo-nMOS inverter; the stage it drives has
	// r = sqrt(kp 4 wp / (kn wn)), VM = (Vtn + r (vdd - |Vtp|)) / (1 + r)
	// (long-channel textbook formula).
	fv := pseudoNMOSVOL(tc, betaOf(tc.Kn, tc.Wn, tc.L), betaOf(tc.Kp, tc.Wp, 4*tc.L))
	r := math.Sqrt(tc.Kp * 4 * tc.Wp / (tc.Kn * tc.Wn))
	svm := (tc.Vtn + r*(tc.Vdd-tc.Vtp)) / (1 + r)
	m = s.Margin(look("f"))
	phNear(t, "noise margin of the fight's 0", m.Noise, vil-fv, 1e-9)
	phNear(t, "the driven stage's own VM", m.StageVM, svm, 1e-12)
	phNear(t, "write margin", m.Write, math.Abs(fv-svm), 1e-9)
	if m := s.Margin(look("in")); m.Noise != tc.Vdd-vih {
		t.Errorf("a driven 1 input: noise margin %g, want vdd - VIH", m.Noise)
	}
	if m := NewSim(s.Netlist(), Options{Mode: Ideal}).Margin(look("y")); !math.IsNaN(m.Noise) {
		t.Errorf("ideal mode margin %+v, want NaN", m)
	}
}

func TestPhysFightPicture(t *testing.T) {
	// The picture of a pseudo-nMOS fight: the load's current into the node
	// and the driver's out of it as functions of the node's voltage, from
	// the level-1 equations (the test's own, level1_test.go), crossing at
	// the node's voltage.
	tc := Generic()
	lp := 4 * tc.L
	s := ratioed(t, DeviceOpts{L: lp}, DeviceOpts{})
	phApply(t, s, map[string]Drive{"a": Drive1})
	yn, _ := s.Netlist().Lookup("y")
	f, ok := s.Fight(yn)
	if !ok {
		t.Fatal("no fight at y")
	}
	bn, bp := betaOf(tc.Kn, tc.Wn, tc.L), betaOf(tc.Kp, tc.Wp, lp)
	if len(f.Up) != 1 || f.Up[0] != phDev(t, s, "load") || len(f.Down) != 1 || f.Down[0] != phDev(t, s, "drv") {
		t.Errorf("sides %v / %v, want load / drv", f.Up, f.Down)
	}
	for _, v := range []float64{0, 0.1, 0.5, 0.9, 1.4, 1.8} {
		up, down := f.Currents(v)
		phNear(t, fmt.Sprintf("load current at %g V", v), up, idsP(tc, bp, 0, tc.Vdd, v), 1e-15)
		phNear(t, fmt.Sprintf("driver current at %g V", v), down, idsN(tc, bn, tc.Vdd, v, 0), 1e-15)
	}
	up, down := f.Currents(f.Volts)
	phNear(t, "currents at the crossing", up-down, 0, 1e-9*up) // the solve stops within 1e-9 vdd
	if vil, vih, _ := tc.Thresholds(); f.VIL != vil || f.VIH != vih || !math.IsNaN(f.StageVM) {
		t.Errorf("picture %+v: want VIL/VIH and no stage (y drives nothing)", f)
	}
	if _, ok := s.Fight(s.Netlist().Power()); ok {
		t.Error("a fight at a rail")
	}
}

// A stack's inner node that shares charge with a storage node leaves the
// warning to the storage node, which a gate reads (the inner node gates
// nothing: the warning on it said nothing more); two such inner nodes
// sharing with each other both warn (TestPhysChargeSharingThroughThreshold).
func TestPhysChargeSharingWarnsWhereItIsRead(t *testing.T) {
	b := NewBuilder()
	for _, n := range []string{"pre", "clr", "en"} {
		b.Input(n)
	}
	b.Node("st", 20e-15, HighZ)
	b.PMOS("mp", "pre", "vdd", "st", DeviceOpts{}) // st stores 1
	b.NMOS("pass", "en", "st", "x", DeviceOpts{})  // x: between two channels only
	b.NMOS("mc", "clr", "x", "gnd", DeviceOpts{})  // x stores 0
	b.PMOS("rd", "st", "vdd", "y", DeviceOpts{})   // st gates something
	s := phSim(t, b, Physical)
	x, okx := s.Netlist().Lookup("x")
	st, oks := s.Netlist().Lookup("st")
	if !okx || !oks || !s.Netlist().Diffusion(x) || s.Netlist().Diffusion(st) {
		t.Fatal("x should be a diffusion node and st not")
	}
	phApply(t, s, map[string]Drive{"pre": Drive0, "clr": Drive1, "en": Drive0})
	phApply(t, s, map[string]Drive{"pre": Drive1, "clr": Drive0})
	r := phApply(t, s, map[string]Drive{"en": Drive1})
	if w := phWarning(s, r, WarnChargeSharing, "st"); len(w) != 1 {
		t.Errorf("st: charge-sharing warnings %+v, want one", w)
	}
	if w := phWarning(s, r, WarnChargeSharing, "x"); len(w) != 0 {
		t.Errorf("x: charge-sharing warnings %+v, want none (st carries it)", w)
	}
}

// A level-lost warning on a node whose level is unknown says so once: "its
// level is unknown", not the level's words twice (seen on an X that a fight
// of unknown devices left without a voltage).
func TestLostTextUnknownLevel(t *testing.T) {
	b := NewBuilder()
	b.Input("a")
	b.NMOS("n1", "a", "y", "gnd", DeviceOpts{})
	s := phSim(t, b, Physical)
	phApply(t, s, map[string]Drive{"a": Drive1})
	y, _ := s.Netlist().Lookup("y")
	w := Warning{Kind: WarnLevelLost, Node: y, Device: -1}
	s.phys.info[y].Lost = VX
	s.volts[y] = math.NaN()
	if got, want := s.lostText(w), "y is X: its level is unknown"; got != want {
		t.Errorf("unknown level: %q, want %q", got, want)
	}
	s.phys.info[y].Lost = V1
	if got, want := s.lostText(w), "y is X: its 1 is lost: the estimated level is unknown"; got != want {
		t.Errorf("lost 1, unknown level: %q, want %q", got, want)
	}
}
