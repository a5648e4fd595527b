package switchsim

import (
	"fmt"
	"sort"
)

// Tech holds the technology parameters of physical mode (MODEL.md §4).
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
	"vih": func(t *Tech) *float64 { return &t.VIH },
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

// Validate reports parameters that make the estimates meaningless.
func (t *Tech) Validate() error {
	switch {
	case t.Vdd <= 0:
		return fmt.Errorf("technology: vdd must be positive")
	case t.Vtn <= 0 || t.Vtn >= t.Vdd || t.Vtp <= 0 || t.Vtp >= t.Vdd:
		return fmt.Errorf("technology: thresholds must lie between 0 and vdd")
	case t.Gamma < 0 || t.Phi <= 0:
		return fmt.Errorf("technology: gamma must be >= 0 and phi > 0")
	case t.Kn <= 0 || t.Kp <= 0 || t.Rn <= 0 || t.Rp <= 0:
		return fmt.Errorf("technology: kn, kp, rn and rp must be positive")
	case t.Wn <= 0 || t.Wp <= 0 || t.L <= 0 || t.Cnode <= 0:
		return fmt.Errorf("technology: wn, wp, l and cnode must be positive")
	case t.VIL < 0 || t.VIH < 0 || t.VIL > t.Vdd || t.VIH > t.Vdd:
		return fmt.Errorf("technology: vil and vih must lie between 0 and vdd")
	case t.VIL != 0 && t.VIH != 0 && t.VIL >= t.VIH:
		return fmt.Errorf("technology: vil must be below vih")
	}
	return nil
}
