package switchsim

import "math"

// What physical mode tells its callers (the session, the reports, the
// explorer): margins, the picture of a fight, each device's bias and size,
// and which nodes' levels are checked.

// Watch tells the Sim which nodes the session checks, besides the outputs:
// their levels matter even where they gate nothing, so the level warnings
// (degraded, level-lost) are given for them (DEVELOPERS.md, physical mode). It replaces the
// nodes watched before; it takes effect at the next Settle.
func (s *Sim) Watch(nodes []int) {
	p := &s.phys
	if s.mode != Physical {
		return
	}
	clear(p.watch)
	for _, o := range s.nl.outputs {
		p.watch[o] = true
	}
	for _, n := range nodes {
		if n >= 0 && n < len(p.watch) {
			p.watch[n] = true
		}
	}
}

// Margin is how far a node's level is from failing (DEVELOPERS.md, physical mode).
type Margin struct {
	// Noise is the distance from the undefined band: V - VIH for a 1,
	// VIL - V for a 0, negative inside the band (and for a value whose level
	// was lost, measured for that value). NaN in ideal mode and where the
	// voltage is unknown.
	Noise float64
	// Write is, for a node of a fight that drives a stage, |V - VM| with VM
	// that stage's own switching threshold (the smallest over the stages it
	// drives): how surely the fight flips, or fails to flip, the stage.
	// NaN otherwise.
	Write float64
	// StageVM is the switching threshold of the stage the node drives (the
	// one of Write where there are several), from that stage's devices:
	// VM = (Vtn + r (vdd - |Vtp|)) / (1 + r), r = sqrt(kp Wp / Lp / (kn Wn / Ln)).
	// NaN where the node drives no complementary pair.
	StageVM float64
}

// Margin returns node n's margins at the present state.
func (s *Sim) Margin(n int) Margin {
	m := Margin{Noise: math.NaN(), Write: math.NaN(), StageVM: math.NaN()}
	if s.mode != Physical {
		return m
	}
	p := &s.phys
	v := s.volts[n]
	m.StageVM = s.stageVM(n, v)
	if math.IsNaN(v) {
		return m
	}
	val := s.val[n]
	if val == VX && !s.source[n] {
		val = p.info[n].Lost
	}
	switch val {
	case V1:
		m.Noise = v - p.vih
	case V0:
		m.Noise = p.vil - v
	default: // inside the band: how deep
		m.Noise = -min(v-p.vil, p.vih-v)
	}
	if !s.source[n] && p.info[n].How == howFight && !math.IsNaN(m.StageVM) {
		m.Write = math.Abs(v - m.StageVM)
	}
	return m
}

// stageVM returns the switching threshold of the stage node n drives: a
// pMOS and an nMOS it gates whose channels meet at one node, directly or
// through one more device (a clocked inverter's enables). With several,
// the one whose VM is nearest v (the worst write margin) counts; with v
// unknown, the first.
func (s *Sim) stageVM(n int, v float64) float64 {
	nl := s.nl
	t := &nl.Tech
	best := math.NaN()
	gated := nl.gateDev[nl.gateStart[n]:nl.gateStart[n+1]]
	for _, dn := range gated {
		if nl.devKind[dn] != NMOS {
			continue
		}
		for _, dp := range gated {
			if nl.devKind[dp] != PMOS || !s.meet(dn, dp) {
				continue
			}
			r := math.Sqrt(s.phys.dv[dp].beta / s.phys.dv[dn].beta) // beta = k' W / L
			vm := (t.Vtn + r*(t.Vdd-t.Vtp)) / (1 + r)
			if math.IsNaN(best) || (!math.IsNaN(v) && math.Abs(v-vm) < math.Abs(v-best)) {
				best = vm
			}
		}
	}
	return best
}

// meet reports whether the channels of devices a and b meet at a node that
// is not a source, directly or through one more device.
func (s *Sim) meet(a, b int32) bool {
	nl := s.nl
	ends := func(d int32) [2]int32 { return [2]int32{nl.devA[d], nl.devB[d]} }
	for _, x := range ends(a) {
		if s.nl.nodeKind[x] == Power || s.nl.nodeKind[x] == Ground {
			continue
		}
		for _, y := range ends(b) {
			if x == y {
				return true
			}
		}
		for _, d := range nl.chanDev[nl.chanStart[x]:nl.chanStart[x+1]] {
			if d == a || d == b {
				continue
			}
			o := nl.other(d, x)
			for _, y := range ends(b) {
				if o == y && nl.nodeKind[o] != Power && nl.nodeKind[o] != Ground {
					return true
				}
			}
		}
	}
	return false
}

// FightPicture is what the picture of a fight at a node needs: the currents
// of its two sides as functions of the node's voltage from the level-1
// equations, with every other node held where it settled (the node's own
// current law), their crossing (the node's voltage), VIL, VIH and the
// switching threshold of the stage it drives.
type FightPicture struct {
	Node     int
	Volts    float64 // where the two currents cross
	VIL, VIH float64
	StageVM  float64 // NaN where the node drives no stage
	Up, Down []int   // the devices on the 1 side (their other end above the node) and on the 0 side
	elems    []physElem
	up       []bool
	nt       physNet
}

// Fight returns the picture of the fight at node n, false where n is not
// a node of a fight (or of a part moved by partly-on devices) in physical
// mode.
func (s *Sim) Fight(n int) (FightPicture, bool) {
	p := &s.phys
	if s.mode != Physical || s.source[n] || math.IsNaN(s.volts[n]) {
		return FightPicture{}, false
	}
	if h := p.info[n].How; h != howFight && h != howLeak {
		return FightPicture{}, false
	}
	nl := s.nl
	v := s.volts[n]
	f := FightPicture{Node: n, Volts: v, VIL: p.vil, VIH: p.vih, StageVM: s.stageVM(n, v)}
	f.nt.init(nl.Tech)
	xv := p.vdd // an X source as in the solution reported (see fightInfo)
	if s.val[n] == V1 {
		xv = 0
	}
	// A node the vertex solve decided is drawn with its devices of unknown
	// state on (at the full gate level), the assignment that fights it most.
	vertex := p.info[n].Vertex
	for _, d := range nl.chanDev[nl.chanStart[n]:nl.chanStart[n+1]] {
		c := s.cond[d]
		if (c == Off && !p.leak[d]) || (c == Unknown && !vertex) || nl.devA[d] == nl.devB[d] {
			continue
		}
		e := s.element(d, xv)
		o, other := nl.other(d, int32(n)), e.va
		if o != nl.devA[d] {
			other = e.vb
		}
		if !s.source[o] {
			other = s.volts[o]
		}
		if math.IsNaN(other) {
			continue
		}
		e.a, e.va, e.b = -1, other, 0 // from the other end into the node
		up := other > v
		f.elems, f.up = append(f.elems, e), append(f.up, up)
		if up {
			f.Up = append(f.Up, int(d))
		} else {
			f.Down = append(f.Down, int(d))
		}
	}
	return f, true
}

// Currents returns, with the node at v, the current its 1 side drives into
// it and the current its 0 side draws out of it, in amperes. They are equal
// at Volts.
func (f *FightPicture) Currents(v float64) (up, down float64) {
	x := []float64{v}
	for i := range f.elems {
		e := &f.elems[i]
		in, _, _ := f.nt.flow(e, e.va, e.at(x, false))
		if f.up[i] {
			up += in
		} else {
			down -= in
		}
	}
	return up, down
}

// Bias is what physical mode knows about one device at the present state.
type Bias struct {
	// GateVolts is the gate's voltage as physical mode uses it: a source's
	// own, else the gate node's as recorded at the start of the round it
	// last changed (equal to the node's once settled); an unknown voltage is
	// the full level of the state the device is in. NaN for pulls and in
	// ideal mode.
	GateVolts float64
	// FullGate: the gate sits at a rail's level (0 or vdd), so the device
	// is fully on or fully off.
	FullGate bool
	// PartlyOn: off by logic, but its gate's voltage exceeds its threshold
	// from the terminal acting as source: it conducts (partial-on).
	PartlyOn bool
	// Current is the channel current from terminal A to terminal B at the
	// present voltages by the level-1 equations, in amperes (a pull's by
	// Ohm's law); 0 for a device off; NaN in ideal mode, for a device of
	// unknown state and where a terminal's voltage is unknown.
	Current float64
	// Limit is the level the device passes at most for its gate voltage:
	// an nMOS's highest 1, a pMOS's lowest 0; NaN for pulls and in ideal mode.
	Limit float64
}

// DeviceBias returns device d's bias at the present state.
func (s *Sim) DeviceBias(d int) Bias {
	nan := math.NaN()
	b := Bias{GateVolts: nan, Current: nan, Limit: nan}
	if s.mode != Physical {
		return b
	}
	nl := s.nl
	p := &s.phys
	d32 := int32(d)
	b.GateVolts = s.gateVolts(d32)
	b.FullGate = nl.devKind[d] >= PullUp || b.GateVolts == 0 || b.GateVolts == p.vdd
	b.Limit = s.passLimit(d32)
	c := s.cond[d]
	b.PartlyOn = c == Off && p.leak[d] && s.partlyOn(d32, b.GateVolts)
	va, vb := s.volts[nl.devA[d]], s.volts[nl.devB[d]]
	switch {
	case c == Unknown, math.IsNaN(va), math.IsNaN(vb):
	case c == Off && !b.PartlyOn:
		b.Current = 0
	default:
		e := physElem{kind: nl.devKind[d], beta: p.dv[d].beta, vg: b.GateVolts}
		if e.kind == PMOS {
			e.vg = p.vdd - b.GateVolts
		}
		b.Current, _, _ = p.net.flow(&e, va, vb)
	}
	return b
}

// GateVolts returns device d's gate voltage as physical mode uses it
// (Bias.GateVolts).
func (s *Sim) GateVolts(d int) float64 { return s.DeviceBias(d).GateVolts }

// DeviceSize returns device d's width and length as physical mode uses
// them, in metres: the drawn size, with an unsized pull or weak transistor's
// length stretched to its documented default resistance (DEVELOPERS.md,
// physical mode); 0, 0 for pulls.
func (nl *Netlist) DeviceSize(d int) (w, l float64) { return effectiveSize(nl, d) }

// OnResistance returns device d's effective on-resistance in ohms, the
// resistance of the delay estimate: r_sq L / W (rn, rp), or a pull's
// documented default.
func (nl *Netlist) OnResistance(d int) float64 { return deviceResistance(nl, d) }
