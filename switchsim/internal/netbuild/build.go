package netbuild

import (
	"errors"

	"railyard/switchsim"
	"railyard/switchsim/diag"
)

// Design is a flattened netlist before naming: nodes and devices with the
// railyard names they want, their original spellings and positions. A
// reader fills it; Build names everything and compiles it.
type Design struct {
	Name, Desc string
	Tech       switchsim.Tech
	Nodes      []Node
	Devices    []Device
	Power      int32 // node index of the power rail
	Ground     int32
	Inputs     []int32
	Outputs    []int32
	At         diag.Pos // where the design is defined: the position of problems of the whole
	nodeIx     map[string]int32
}

// Node is one node: Want is the railyard name it asks for (escaped), Orig
// the spelling people are shown, Exact whether Want is Orig unchanged
// but for case (such names keep theirs when two meet).
type Node struct {
	Want, Orig string
	Exact      bool
	Cap        float64            // farads; 0: the technology's default
	Charge     switchsim.Strength // HighZ: medium
	Pos        diag.Pos           // where it was first named
	Used       bool               // a device touches it (gate or channel)
}

// DeviceKind says which Builder method a Device becomes.
type DeviceKind uint8

const (
	NMOS DeviceKind = iota
	PMOS
	PullUp   // B is the node; A unused
	PullDown // B is the node; A unused
	Tran     // always on between A and B
)

// Device is one device; Gate is -1 where it has none.
type Device struct {
	Want, Orig string
	Exact      bool
	Kind       DeviceKind
	Gate, A, B int32
	Opts       switchsim.DeviceOpts
	Pos        diag.Pos
}

// NewDesign starts a design with the generic technology and its two rails,
// asking for the names power and ground.
func NewDesign(power, ground Node) *Design {
	d := &Design{Tech: switchsim.Generic(), nodeIx: map[string]int32{}}
	d.Power = d.add("\x00power", power)
	d.Ground = d.add("\x00ground", ground)
	return d
}

func (d *Design) add(key string, n Node) int32 {
	i := int32(len(d.Nodes))
	d.Nodes = append(d.Nodes, n)
	d.nodeIx[key] = i
	return i
}

// Node returns the node with identity key, adding it (as n) if new.
func (d *Design) Node(key string, n Node) int32 {
	if i, ok := d.nodeIx[key]; ok {
		return i
	}
	return d.add(key, n)
}

// Lookup finds a node by identity key.
func (d *Design) Lookup(key string) (int32, bool) {
	i, ok := d.nodeIx[key]
	return i, ok
}

// Alias makes key another identity of node i (a rail's other spellings).
func (d *Design) Alias(key string, i int32) { d.nodeIx[key] = i }

// AddDevice appends a device and marks its nodes used.
func (d *Design) AddDevice(dv Device) {
	for _, n := range []int32{dv.Gate, dv.A, dv.B} {
		if n >= 0 {
			d.Nodes[n].Used = true
		}
	}
	d.Devices = append(d.Devices, dv)
}

// Build names every node and device (Namer: exact names first, so a name
// the netlist spelled validly keeps it; nodes and devices in one name
// space), records the original spellings,
// and compiles. Errors go to errs with the positions of what they are
// about; the netlist is nil when there was one.
func (d *Design) Build(errs *diag.Sink) *switchsim.Netlist {
	// One name space for nodes and devices: an original spelling is
	// recorded by name (Builder.Original), so a node and a device never
	// share one.
	nodeName := make([]string, len(d.Nodes))
	devName := make([]string, len(d.Devices))
	nn := Namer{taken: make(map[string]bool, 2*(len(d.Nodes)+len(d.Devices)))} // the names, and the originals kept
	for pass := 0; pass < 2; pass++ {
		for i := range d.Nodes {
			if n := &d.Nodes[i]; n.Exact == (pass == 0) {
				nodeName[i] = nn.Name(n.Want)
			}
		}
		for i := range d.Devices {
			if v := &d.Devices[i]; v.Exact == (pass == 0) {
				devName[i] = nn.Name(v.Want)
			}
		}
	}
	b := switchsim.NewBuilder()
	b.SetName(d.Name, d.Desc)
	b.SetTech(d.Tech)
	whole := d.At
	if len(d.Devices) == 0 {
		errs.Add(whole, "the design has no devices: nothing to simulate")
		return nil
	}
	if err := b.SetRails(nodeName[d.Power], nodeName[d.Ground]); err != nil {
		errs.Add(whole, "%v", err)
		return nil
	}
	// An original spelling is kept only where it names one thing: not a
	// spelling another node or device already shows, nor another's railyard
	// name (a device X beside a node X: the device is shown as its
	// railyard name xQ2), so that either spelling finds one thing.
	taken := nn.taken // every railyard name; the originals kept join it
	original := func(name, orig string, p diag.Pos) {
		if orig == "" || orig == name || taken[orig] {
			return
		}
		taken[orig] = true
		if err := b.Original(name, orig); err != nil {
			errs.Add(p, "%v", err)
		}
	}
	fail := func(p diag.Pos, err error) {
		if err != nil {
			errs.Add(p, "%s", err)
		}
	}
	for _, i := range d.Inputs {
		fail(d.Nodes[i].Pos, b.Input(nodeName[i]))
	}
	for _, i := range d.Outputs {
		fail(d.Nodes[i].Pos, b.Output(nodeName[i]))
	}
	for i := range d.Nodes {
		n := &d.Nodes[i]
		if (n.Cap > 0 || n.Charge != switchsim.HighZ) && n.Used {
			fail(n.Pos, b.Node(nodeName[i], n.Cap, n.Charge))
		}
		original(nodeName[i], n.Orig, n.Pos)
	}
	for i := range d.Devices {
		v := &d.Devices[i]
		name := devName[i]
		var err error
		switch v.Kind {
		case NMOS:
			err = b.NMOS(name, nodeName[v.Gate], nodeName[v.A], nodeName[v.B], v.Opts)
		case PMOS:
			err = b.PMOS(name, nodeName[v.Gate], nodeName[v.A], nodeName[v.B], v.Opts)
		case PullUp, PullDown:
			err = b.PullWith(name, nodeName[v.B], v.Kind == PullUp, v.Opts)
		case Tran:
			err = b.Tran(name, nodeName[v.A], nodeName[v.B], v.Opts)
		}
		fail(v.Pos, err)
		original(name, v.Orig, v.Pos)
		if errs.Full() {
			return nil
		}
	}
	if errs.Any() {
		return nil
	}
	nl, err := b.Compile()
	if err != nil {
		var ce *switchsim.CompileError
		if !errors.As(err, &ce) {
			errs.Add(whole, "%v", err)
			return nil
		}
		// Positions only now, when there is something to say.
		byName := map[string]diag.Pos{}
		for i := range d.Nodes {
			byName[nodeName[i]] = d.Nodes[i].Pos
		}
		byDev := map[string]diag.Pos{}
		for i := range d.Devices {
			byDev[devName[i]] = d.Devices[i].Pos
		}
		for _, pr := range ce.Problems {
			at, ok := byName[pr.Node]
			if !ok {
				at, ok = byDev[pr.Device]
			}
			if !ok {
				at = whole
			}
			errs.Add(at, "%s", pr.Msg)
		}
		return nil
	}
	return nl
}
