package switchsim

import "math"

// The tests' own level-1 device equations (Shichman and Hodges, IEEE JSSC
// 1968, as DEVELOPERS.md (physical mode) states them), written apart from the engine's so
// that a test can check the engine against them: for an nMOS with
// ov = Vgs - Vt > 0 and Vds >= 0, I = beta (ov Vds - Vds^2 / 2) below
// saturation and beta ov^2 / 2 in it; Vt = Vt0 + gamma (sqrt(phi + Vsb) -
// sqrt(phi)), the body at ground; the source is the lower terminal. A pMOS
// is the mirror image with the body at vdd.

// idsN is the current of an nMOS with gate vg from terminal a to terminal b.
func idsN(tc Tech, beta, vg, va, vb float64) float64 {
	if va < vb {
		return -idsN(tc, beta, vg, vb, va)
	}
	vs, vds := vb, va-vb // b is the source
	vt := tc.Vtn + tc.Gamma*(math.Sqrt(tc.Phi+vs)-math.Sqrt(tc.Phi))
	ov := vg - vs - vt
	switch {
	case ov <= 0:
		return 0
	case vds >= ov:
		return beta / 2 * ov * ov
	}
	return beta * (ov*vds - vds*vds/2)
}

// idsP is the current of a pMOS with gate vg from terminal a to terminal b:
// the source is the higher terminal, Vsb measured to vdd.
func idsP(tc Tech, beta, vg, va, vb float64) float64 {
	if va < vb {
		return -idsP(tc, beta, vg, vb, va)
	}
	vs, vsd := va, va-vb // a is the source
	vt := tc.Vtp + tc.Gamma*(math.Sqrt(tc.Phi+tc.Vdd-vs)-math.Sqrt(tc.Phi))
	ov := vs - vg - vt
	switch {
	case ov <= 0:
		return 0
	case vsd >= ov:
		return beta / 2 * ov * ov
	}
	return beta * (ov*vsd - vsd*vsd/2)
}

// betaOf is k' W / L.
func betaOf(k, w, l float64) float64 { return k * w / l }

// resistiveLoadVOL is the low output of an nMOS (beta, gate at vdd, source
// at ground, no body effect) against a resistor r to vdd: the root in
// [0, vdd - Vtn] of beta ((vdd - Vtn) V - V^2 / 2) = (vdd - V) / r, a
// quadratic worked by hand: (beta / 2) V^2 - b V + vdd / r = 0 with
// b = beta (vdd - Vtn) + 1 / r (Shichman and Hodges 1968; the textbook
// resistive-load inverter).
func resistiveLoadVOL(tc Tech, beta, r float64) float64 {
	b := beta*(tc.Vdd-tc.Vtn) + 1/r
	return (b - math.Sqrt(b*b-2*beta*tc.Vdd/r)) / beta
}

// pseudoNMOSVOL is the textbook pseudo-nMOS low output: the nMOS (betaN,
// gate at vdd) below saturation against a saturated pMOS load with its gate
// grounded (betaP; its source at vdd, so no body effect):
// VOL = (vdd - Vtn) - sqrt((vdd - Vtn)^2 - (betaP / betaN) (vdd - |Vtp|)^2).
// Valid while vdd - VOL >= vdd - |Vtp|, i.e. VOL <= |Vtp|.
func pseudoNMOSVOL(tc Tech, betaN, betaP float64) float64 {
	a := tc.Vdd - tc.Vtn
	return a - math.Sqrt(a*a-betaP/betaN*(tc.Vdd-tc.Vtp)*(tc.Vdd-tc.Vtp))
}
