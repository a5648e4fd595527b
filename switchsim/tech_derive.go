package switchsim

import "math"

// Derived technology values (DEVELOPERS.md, physical mode): the reference inverter's
// thresholds, the body-effect pass limits and the default resistances.

// Thresholds returns the logic thresholds physical mode decides values by:
// VIL and VIH, the unity-gain points of the reference inverter (square-law
// nMOS of width Wn and pMOS of width Wp, both of length L), unless the
// technology overrides them, and VM, the inverter's switching threshold.
func (t Tech) Thresholds() (vil, vih, vm float64) {
	vm = t.SwitchingThreshold()
	vil, vih = t.unityGain(vm)
	if t.VIL > 0 {
		vil = t.VIL
	}
	if t.VIH > 0 {
		vih = t.VIH
	}
	return vil, vih, vm
}

// SwitchingThreshold is the reference inverter's VM, where both devices are
// saturated and carry the same square-law current:
// VM = (Vtn + r (vdd - |Vtp|)) / (1 + r), r = sqrt(kp wp / (kn wn)).
func (t Tech) SwitchingThreshold() float64 {
	r := math.Sqrt(t.Kp * t.Wp / (t.Kn * t.Wn))
	return (t.Vtn + r*(t.Vdd-t.Vtp)) / (1 + r)
}

// unityGain finds the input voltages where the reference inverter's transfer
// curve has slope -1, one below VM (VIL) and one above (VIH), by bisection on
// the square-law device equations. With Vtn + |Vtp| >= vdd the curve has no
// such points (it jumps at VM) and both are VM.
func (t Tech) unityGain(vm float64) (vil, vih float64) {
	if t.Vtn+t.Vtp >= t.Vdd {
		return vm, vm
	}
	inv := refInverter{vdd: t.Vdd, vtn: t.Vtn, vtp: t.Vtp, bn: t.Kn * t.Wn / t.L, bp: t.Kp * t.Wp / t.L}
	// Below VM the gain grows in magnitude from 0 (at Vtn) to infinity (at
	// VM); above VM it falls back to 0 (at vdd - |Vtp|). steep tells which side
	// of -1 the slope is on; the endpoints themselves are never evaluated.
	lo, hi := t.Vtn, vm
	for i := 0; i < 200 && hi-lo > 1e-15; i++ {
		mid := (lo + hi) / 2
		if inv.steep(mid) {
			hi = mid
		} else {
			lo = mid
		}
	}
	vil = (lo + hi) / 2
	lo, hi = vm, t.Vdd-t.Vtp
	for i := 0; i < 200 && hi-lo > 1e-15; i++ {
		mid := (lo + hi) / 2
		if inv.steep(mid) {
			lo = mid
		} else {
			hi = mid
		}
	}
	vih = (lo + hi) / 2
	return vil, vih
}

// refInverter is a square-law CMOS inverter; bn and bp are k W / L.
type refInverter struct{ vdd, vtn, vtp, bn, bp float64 }

// currents returns the nMOS and pMOS drain currents for input vi and output
// vo, and the partial derivatives of their difference h = In - Ip.
func (c refInverter) currents(vi, vo float64) (h, hvi, hvo float64) {
	var in, inVi, inVo, ip, ipVi, ipVo float64
	if ov := vi - c.vtn; ov > 0 {
		if vo >= ov { // saturated
			in, inVi = c.bn/2*ov*ov, c.bn*ov
		} else {
			in, inVi, inVo = c.bn*(ov*vo-vo*vo/2), c.bn*vo, c.bn*(ov-vo)
		}
	}
	if ov, vsd := c.vdd-vi-c.vtp, c.vdd-vo; ov > 0 {
		if vsd >= ov {
			ip, ipVi = c.bp/2*ov*ov, -c.bp*ov
		} else {
			ip, ipVi, ipVo = c.bp*(ov*vsd-vsd*vsd/2), -c.bp*vsd, -c.bp*(ov-vsd)
		}
	}
	return in - ip, inVi - ipVi, inVo - ipVo
}

// vout solves In = Ip for the output at input vi. h rises with vo (the nMOS
// conducts more, the pMOS less), so bisection on [0, vdd] finds it.
func (c refInverter) vout(vi float64) float64 {
	lo, hi := 0.0, c.vdd
	for i := 0; i < 200 && hi-lo > 1e-16; i++ {
		mid := (lo + hi) / 2
		if h, _, _ := c.currents(vi, mid); h < 0 {
			lo = mid
		} else {
			hi = mid
		}
	}
	return (lo + hi) / 2
}

// steep reports whether the transfer curve at vi is steeper than -1. By
// implicit differentiation of h(vi, vo) = 0, dvo/dvi = -hvi / hvo, so the
// slope is below -1 exactly where hvi > hvo (hvo >= 0 on the curve).
func (c refInverter) steep(vi float64) bool {
	_, hvi, hvo := c.currents(vi, c.vout(vi))
	return hvi > hvo
}

// PassHigh is the highest level an nMOS with its gate at vg passes: its
// source (the output) rises until Vout = vg - Vt(Vout), with the body effect
// Vt = Vtn + gamma (sqrt(phi + Vout) - sqrt(phi)). With u = sqrt(phi + Vout)
// this is u^2 + gamma u - (vg - Vtn + gamma sqrt(phi) + phi) = 0 (DEVELOPERS.md, physical mode).
// A gate at or below Vtn passes nothing above 0.
func (t Tech) PassHigh(vg float64) float64 {
	return bodyLimit(vg, t.Vtn, t.Gamma, t.Phi)
}

// PassLow is the lowest level a pMOS with its gate at vg passes: the mirror
// image of PassHigh with the body at vdd, Vout = vg + |Vt(vdd - Vout)|.
// A gate at or above vdd - |Vtp| passes nothing below vdd.
func (t Tech) PassLow(vg float64) float64 {
	return t.Vdd - bodyLimit(t.Vdd-vg, t.Vtp, t.Gamma, t.Phi)
}

// bodyLimit solves v = vg - (vt0 + gamma (sqrt(phi + v) - sqrt(phi))) for v >= 0.
func bodyLimit(vg, vt0, gamma, phi float64) float64 {
	if vg <= vt0 {
		return 0
	}
	c := vg - vt0 + gamma*math.Sqrt(phi) + phi
	u := (-gamma + math.Sqrt(gamma*gamma+4*c)) / 2
	return max(u*u-phi, 0)
}

// Resistance factors for devices without sizes (pulls, and pull or weak
// devices left at the default size), relative to RefResistance. A default
// strong device beats a default pull 1:10 and a pull beats a weak device
// 1:4, so each contest lands well outside the band between VIL and VIH.
const (
	supplyFactor = 0.1
	strongFactor = 1
	pullFactor   = 10
	weakFactor   = 40
)

// RefResistance is the on-resistance of the weaker default-size device:
// max(rn L / wn, rp L / wp).
func (t Tech) RefResistance() float64 {
	return max(t.Rn*t.L/t.Wn, t.Rp*t.L/t.Wp)
}

// DefaultResistance is the on-resistance given to a device of strength s
// that has no size of its own: RefResistance times 0.1 (supply), 1 (strong),
// 10 (pull) or 40 (weak).
func (t Tech) DefaultResistance(s Strength) float64 {
	f := strongFactor
	switch s {
	case Supply:
		return supplyFactor * t.RefResistance()
	case Pull:
		f = pullFactor
	case Weak:
		f = weakFactor
	}
	return float64(f) * t.RefResistance()
}
