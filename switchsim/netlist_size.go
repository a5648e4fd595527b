package switchsim

import (
	"fmt"
	"math"
)

// WithSize returns the netlist with transistor d drawn w wide and l long
// (metres): a shallow copy sharing every array of nl but the sizes, so
// that a designer can try a size (the explorer's keeper sizing) and run
// the copy beside the original. nl is left unchanged. A pull has no size,
// and a device whose resistance is given in ohms takes it from that, not
// from W/L: both are refused, as are sizes that are not positive and
// finite.
func (nl *Netlist) WithSize(d int, w, l float64) (*Netlist, error) {
	if d < 0 || d >= nl.NumDevices() {
		return nil, fmt.Errorf("no device %d", d)
	}
	switch k := nl.devKind[d]; {
	case k != NMOS && k != PMOS:
		return nil, fmt.Errorf("%s is a %s: it has no W/L to change", nl.devName[d], k)
	case nl.devOhms != nil && nl.devOhms[d] > 0:
		return nil, fmt.Errorf("%s has a resistance of its own (%.3g ohm): its W/L would change nothing", nl.devName[d], nl.devOhms[d])
	}
	for _, v := range []float64{w, l} {
		if !(v > 0) || math.IsInf(v, 0) {
			return nil, fmt.Errorf("%s: a size must be a positive number of metres, not %g", nl.devName[d], v)
		}
	}
	c := *nl
	c.devW, c.devL = make([]float64, nl.NumDevices()), make([]float64, nl.NumDevices())
	for i := range c.devW {
		c.devW[i], c.devL[i] = nl.width(i), nl.length(i)
	}
	c.devW[d], c.devL[d] = w, l
	return &c, nil
}
