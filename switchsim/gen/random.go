package gen

import (
	"fmt"
	"math/rand/v2"
	"strings"

	"railyard/switchsim"
)

// Spec is a flat network described by name, independent of the order in
// which a Builder is told about it, so tests can build the same network
// in different orders and compare.
type Spec struct {
	Inputs  []string
	Nodes   []NodeSpec // charge annotations
	Devices []DeviceSpec
	// NodesFirst makes Builder annotate the nodes before adding the
	// devices, so the order of Nodes sets the node numbering.
	NodesFirst bool
}

// NodeSpec annotates a node with a charge class (HighZ: the default, medium).
type NodeSpec struct {
	Name   string
	Charge switchsim.Strength
}

// DeviceSpec is one device. Pulls have no Gate and A; their rail is implied.
type DeviceSpec struct {
	Name     string
	Kind     switchsim.DeviceKind
	Gate     string
	A, B     string
	Strength switchsim.Strength // HighZ: the default cap
}

// Builder builds the spec in the order given: inputs, then devices, then
// node annotations (or the annotations before the devices, see NodesFirst).
func (s *Spec) Builder() (*switchsim.Builder, error) {
	b := switchsim.NewBuilder()
	for _, in := range s.Inputs {
		if err := b.Input(in); err != nil {
			return nil, err
		}
	}
	annotate := func() error {
		for _, n := range s.Nodes {
			if err := b.Node(n.Name, 0, n.Charge); err != nil {
				return err
			}
		}
		return nil
	}
	if s.NodesFirst {
		if err := annotate(); err != nil {
			return nil, err
		}
	}
	for _, d := range s.Devices {
		var err error
		o := switchsim.DeviceOpts{Strength: d.Strength}
		switch d.Kind {
		case switchsim.NMOS:
			err = b.NMOS(d.Name, d.Gate, d.A, d.B, o)
		case switchsim.PMOS:
			err = b.PMOS(d.Name, d.Gate, d.A, d.B, o)
		default:
			err = b.Pull(d.Name, d.B, d.Kind == switchsim.PullUp, d.Strength)
		}
		if err != nil {
			return nil, err
		}
	}
	if !s.NodesFirst {
		if err := annotate(); err != nil {
			return nil, err
		}
	}
	return b, nil
}

// Shuffled returns the same network with its inputs, node annotations and
// devices in a random order, each channel's terminals swapped at random,
// and the annotations first: a different node and device numbering.
func (s *Spec) Shuffled(rng *rand.Rand) *Spec {
	t := &Spec{
		Inputs:     append([]string(nil), s.Inputs...),
		Nodes:      append([]NodeSpec(nil), s.Nodes...),
		Devices:    append([]DeviceSpec(nil), s.Devices...),
		NodesFirst: true,
	}
	rng.Shuffle(len(t.Inputs), func(i, j int) { t.Inputs[i], t.Inputs[j] = t.Inputs[j], t.Inputs[i] })
	rng.Shuffle(len(t.Nodes), func(i, j int) { t.Nodes[i], t.Nodes[j] = t.Nodes[j], t.Nodes[i] })
	rng.Shuffle(len(t.Devices), func(i, j int) { t.Devices[i], t.Devices[j] = t.Devices[j], t.Devices[i] })
	for i := range t.Devices {
		if d := &t.Devices[i]; d.Kind <= switchsim.PMOS && rng.IntN(2) == 0 {
			d.A, d.B = d.B, d.A
		}
	}
	return t
}

// String prints the spec compactly, one device a line, in the design
// format's statement shapes so a failing case can be pasted into a file.
func (s *Spec) String() string {
	var w strings.Builder
	if len(s.Inputs) > 0 {
		fmt.Fprintf(&w, "input %s\n", strings.Join(s.Inputs, " "))
	}
	for _, n := range s.Nodes {
		if n.Charge != switchsim.HighZ {
			fmt.Fprintf(&w, "node %s charge=%s\n", n.Name, n.Charge)
		}
	}
	for _, d := range s.Devices {
		st := ""
		if d.Strength != switchsim.HighZ {
			st = " strength=" + d.Strength.String()
		}
		switch d.Kind {
		case switchsim.NMOS, switchsim.PMOS:
			fmt.Fprintf(&w, "%s %s %s %s %s%s\n", d.Kind, d.Name, d.Gate, d.A, d.B, st)
		default:
			fmt.Fprintf(&w, "%s %s %s%s\n", d.Kind, d.Name, d.B, st)
		}
	}
	return w.String()
}

// Random returns a random network of nodes non-rail nodes (about a third
// of them inputs) and devices devices: nMOS, pMOS and pulls with random
// caps (weak, pull, strong, supply or the default), gates on any node
// including the rails and inputs, channels between any two nodes
// including self-loops and rail-to-rail devices, and random charge classes.
// Nodes that no device names are left out, so the spec always compiles.
func Random(rng *rand.Rand, nodes, devices int) *Spec {
	nodes, devices = max(nodes, 1), max(devices, 1)
	names := []string{"vdd", "gnd"}
	isInput := map[string]bool{}
	var inputs []string
	for i := 0; i < nodes; i++ {
		n := fmt.Sprintf("n%d", i)
		if rng.IntN(3) == 0 {
			n = fmt.Sprintf("i%d", i)
			isInput[n] = true
			inputs = append(inputs, n)
		}
		names = append(names, n)
	}
	pick := func() string {
		if rng.IntN(6) == 0 { // rails somewhat more often than their share
			return names[rng.IntN(2)]
		}
		return names[rng.IntN(len(names))]
	}
	caps := []switchsim.Strength{switchsim.HighZ, switchsim.HighZ, switchsim.Weak, switchsim.Pull, switchsim.Strong, switchsim.Supply}
	s := &Spec{Inputs: inputs}
	used := map[string]bool{}
	for i := 0; i < devices; i++ {
		d := DeviceSpec{Name: fmt.Sprintf("d%d", i), Strength: caps[rng.IntN(len(caps))]}
		switch r := rng.IntN(10); {
		case r < 4:
			d.Kind = switchsim.NMOS
		case r < 8:
			d.Kind = switchsim.PMOS
		case r < 9:
			d.Kind = switchsim.PullUp
		default:
			d.Kind = switchsim.PullDown
		}
		d.B = pick()
		if d.Kind <= switchsim.PMOS {
			d.Gate, d.A = pick(), pick()
			if rng.IntN(12) == 0 {
				d.A = d.B // a self-loop
			}
			used[d.Gate], used[d.A] = true, true
		}
		used[d.B] = true
		s.Devices = append(s.Devices, d)
	}
	charges := []switchsim.Strength{switchsim.HighZ, switchsim.Small, switchsim.Medium, switchsim.Large}
	for _, n := range names[2:] {
		if used[n] || isInput[n] { // inputs may be released, and then hold charge
			s.Nodes = append(s.Nodes, NodeSpec{n, charges[rng.IntN(len(charges))]})
		}
	}
	return s
}
