package switchsim

// Resistive devices and always-on links (IEEE 1364-2005 §7.12).
//
// A non-resistive device passes a signal at min(strength, cap): supply
// becomes strong and every other strength passes unchanged. A resistive
// device (rnmos, rpmos, rcmos, rtran, rtranif0/1, and a netlist's resistor)
// first reduces the strength one step down the table of §7.12 and then
// applies its cap. The engine's strongest-first resolution (solve.go) needs
// only that a device never raises a strength, which both rules keep.

// resistiveReduction is the strength reduction table of IEEE 1364-2005
// §7.12, indexed by the engine's strength order: supply and strong drive
// become pull, pull becomes weak, weak and large become medium, medium and
// small become small, highz stays highz.
var resistiveReduction = [...]Strength{
	HighZ:  HighZ,
	Small:  Small,
	Medium: Small,
	Large:  Medium,
	Weak:   Medium,
	Pull:   Weak,
	Strong: Pull,
	Supply: Pull,
}

// ResistiveReduction returns the strength a signal of strength s leaves a
// resistive device at, before the device's own cap (IEEE 1364-2005 §7.12).
func ResistiveReduction(s Strength) Strength {
	if int(s) >= len(resistiveReduction) {
		return HighZ
	}
	return resistiveReduction[s]
}

// pass is the strength at which device d passes a signal of strength s.
func (nl *Netlist) pass(d int32, s Strength) Strength {
	if nl.devResist != nil && nl.devResist[d] {
		s = resistiveReduction[s]
	}
	return min(s, nl.devCap[d])
}

// Tran adds an always-on device between nodes a and c: an IEEE 1364 tran,
// or with o.Resistive an rtran (a netlist's resistor, with o.Ohms its
// resistance for physical mode). Its cap defaults to strong (pull when
// resistive).
func (b *Builder) Tran(name, a, c string, o DeviceOpts) error {
	return b.device(name, Tran, "", a, c, o)
}

// PullWith is Pull with a device's options: a strength cap (default pull)
// and, for a netlist's resistor to a rail, its resistance in ohms.
func (b *Builder) PullWith(name, node string, up bool, o DeviceOpts) error {
	kind := PullDown
	if up {
		kind = PullUp
	}
	return b.device(name, kind, "", "", node, o)
}
