package switchsim

import (
	"errors"
	"fmt"
	"math"
)

// DeviceOpts are a device's optional parameters; zero values take the
// technology defaults (sizes) and strong (strength cap).
type DeviceOpts struct {
	W, L     float64
	Strength Strength // HighZ means the default
	// Resistive makes the device reduce the strength of what it passes as
	// IEEE 1364-2005 §7.12 reduces it for rnmos, rtran and the like
	// (resistive.go); its cap is then at most pull.
	Resistive bool
	// Ohms is the device's resistance in physical mode (an R card's value);
	// 0 keeps the resistance physical mode gives it by size or strength.
	Ohms float64
}

// Builder collects a flat netlist by name. Nodes are created when first
// named; Compile checks the whole and turns it into dense arrays.
// Every method returns an error instead of panicking on bad arguments, so
// a reader can attach its own position to the message.
type Builder struct {
	name, desc    string
	power, ground string
	tech          Tech

	nodeIdx  map[string]int32
	nodes    []bnode
	devIdx   map[string]int32
	devs     []bdev
	inputs   []int32
	outputs  []int32
	declared map[string]bool   // names given to Input/Output/Node
	original map[string]string // railyard name -> the spelling a netlist gave it
}

type bnode struct {
	name   string
	cap    float64
	charge Strength
	input  bool
}

type bdev struct {
	name     string
	kind     DeviceKind
	gate     int32 // -1 for pulls
	a, b     int32
	w, l     float64
	strength Strength
	resist   bool
	ohms     float64
}

// NewBuilder starts an empty netlist with rails vdd and gnd and the generic technology.
func NewBuilder() *Builder {
	return &Builder{
		power: "vdd", ground: "gnd", tech: Generic(),
		nodeIdx: map[string]int32{}, devIdx: map[string]int32{}, declared: map[string]bool{},
	}
}

// SetName sets the design's name and one-line description.
func (b *Builder) SetName(name, desc string) { b.name, b.desc = name, desc }

// SetRails names the power and ground rails.
func (b *Builder) SetRails(power, ground string) error {
	if power == "" || ground == "" {
		return errors.New("rail names must not be empty")
	}
	if power == ground {
		return fmt.Errorf("power and ground are both %q", power)
	}
	b.power, b.ground = power, ground
	return nil
}

// SetTech sets the technology used by physical mode and for default sizes.
func (b *Builder) SetTech(t Tech) { b.tech = t }

// Tech returns the technology set so far.
func (b *Builder) Tech() Tech { return b.tech }

func (b *Builder) node(name string) (int32, error) {
	if name == "" {
		return -1, errors.New("missing node name")
	}
	if i, ok := b.nodeIdx[name]; ok {
		return i, nil
	}
	i := int32(len(b.nodes))
	b.nodes = append(b.nodes, bnode{name: name})
	b.nodeIdx[name] = i
	return i, nil
}

// Input declares a primary input.
func (b *Builder) Input(name string) error {
	i, err := b.node(name)
	if err != nil {
		return err
	}
	if b.nodes[i].input {
		return fmt.Errorf("input %q declared twice", name)
	}
	b.nodes[i].input = true
	b.inputs = append(b.inputs, i)
	b.declared[name] = true
	return nil
}

// Output marks a node of interest: listed first and checked by the check command.
func (b *Builder) Output(name string) error {
	i, err := b.node(name)
	if err != nil {
		return err
	}
	for _, o := range b.outputs {
		if o == i {
			return fmt.Errorf("output %q declared twice", name)
		}
	}
	b.outputs = append(b.outputs, i)
	b.declared[name] = true
	return nil
}

// Node annotates a node with a capacitance (0: the technology default) and
// a charge class (HighZ: medium, the IEEE 1364-2005 trireg default).
func (b *Builder) Node(name string, cap float64, charge Strength) error {
	i, err := b.node(name)
	if err != nil {
		return err
	}
	if cap < 0 || math.IsNaN(cap) || math.IsInf(cap, 0) {
		return fmt.Errorf("node %q: capacitance must be a positive number", name)
	}
	if charge != HighZ && !charge.IsCharge() {
		return fmt.Errorf("node %q: charge must be small, medium or large, not %s", name, charge)
	}
	if cap > 0 {
		b.nodes[i].cap = cap
	}
	if charge != HighZ {
		b.nodes[i].charge = charge
	}
	b.declared[name] = true
	return nil
}

func (b *Builder) device(name string, kind DeviceKind, gate, x, y string, o DeviceOpts) error {
	if name == "" {
		return errors.New("missing device name")
	}
	if _, dup := b.devIdx[name]; dup {
		return fmt.Errorf("duplicate device name %q", name)
	}
	if o.W < 0 || o.L < 0 || math.IsNaN(o.W) || math.IsNaN(o.L) || math.IsInf(o.W, 0) || math.IsInf(o.L, 0) {
		return fmt.Errorf("device %q: sizes must be positive numbers", name)
	}
	if o.Strength.IsCharge() || o.Strength > Supply {
		return fmt.Errorf("device %q: strength must be supply, strong, pull or weak, not %s", name, o.Strength)
	}
	if o.Ohms < 0 || math.IsNaN(o.Ohms) || math.IsInf(o.Ohms, 0) {
		return fmt.Errorf("device %q: resistance must be a positive number", name)
	}
	d := bdev{name: name, kind: kind, gate: -1, w: o.W, l: o.L, strength: o.Strength, resist: o.Resistive, ohms: o.Ohms}
	if d.strength == HighZ {
		d.strength = Strong
		if kind == PullUp || kind == PullDown {
			d.strength = Pull
		}
	}
	if d.resist {
		d.strength = min(d.strength, Pull) // what any signal leaves a resistive device at, at most
	}
	var err error
	if kind < PullUp {
		if gate == "" {
			return fmt.Errorf("device %q: missing gate terminal", name)
		}
		if d.gate, err = b.node(gate); err != nil {
			return err
		}
	}
	if y == "" || ((kind < PullUp || kind == Tran) && x == "") {
		return fmt.Errorf("device %q: missing channel terminal", name)
	}
	if kind < PullUp || kind == Tran {
		if d.a, err = b.node(x); err != nil {
			return err
		}
	} // a pull's rail terminal is resolved in Compile: the rails may be renamed later
	if d.b, err = b.node(y); err != nil {
		return err
	}
	b.devIdx[name] = int32(len(b.devs))
	b.devs = append(b.devs, d)
	return nil
}

// NMOS adds an nMOS with gate and channel terminals a and c (in any order).
func (b *Builder) NMOS(name, gate, a, c string, o DeviceOpts) error {
	return b.device(name, NMOS, gate, a, c, o)
}

// PMOS adds a pMOS with gate and channel terminals a and c (in any order).
func (b *Builder) PMOS(name, gate, a, c string, o DeviceOpts) error {
	return b.device(name, PMOS, gate, a, c, o)
}

// TGate adds a transmission gate as two devices, NAME.n (gate ngate) and
// NAME.p (gate pgate), in parallel between a and c.
func (b *Builder) TGate(name, ngate, pgate, a, c string, wn, wp, l float64, s Strength) error {
	if name == "" {
		return errors.New("missing device name")
	}
	if _, dup := b.devIdx[name+".n"]; dup {
		return fmt.Errorf("duplicate device name %q", name)
	}
	if _, dup := b.devIdx[name+".p"]; dup {
		return fmt.Errorf("duplicate device name %q", name)
	}
	if err := b.device(name+".n", NMOS, ngate, a, c, DeviceOpts{W: wn, L: l, Strength: s}); err != nil {
		return err
	}
	return b.device(name+".p", PMOS, pgate, a, c, DeviceOpts{W: wp, L: l, Strength: s})
}

// Pull adds a resistive pull from node to the power rail (up) or the ground
// rail; its strength defaults to pull. The rail is named at Compile time.
func (b *Builder) Pull(name, node string, up bool, s Strength) error {
	kind := PullDown
	if up {
		kind = PullUp
	}
	return b.device(name, kind, "", "", node, DeviceOpts{Strength: s})
}

// Original records the spelling a node or device had in the file it came
// from (a netlist's `a_193_47#` or `net<3>`) when its railyard name
// differs. People are shown the original (Netlist.DisplayName); files that
// railyard writes and reads back (steps, traces) use the railyard name.
func (b *Builder) Original(name, original string) error {
	if name == "" || original == "" {
		return errors.New("missing name")
	}
	if name == original {
		return nil
	}
	if b.original == nil {
		b.original = map[string]string{}
	}
	b.original[name] = original
	return nil
}

// HasDevice reports whether a device of that name exists.
func (b *Builder) HasDevice(name string) bool { _, ok := b.devIdx[name]; return ok }

// HasNode reports whether a node of that name has been named.
func (b *Builder) HasNode(name string) bool { _, ok := b.nodeIdx[name]; return ok }
