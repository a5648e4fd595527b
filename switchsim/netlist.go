package switchsim

import (
	"errors"
	"fmt"
	"slices"
	"sort"
	"strings"
	"sync"
)

// Netlist is a compiled design: dense arrays indexed by node and device
// number. It is immutable and may be shared by many Sims.
type Netlist struct {
	Name, Desc    string
	Tech          Tech
	power, ground int32

	// nodes
	nodeName   []string
	nodeKind   []NodeKind
	nodeCap    []float64 // cold: nil while every node has its default (capOf)
	nodeCharge []Strength
	nodeIdx    *nameIndex // for Lookup; names never take part in simulation
	inputs     []int32
	outputs    []int32

	// devices
	devName   []string
	devKind   []DeviceKind
	devGate   []int32 // -1: always on
	devA      []int32
	devB      []int32
	devCap    []Strength
	devW      []float64 // cold: nil while every device has its default size (width, length)
	devL      []float64
	devIdx    *nameIndex // for LookupDevice
	devResist []bool     // IEEE 1364-2005 §7.12 resistive devices; nil when there are none
	devOhms   []float64  // resistances given in ohms (R cards); nil when none is
	chanStart []int32    // CSR: devices whose channel touches node n are chanDev[chanStart[n]:chanStart[n+1]]
	chanDev   []int32
	gateStart []int32 // CSR: devices gated by node n
	gateDev   []int32

	// structure (structure.go)
	nodeFlag  []uint8
	devFlag   []uint8
	shortDevs []int32  // the devices flagged devShort, in order
	top       Strength // the strongest signal a device passes: min(supply, cap) at most
	loops     bool     // some node is in a feedback loop (nodeLoop)

	// original spellings (Builder.Original), nil when every name is its own
	nodeOrig, devOrig []string
}

// nameIndex finds names by binary search in indices sorted by name (4
// bytes a name instead of a map entry), made on the first look-up: a design
// that is only simulated never carries them. The netlists made from one
// Compile (WithTech, WithSize) share it, as they share the names.
type nameIndex struct {
	once           sync.Once
	names, orig    []string
	byName, byOrig []int32
}

func (x *nameIndex) find(name string) (int, bool) {
	x.once.Do(func() {
		x.byName = byName(x.names)
		if x.orig != nil {
			x.byOrig = byName(x.orig)
		}
	})
	if n, ok := lookup(x.names, x.byName, name); ok || x.orig == nil {
		return n, ok
	}
	return lookup(x.orig, x.byOrig, name)
}

// CompileError lists every problem Compile found.
type CompileError struct{ Problems []Problem }

// Problem is one thing Compile found wrong, with the node or device it
// concerns (by name; both empty for the design as a whole), so that a
// reader can put it at the statement that named it.
type Problem struct {
	Node, Device string
	Msg          string
}

func (e *CompileError) Error() string {
	msgs := make([]string, len(e.Problems))
	for i, p := range e.Problems {
		msgs[i] = p.Msg
	}
	return strings.Join(msgs, "\n")
}

// Compile checks the netlist and turns it into dense arrays.
func (b *Builder) Compile() (*Netlist, error) {
	var probs []Problem
	bad := func(node, f string, a ...any) { probs = append(probs, Problem{Node: node, Msg: fmt.Sprintf(f, a...)}) }
	if err := b.tech.Validate(); err != nil {
		bad("", "%v", err)
	}
	pw, _ := b.node(b.power)
	gn, _ := b.node(b.ground)
	nn := len(b.nodes)
	nl := &Netlist{
		Name: b.name, Desc: b.desc, Tech: b.tech, power: pw, ground: gn,
		nodeName: make([]string, nn), nodeKind: make([]NodeKind, nn),
		nodeCharge: make([]Strength, nn),
	}
	for i, n := range b.nodes {
		nl.nodeName[i] = n.name
		if n.cap != 0 && nl.nodeCap == nil {
			nl.nodeCap = make([]float64, nn) // filled with the defaults by diffusionDefaults
		}
		nl.nodeCharge[i] = n.charge
		if n.charge == HighZ {
			nl.nodeCharge[i] = Medium
		}
		if n.input {
			nl.nodeKind[i] = Input
		}
	}
	for _, r := range []int32{pw, gn} {
		if b.nodes[r].input {
			bad(b.nodes[r].name, "rail %q cannot be an input", b.nodes[r].name)
		}
	}
	nl.nodeKind[pw], nl.nodeKind[gn] = Power, Ground
	nl.inputs = append([]int32(nil), b.inputs...)
	nl.outputs = append([]int32(nil), b.outputs...)

	nd := len(b.devs)
	nl.devName, nl.devKind = make([]string, nd), make([]DeviceKind, nd)
	nl.devGate, nl.devA, nl.devB = make([]int32, nd), make([]int32, nd), make([]int32, nd)
	nl.devCap = make([]Strength, nd)
	for _, d := range b.devs {
		if d.w != 0 || d.l != 0 {
			nl.devW, nl.devL = make([]float64, nd), make([]float64, nd)
			break
		}
	}
	touched := make([]bool, nn)
	for i, d := range b.devs {
		nl.devName[i], nl.devKind[i], nl.devGate[i] = d.name, d.kind, d.gate
		a := d.a
		switch d.kind {
		case PullUp:
			a = pw
		case PullDown:
			a = gn
		}
		nl.devA[i], nl.devB[i], nl.devCap[i] = a, d.b, d.strength
		if nl.devW != nil {
			nl.devW[i], nl.devL[i] = d.w, d.l
			if d.w == 0 {
				nl.devW[i] = nl.defaultWidth(i)
			}
			if d.l == 0 {
				nl.devL[i] = nl.defaultLength(i)
			}
		}
		if d.resist {
			if nl.devResist == nil {
				nl.devResist = make([]bool, nd)
			}
			nl.devResist[i] = true
		}
		if d.ohms > 0 {
			if nl.devOhms == nil {
				nl.devOhms = make([]float64, nd)
			}
			nl.devOhms[i] = d.ohms
		}
		touched[a], touched[d.b] = true, true
		if d.gate >= 0 {
			touched[d.gate] = true
		}
	}
	output := make([]bool, nn)
	for _, o := range b.outputs {
		output[o] = true
		if !touched[o] && !b.nodes[o].input {
			bad(b.nodes[o].name, "output %q is not connected to any device", b.nodes[o].name)
		}
	}
	for name := range b.declared {
		i := b.nodeIdx[name]
		if !touched[i] && !b.nodes[i].input && !output[i] && i != pw && i != gn {
			bad(name, "node %q is not connected to any device", name)
		}
	}
	if len(probs) > 0 {
		slices.SortFunc(probs, func(p, q Problem) int { return strings.Compare(p.Msg, q.Msg) })
		return nil, &CompileError{probs}
	}
	if len(b.original) > 0 {
		nl.nodeOrig, nl.devOrig = originals(nl.nodeName, b.original), originals(nl.devName, b.original)
	}
	nl.nodeIdx = &nameIndex{names: nl.nodeName, orig: nl.nodeOrig}
	nl.devIdx = &nameIndex{names: nl.devName, orig: nl.devOrig}
	nl.chanStart, nl.chanDev = csr(nn, nd, func(d int, emit func(int32)) {
		emit(nl.devA[d])
		if nl.devB[d] != nl.devA[d] {
			emit(nl.devB[d])
		}
	})
	nl.gateStart, nl.gateDev = csr(nn, nd, func(d int, emit func(int32)) {
		if nl.devGate[d] >= 0 {
			emit(nl.devGate[d])
		}
	})
	nl.structure()
	nl.diffusionDefaults(b.nodes) // switchsim §1; needs the outputs flagged by structure
	return nl, nil
}

// originals lists the original spelling of each name (the name itself
// where none was recorded).
func originals(names []string, orig map[string]string) []string {
	out := make([]string, len(names))
	for i, n := range names {
		out[i] = n
		if o, ok := orig[n]; ok {
			out[i] = o
		}
	}
	return out
}

// csr builds a compressed adjacency from devices to the nodes each names.
func csr(nn, nd int, each func(d int, emit func(int32))) (start, list []int32) {
	start = make([]int32, nn+1)
	for d := 0; d < nd; d++ {
		each(d, func(n int32) { start[n+1]++ })
	}
	for n := 0; n < nn; n++ {
		start[n+1] += start[n]
	}
	list = make([]int32, start[nn])
	fill := append([]int32(nil), start[:nn]...)
	for d := 0; d < nd; d++ {
		each(d, func(n int32) { list[fill[n]] = int32(d); fill[n]++ })
	}
	return start, list
}

// ErrUnknownNode is returned when a name is not a node of the netlist.
var ErrUnknownNode = errors.New("unknown node")

// NumNodes is the number of nodes, rails included.
func (nl *Netlist) NumNodes() int { return len(nl.nodeName) }

// NumDevices is the number of devices after expansion.
func (nl *Netlist) NumDevices() int { return len(nl.devName) }

// NodeName returns a node's railyard name: the one files use.
func (nl *Netlist) NodeName(n int) string { return nl.nodeName[n] }

// DisplayName returns a node's name as a person should read it: the
// spelling of the netlist it came from where that differs, else NodeName.
func (nl *Netlist) DisplayName(n int) string {
	if nl.nodeOrig != nil {
		return nl.nodeOrig[n]
	}
	return nl.nodeName[n]
}

// DeviceDisplayName is DisplayName for device d.
func (nl *Netlist) DeviceDisplayName(d int) string {
	if nl.devOrig != nil {
		return nl.devOrig[d]
	}
	return nl.devName[d]
}

// NodeKind returns whether a node is a rail, an input or internal.
func (nl *Netlist) NodeKind(n int) NodeKind { return nl.nodeKind[n] }

// NodeCap returns a node's capacitance in farads.
func (nl *Netlist) NodeCap(n int) float64 { return nl.capOf(n) }

// Sizes and capacitances are cold data: ideal mode never reads them, and
// most designs (every generated one) leave them all at the technology's
// defaults. So nodeCap, devW and devL are nil until the design gives one
// node a capacitance or one device a size; these read them either way.

// capOf is node n's capacitance: its own, or DefaultCap.
func (nl *Netlist) capOf(n int) float64 {
	if nl.nodeCap != nil {
		return nl.nodeCap[n]
	}
	if nl.nodeFlag[n]&nodeDiffusion != 0 {
		return nl.Tech.Cdiff
	}
	return nl.Tech.Cnode
}

// width is device d's drawn width: its own, or the technology's for its kind.
func (nl *Netlist) width(d int) float64 {
	if nl.devW != nil {
		return nl.devW[d]
	}
	return nl.defaultWidth(d)
}

// length is device d's drawn length, as width.
func (nl *Netlist) length(d int) float64 {
	if nl.devL != nil {
		return nl.devL[d]
	}
	return nl.defaultLength(d)
}

// defaultWidth is the width of device d when the design gives none: the
// technology's wn or wp for a transistor; a pull or tran has no size (0).
func (nl *Netlist) defaultWidth(d int) float64 {
	switch nl.devKind[d] {
	case NMOS:
		return nl.Tech.Wn
	case PMOS:
		return nl.Tech.Wp
	}
	return 0
}

// defaultLength is defaultWidth's length: the technology's l for a transistor.
func (nl *Netlist) defaultLength(d int) float64 {
	if nl.devKind[d] < PullUp {
		return nl.Tech.L
	}
	return 0
}

// NodeCharge returns a node's charge class.
func (nl *Netlist) NodeCharge(n int) Strength { return nl.nodeCharge[n] }

// Lookup finds a node by its railyard name or its original spelling.
func (nl *Netlist) Lookup(name string) (int, bool) {
	return nl.nodeIdx.find(name)
}

// LookupDevice finds a device by its railyard name or its original spelling.
func (nl *Netlist) LookupDevice(name string) (int, bool) {
	return nl.devIdx.find(name)
}

// Power and Ground return the rails' node numbers.
func (nl *Netlist) Power() int  { return int(nl.power) }
func (nl *Netlist) Ground() int { return int(nl.ground) }

// Inputs returns the primary inputs in declaration order.
func (nl *Netlist) Inputs() []int { return ints(nl.inputs) }

// Outputs returns the declared outputs in declaration order.
func (nl *Netlist) Outputs() []int { return ints(nl.outputs) }

func ints(s []int32) []int {
	out := make([]int, len(s))
	for i, v := range s {
		out[i] = int(v)
	}
	return out
}

// Device describes one device for printing and explanation.
type Device struct {
	Name     string
	Kind     DeviceKind
	Gate     int // -1 for pulls (always on)
	A, B     int // channel terminals
	W, L     float64
	Strength Strength
	// Resistive is set for devices that reduce strengths as IEEE
	// 1364-2005 §7.12 says (rnmos, rtran, R cards); Ohms is a resistance
	// given in ohms, 0 where the device has none of its own.
	Resistive bool
	Ohms      float64
}

// Device returns device d's description.
func (nl *Netlist) Device(d int) Device {
	dv := Device{Name: nl.devName[d], Kind: nl.devKind[d], Gate: int(nl.devGate[d]), A: int(nl.devA[d]), B: int(nl.devB[d]),
		W: nl.width(d), L: nl.length(d), Strength: nl.devCap[d]}
	if nl.devResist != nil {
		dv.Resistive = nl.devResist[d]
	}
	if nl.devOhms != nil {
		dv.Ohms = nl.devOhms[d]
	}
	return dv
}

// ChannelDevices returns the devices whose channel touches node n.
func (nl *Netlist) ChannelDevices(n int) []int {
	return ints(nl.chanDev[nl.chanStart[n]:nl.chanStart[n+1]])
}

// GatedDevices returns the devices whose gate is node n.
func (nl *Netlist) GatedDevices(n int) []int {
	return ints(nl.gateDev[nl.gateStart[n]:nl.gateStart[n+1]])
}

// Other returns the channel terminal of device d opposite node n.
func (nl *Netlist) Other(d, n int) int { return int(nl.other(int32(d), int32(n))) }

// other is Other on the engine's index type: the terminal of d's channel
// that is not n (n itself for a device from n to n).
func (nl *Netlist) other(d, n int32) int32 {
	if a := nl.devA[d]; a != n {
		return a
	}
	return nl.devB[d]
}

// byName returns the indices of names sorted by name.
func byName(names []string) []int32 {
	idx := make([]int32, len(names))
	for i := range idx {
		idx[i] = int32(i)
	}
	slices.SortFunc(idx, func(a, b int32) int { return strings.Compare(names[a], names[b]) })
	return idx
}

// lookup finds name by binary search in a sorted index.
func lookup(names []string, idx []int32, name string) (int, bool) {
	k := sort.Search(len(idx), func(k int) bool { return names[idx[k]] >= name })
	if k < len(idx) && names[idx[k]] == name {
		return int(idx[k]), true
	}
	return -1, false
}
