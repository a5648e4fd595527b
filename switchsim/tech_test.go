package switchsim

import (
	"math"
	"testing"
)

// vtBody is the body-effect threshold Vt = Vt0 + gamma (sqrt(phi + Vsb) -
// sqrt(phi)) (long-channel textbook formula, DEVELOPERS.md (physical mode)).
func vtBody(vt0, gamma, phi, vsb float64) float64 {
	return vt0 + gamma*(math.Sqrt(phi+vsb)-math.Sqrt(phi))
}

// rootBisect finds the root of an increasing f on [lo, hi].
func rootBisect(f func(float64) float64, lo, hi float64) float64 {
	for i := 0; i < 200; i++ {
		mid := (lo + hi) / 2
		if f(mid) < 0 {
			lo = mid
		} else {
			hi = mid
		}
	}
	return (lo + hi) / 2
}

// passHighNumeric solves V = Vg - Vt(V) numerically: an nMOS passing a 1 stops
// when its source, the output, is a threshold below the gate.
func passHighNumeric(t Tech, vg float64) float64 {
	return rootBisect(func(v float64) float64 { return v - (vg - vtBody(t.Vtn, t.Gamma, t.Phi, v)) }, 0, vg)
}

// passLowNumeric solves V = Vg + |Vt(vdd - V)|: a pMOS passing a 0, body at vdd.
func passLowNumeric(t Tech, vg float64) float64 {
	return rootBisect(func(v float64) float64 { return v - (vg + vtBody(t.Vtp, t.Gamma, t.Phi, t.Vdd-v)) }, vg, t.Vdd)
}

func TestPassLimitsWithoutBodyEffect(t *testing.T) {
	tc := Generic()
	tc.Gamma = 0
	// nMOS passing vdd stops at vdd - vtn; pMOS passing 0 at |vtp| (common practice).
	if got, want := tc.PassHigh(tc.Vdd), tc.Vdd-tc.Vtn; math.Abs(got-want) > 1e-12 {
		t.Errorf("PassHigh(vdd) = %.12f, want vdd - vtn = %.12f", got, want)
	}
	if got, want := tc.PassLow(0), tc.Vtp; math.Abs(got-want) > 1e-12 {
		t.Errorf("PassLow(0) = %.12f, want |vtp| = %.12f", got, want)
	}
	// A gate at or below the threshold passes nothing (common practice).
	if got := tc.PassHigh(tc.Vtn * 0.9); got != 0 {
		t.Errorf("PassHigh below vtn = %g, want 0", got)
	}
	if got := tc.PassLow(tc.Vdd - tc.Vtp*0.9); got != tc.Vdd {
		t.Errorf("PassLow above vdd - |vtp| = %g, want vdd", got)
	}
}

func TestPassLimitClosedFormAgainstNumeric(t *testing.T) {
	// The closed form of DEVELOPERS.md (physical mode) against a numerical solution of
	// V = Vg - Vt(V) (and the pMOS mirror image), to 1e-9.
	for _, tc := range []Tech{Generic(), func() Tech { x := Generic(); x.Gamma, x.Phi = 0.9, 0.55; return x }()} {
		for vg := tc.Vtn + 0.01; vg <= tc.Vdd; vg += 0.0937 {
			if got, want := tc.PassHigh(vg), passHighNumeric(tc, vg); math.Abs(got-want) > 1e-9 {
				t.Errorf("gamma %g: PassHigh(%.4f) = %.12f, numeric %.12f", tc.Gamma, vg, got, want)
			}
		}
		for vg := 0.0; vg < tc.Vdd-tc.Vtp-0.01; vg += 0.0937 {
			if got, want := tc.PassLow(vg), passLowNumeric(tc, vg); math.Abs(got-want) > 1e-9 {
				t.Errorf("gamma %g: PassLow(%.4f) = %.12f, numeric %.12f", tc.Gamma, vg, got, want)
			}
		}
	}
}

func TestPassHighWorkedExample(t *testing.T) {
	// A 2.5 V long-channel technology, vtn0 0.43 V, gamma 0.4 V^0.5,
	// |2 phi_F| 0.6 V: an nMOS with its gate at 2.5 V passes a high of
	// 1.765 V (textbook-style worked example, from memory).
	tc := Generic()
	tc.Vdd, tc.Vtn, tc.Gamma, tc.Phi = 2.5, 0.43, 0.4, 0.6
	if got := tc.PassHigh(2.5); math.Abs(got-1.765) > 0.0005 {
		t.Errorf("PassHigh(2.5) = %.4f, want 1.765", got)
	}
}

func TestSymmetricInverterThresholds(t *testing.T) {
	// A symmetric inverter (kn wn = kp wp, vtn = |vtp| = Vt): VIL = (3 vdd + 2 Vt) / 8,
	// VIH = (5 vdd - 2 Vt) / 8, VM = vdd / 2 (long-channel textbook result, from memory).
	for _, c := range []struct{ vdd, vt float64 }{{1.8, 0.45}, {2.5, 0.43}, {5, 1}} {
		tc := Generic()
		tc.Vdd, tc.Vtn, tc.Vtp = c.vdd, c.vt, c.vt
		tc.Kn, tc.Kp, tc.Wn, tc.Wp = 100e-6, 50e-6, 1e-6, 2e-6
		vil, vih, vm := tc.Thresholds()
		if want := (3*c.vdd + 2*c.vt) / 8; math.Abs(vil-want) > 1e-9 {
			t.Errorf("vdd %g vt %g: VIL = %.12f, want %.12f", c.vdd, c.vt, vil, want)
		}
		if want := (5*c.vdd - 2*c.vt) / 8; math.Abs(vih-want) > 1e-9 {
			t.Errorf("vdd %g vt %g: VIH = %.12f, want %.12f", c.vdd, c.vt, vih, want)
		}
		if math.Abs(vm-c.vdd/2) > 1e-12 {
			t.Errorf("vdd %g: VM = %.12f, want vdd/2", c.vdd, vm)
		}
	}
}

// sqInverter is the test's own square-law inverter: output for an input by
// current balance (bisection), for checking the engine's thresholds.
type sqInverter struct{ vdd, vtn, vtp, bn, bp float64 }

func (c sqInverter) out(vi float64) float64 {
	in := func(vo float64) float64 {
		ov := vi - c.vtn
		switch {
		case ov <= 0:
			return 0
		case vo >= ov:
			return c.bn / 2 * ov * ov
		}
		return c.bn * (ov*vo - vo*vo/2)
	}
	ip := func(vo float64) float64 {
		ov, vsd := c.vdd-vi-c.vtp, c.vdd-vo
		switch {
		case ov <= 0:
			return 0
		case vsd >= ov:
			return c.bp / 2 * ov * ov
		}
		return c.bp * (ov*vsd - vsd*vsd/2)
	}
	return rootBisect(func(vo float64) float64 { return in(vo) - ip(vo) }, 0, c.vdd)
}

func TestSkewedInverterThresholds(t *testing.T) {
	tc := Generic() // kn wn != kp wp, and vtn != |vtp| below
	tc.Vtp = 0.5
	r := math.Sqrt(tc.Kp * tc.Wp / (tc.Kn * tc.Wn))
	vil, vih, vm := tc.Thresholds()
	// VM against the square-law formula VM = (Vtn + r (vdd - |Vtp|)) / (1 + r)
	// (long-channel textbook result), and against current balance with both
	// devices saturated, kn wn (VM - Vtn)^2 = kp wp (vdd - VM - |Vtp|)^2.
	if want := (tc.Vtn + r*(tc.Vdd-tc.Vtp)) / (1 + r); math.Abs(vm-want) > 1e-12 {
		t.Errorf("VM = %.12f, formula %.12f", vm, want)
	}
	bal := rootBisect(func(v float64) float64 {
		return tc.Kn*tc.Wn*(v-tc.Vtn)*(v-tc.Vtn) - tc.Kp*tc.Wp*(tc.Vdd-v-tc.Vtp)*(tc.Vdd-v-tc.Vtp)
	}, tc.Vtn, tc.Vdd-tc.Vtp)
	if math.Abs(vm-bal) > 1e-9 {
		t.Errorf("VM = %.12f, current balance %.12f", vm, bal)
	}
	// VIL and VIH are where the transfer curve's slope is -1 (the definition
	// of the unity-gain points): check by finite differences on the test's
	// own square-law inverter.
	inv := sqInverter{tc.Vdd, tc.Vtn, tc.Vtp, tc.Kn * tc.Wn / tc.L, tc.Kp * tc.Wp / tc.L}
	for _, x := range []struct {
		name string
		v    float64
	}{{"VIL", vil}, {"VIH", vih}} {
		const h = 1e-5
		slope := (inv.out(x.v+h) - inv.out(x.v-h)) / (2 * h)
		if math.Abs(slope+1) > 1e-3 {
			t.Errorf("%s = %.6f: slope there %.6f, want -1", x.name, x.v, slope)
		}
	}
	if !(tc.Vtn < vil && vil < vm && vm < vih && vih < tc.Vdd-tc.Vtp) {
		t.Errorf("order: vtn %g < VIL %g < VM %g < VIH %g < vdd - |vtp| %g fails", tc.Vtn, vil, vm, vih, tc.Vdd-tc.Vtp)
	}
}

func TestThresholdOverrides(t *testing.T) {
	tc := Generic()
	vil0, vih0, _ := tc.Thresholds()
	tc.VIL = 0.5 // an override in the design wins (switchsim/FORMATS.md: vil=, vih=)
	vil, vih, _ := tc.Thresholds()
	if vil != 0.5 || vih != vih0 {
		t.Errorf("vil=0.5: got %g %g, want 0.5 %g", vil, vih, vih0)
	}
	tc.VIL, tc.VIH = 0, 1.3
	vil, vih, _ = tc.Thresholds()
	if vil != vil0 || vih != 1.3 {
		t.Errorf("vih=1.3: got %g %g, want %g 1.3", vil, vih, vil0)
	}
}

func TestDefaultResistanceMargin(t *testing.T) {
	// DEVELOPERS.md (physical mode): a default strong device wins against a default pull (and a
	// pull against a weak one) by a clear margin: the divider lands in the
	// outer half of the 0 or 1 band, never near VIL/VIH.
	tc := Generic()
	vil, vih, _ := tc.Thresholds()
	rn, rp := tc.Rn*tc.L/tc.Wn, tc.Rp*tc.L/tc.Wp // R = r_sq L / W
	for _, c := range []struct {
		name         string
		rWin, rLose  float64
		winnerIsZero bool
	}{
		{"nmos vs pull-up", rn, tc.DefaultResistance(Pull), true},
		{"pmos vs pull-down", rp, tc.DefaultResistance(Pull), false},
		{"pull-down vs weak", tc.DefaultResistance(Pull), tc.DefaultResistance(Weak), true},
	} {
		// divider: the node sits at vdd R0 / (R0 + R1) (Ohm's law)
		if c.winnerIsZero {
			if v := tc.Vdd * c.rWin / (c.rWin + c.rLose); v > vil/2 {
				t.Errorf("%s: %.3f V, want below VIL/2 = %.3f", c.name, v, vil/2)
			}
		} else if v := tc.Vdd * c.rLose / (c.rWin + c.rLose); v < (vih+tc.Vdd)/2 {
			t.Errorf("%s: %.3f V, want above %.3f", c.name, v, (vih+tc.Vdd)/2)
		}
	}
}

func TestTechValidateRanges(t *testing.T) {
	// Values outside physical ranges are refused with the key at fault, so
	// that a reader can report the error at that key (DEVELOPERS.md lists
	// the ranges). vdd = 0.8 V is below Vtn + |Vtp| = 0.9 V: the square-law
	// reference inverter then has no region of gain, so VIL and VIH do not
	// exist (long-channel textbook result, from memory).
	for _, c := range []struct {
		key string
		v   float64
	}{
		{"kn", 1e-320}, {"vdd", 1e308}, {"vdd", math.NaN()}, {"kp", math.Inf(1)}, {"vtn", 0}, {"wn", 1e9},
		{"vdd", 0.8}, {"vtp", 1.9}, {"gamma", -0.1}, {"l", 5e3}, {"cnode", 1e-30}, {"rn", 0}, {"vil", 1.9},
	} {
		tc := Generic()
		if err := tc.Set(c.key, c.v); err != nil {
			t.Fatal(err)
		}
		err := tc.Validate()
		te, ok := err.(*TechError)
		if !ok || te.Key != c.key {
			t.Errorf("%s=%g: error %v, want a TechError naming %s", c.key, c.v, err, c.key)
		}
	}
	tc := Generic()
	tc.Vdd = 0.8
	tc.VIL, tc.VIH = 0.3, 0.5 // given thresholds need no gain
	if err := tc.Validate(); err != nil {
		t.Errorf("vdd 0.8 with vil and vih given: %v", err)
	}
	if g := Generic(); g.Validate() != nil {
		t.Errorf("generic refused: %v", g.Validate())
	}
	// Every accepted technology has finite thresholds in order.
	for _, vdd := range []float64{0.95, 1.2, 1.8, 3.3, 5, 15, 20} {
		tc := Generic()
		tc.Vdd = vdd
		if tc.Validate() != nil {
			continue
		}
		vil, vih, vm := tc.Thresholds()
		if !(0 < vil && vil < vm && vm < vih && vih < vdd) {
			t.Errorf("vdd %g: VIL %g VM %g VIH %g out of order", vdd, vil, vm, vih)
		}
	}
}
