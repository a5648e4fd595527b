package switchsim

import (
	"fmt"
	"math"
	"sort"
)

// Tech holds the technology parameters of physical mode (DEVELOPERS.md, physical mode).
// Voltages are in volts, sizes in metres, capacitances in farads,
// resistances in ohms per square, kn and kp in A/V^2. Vtp is kept as a
// magnitude. VIL and VIH are zero unless overridden; Derive fills them.
type Tech struct {
	Name   string
	Vdd    float64
	Vtn    float64
	Vtp    float64 // magnitude of the pMOS threshold
	Gamma  float64 // body-effect coefficient, V^0.5
	Phi    float64 // |2 phi_F|, V
	Kn, Kp float64 // process transconductance, A/V^2
	Rn, Rp float64 // effective on-resistance per square, ohm
	Wn, Wp float64 // default widths, and the reference inverter's
	L      float64 // default length
	Cnode  float64 // default node capacitance
	Cdiff  float64 // default capacitance of a diffusion node (Netlist.Diffusion)
	VIL    float64 // 0: computed from the reference inverter
	VIH    float64 // 0: computed from the reference inverter
}

// Generic returns the built-in "generic" preset: illustrative long-channel
// values chosen from memory for teaching-scale examples, not any foundry's.
func Generic() Tech {
	return Tech{
		Name: "generic",
		Vdd:  1.8, Vtn: 0.45, Vtp: 0.45,
		Gamma: 0.4, Phi: 0.7,
		Kn: 170e-6, Kp: 60e-6,
		Rn: 12.5e3, Rp: 30e3,
		Wn: 0.36e-6, Wp: 0.72e-6, L: 0.18e-6,
		Cnode: 5e-15,
		// A junction between two series devices: a tenth of a node
		// loaded by gates (from memory, the order of a minimum-size
		// drain's junction capacitance at this scale).
		Cdiff: 0.5e-15,
	}
}

// Presets lists the built-in technology presets by name.
func Presets() []string { return []string{"generic"} }

// Preset returns a built-in preset by name.
func Preset(name string) (Tech, bool) {
	if name == "generic" {
		return Generic(), true
	}
	return Tech{}, false
}

// techKeys maps the design format's technology keys to fields.
var techKeys = map[string]func(*Tech) *float64{
	"vdd": func(t *Tech) *float64 { return &t.Vdd }, "vtn": func(t *Tech) *float64 { return &t.Vtn },
	"vtp": func(t *Tech) *float64 { return &t.Vtp }, "gamma": func(t *Tech) *float64 { return &t.Gamma },
	"phi": func(t *Tech) *float64 { return &t.Phi }, "kn": func(t *Tech) *float64 { return &t.Kn },
	"kp": func(t *Tech) *float64 { return &t.Kp }, "rn": func(t *Tech) *float64 { return &t.Rn },
	"rp": func(t *Tech) *float64 { return &t.Rp }, "wn": func(t *Tech) *float64 { return &t.Wn },
	"wp": func(t *Tech) *float64 { return &t.Wp }, "l": func(t *Tech) *float64 { return &t.L },
	"cnode": func(t *Tech) *float64 { return &t.Cnode }, "vil": func(t *Tech) *float64 { return &t.VIL },
	"vih": func(t *Tech) *float64 { return &t.VIH }, "cdiff": func(t *Tech) *float64 { return &t.Cdiff },
}

// TechKeys returns the accepted technology keys, sorted.
func TechKeys() []string {
	keys := make([]string, 0, len(techKeys))
	for k := range techKeys {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	return keys
}

// Set assigns one technology key. vtp may be given signed; its magnitude is kept.
func (t *Tech) Set(key string, v float64) error {
	f, ok := techKeys[key]
	if !ok {
		return fmt.Errorf("unknown technology key %q (want one of %v)", key, TechKeys())
	}
	if key == "vtp" && v < 0 {
		v = -v
	}
	*f(t) = v
	return nil
}

// Get reads one technology key.
func (t *Tech) Get(key string) (float64, bool) {
	f, ok := techKeys[key]
	if !ok {
		return 0, false
	}
	return *f(t), true
}

// TechError is a technology value out of its range. Key names the
// technology key at fault (the design format's, switchsim/FORMATS.md), so that a
// reader can report the error at that key's position.
type TechError struct {
	Key string
	Msg string
}

func (e *TechError) Error() string { return "technology: " + e.Msg }

// techRanges are the ranges a technology value must lie in, inclusive:
// wide bounds around every CMOS process (from 15 V metal-gate logic to
// deep-submicron), narrow enough that every derived value stays finite.
// vtn and vtp must also lie below vdd.
var techRanges = []struct {
	key    string
	lo, hi float64
	unit   string
}{
	{"vdd", 0.1, 100, "V"},
	{"vtn", 0.01, 10, "V"},
	{"vtp", 0.01, 10, "V"},
	{"gamma", 0, 5, "V^0.5"},
	{"phi", 0.05, 5, "V"},
	{"kn", 1e-9, 1, "A/V^2"},
	{"kp", 1e-9, 1, "A/V^2"},
	{"rn", 1e-3, 1e12, "ohm per square"},
	{"rp", 1e-3, 1e12, "ohm per square"},
	// Sizes and the node capacitance only need to be positive and finite
	// here: the estimates use their ratios and products; the design reader
	// notes values outside a cell's plausible range (README).
	{"wn", 1e-12, 1e3, "m"},
	{"wp", 1e-12, 1e3, "m"},
	{"l", 1e-12, 1e3, "m"},
	{"cnode", 1e-21, 1, "F"},
	{"cdiff", 1e-21, 1, "F"},
}

// Validate reports a parameter that makes the estimates meaningless, as a
// *TechError naming its key: a value outside its physical range
// (techRanges), thresholds not below vdd, a supply at or below Vtn + |Vtp|
// (the reference inverter then has no gain, so VIL and VIH do not exist)
// unless both are given, vil/vih out of order, or derived thresholds that
// are not finite.
func (t *Tech) Validate() error {
	for _, r := range techRanges {
		v, _ := t.Get(r.key)
		if !(v >= r.lo && v <= r.hi) { // NaN fails too
			msg := fmt.Sprintf("%s=%g is outside the physical range %g to %g %s", r.key, v, r.lo, r.hi, r.unit)
			if v <= 0 && r.lo > 0 {
				msg = r.key + " must be positive: " + msg
			}
			return &TechError{r.key, msg}
		}
	}
	switch {
	case t.Vtn >= t.Vdd:
		return &TechError{"vtn", fmt.Sprintf("thresholds must lie between 0 and vdd: vtn=%g V is not below vdd (%g V)", t.Vtn, t.Vdd)}
	case t.Vtp >= t.Vdd:
		return &TechError{"vtp", fmt.Sprintf("thresholds must lie between 0 and vdd: vtp=%g V is not below vdd (%g V)", t.Vtp, t.Vdd)}
	}
	for _, k := range []string{"vil", "vih"} {
		if v, _ := t.Get(k); !(v >= 0 && v < t.Vdd) {
			return &TechError{k, fmt.Sprintf("%s=%g V must lie between 0 and vdd (%g V)", k, v, t.Vdd)}
		}
	}
	if t.VIL != 0 && t.VIH != 0 && t.VIL >= t.VIH {
		return &TechError{"vil", fmt.Sprintf("vil=%g V must be below vih (%g V)", t.VIL, t.VIH)}
	}
	if t.Vtn+t.Vtp >= t.Vdd && (t.VIL == 0 || t.VIH == 0) {
		return &TechError{"vdd", fmt.Sprintf("vdd=%g V is not above vtn + vtp (%g V): the reference inverter has no gain, so VIL and VIH do not exist; raise vdd, lower the thresholds, or give vil= and vih=", t.Vdd, t.Vtn+t.Vtp)}
	}
	vil, vih, vm := t.Thresholds()
	switch {
	case !(vil > 0 && vil < vih && vih < t.Vdd):
		return &TechError{"vdd", fmt.Sprintf("the thresholds these values give (VIL %g V, VIH %g V) are not between 0 and vdd in order", vil, vih)}
	case math.IsNaN(vm) || math.IsInf(vm, 0) || math.IsNaN(t.PassHigh(t.Vdd)) || math.IsNaN(t.PassLow(0)):
		return &TechError{"vdd", "the switching threshold or the pass limits these values give are not finite"}
	}
	return nil
}
