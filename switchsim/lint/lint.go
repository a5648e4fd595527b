// Package lint checks a compiled netlist's structure alone, whatever its
// inputs: nodes nothing can drive, gates that nothing drives, inputs that
// drive nothing, devices whose channel is shorted on itself, and the rails
// joined by devices that are always on. It sits beside the engine and uses
// only the netlist; the reachable-state search (package reach) is its
// dynamic counterpart.
package lint

import (
	"fmt"
	"strings"

	"railyard/switchsim"
)

// Kind is the kind of a structural finding.
type Kind string

// Finding kinds. An output that no device can drive is FloatingOutput: it
// floats whatever the inputs do.
const (
	UndrivenNode   Kind = "undriven-node"   // a node no device can drive
	UndrivenGate   Kind = "undriven-gate"   // a node that gates devices but that nothing can drive
	UnusedInput    Kind = "unused-input"    // an input that drives nothing
	ShortedChannel Kind = "shorted-channel" // a device whose channel terminals are the same node
	RailShort      Kind = "rail-short"      // the rails joined by always-on devices
	FloatingOutput Kind = "floating-output" // an output no device can drive
)

// Failing reports whether a finding of this kind makes `check` fail: an
// output that always floats, and a short from one rail to the other (a
// static current whatever the inputs; the README, "Checking every reachable
// state"). The
// others are slips worth reading that break no level.
func (k Kind) Failing() bool { return k == FloatingOutput || k == RailShort }

// Finding is one structural problem.
type Finding struct {
	Kind    Kind
	Node    int // -1 where it names no node
	Device  int // -1 where it names no device
	Message string
}

// Failing reports whether the finding makes `check` fail.
func (f Finding) Failing() bool { return f.Kind.Failing() }

// AnyFailing reports whether any finding makes `check` fail.
func AnyFailing(fs []Finding) bool {
	for _, f := range fs {
		if f.Failing() {
			return true
		}
	}
	return false
}

// Check inspects the netlist's structure. Findings come in a fixed order:
// nodes in netlist order, then devices, then the rail short.
func Check(nl *switchsim.Netlist) []Finding {
	var out []Finding
	nn, nd := nl.NumNodes(), nl.NumDevices()

	// A node is drivable when a chain of channels, whatever their gates,
	// joins it to a rail or an input: nothing else can ever give it a value.
	var seeds []int32
	for n := 0; n < nn; n++ {
		if nl.NodeKind(n) != switchsim.Internal {
			seeds = append(seeds, int32(n))
		}
	}
	drivable := make([]bool, nn)
	nl.BreadthFirst(seeds, drivable, nil)
	isOutput := make([]bool, nn)
	for _, o := range nl.Outputs() {
		isOutput[o] = true
	}
	for n := 0; n < nn; n++ {
		name := nl.DisplayName(n)
		switch nl.NodeKind(n) {
		case switchsim.Internal:
			if drivable[n] {
				continue
			}
			gated := nl.GatedDevices(n)
			switch {
			case isOutput[n]:
				out = append(out, Finding{Kind: FloatingOutput, Node: n, Device: -1,
					Message: fmt.Sprintf("output %s: no device can drive it (no channel path to a rail or an input), so it always floats", name)})
			case len(gated) > 0:
				out = append(out, Finding{Kind: UndrivenGate, Node: n, Device: gated[0],
					Message: fmt.Sprintf("%s gates %s but nothing can drive it: its devices stay of unknown state", name, deviceList(nl, gated))})
			default:
				out = append(out, Finding{Kind: UndrivenNode, Node: n, Device: -1,
					Message: fmt.Sprintf("%s: no device can drive it (no channel path to a rail or an input)", name)})
			}
		case switchsim.Input:
			if len(nl.GatedDevices(n)) == 0 && len(nl.ChannelDevices(n)) == 0 {
				out = append(out, Finding{Kind: UnusedInput, Node: n, Device: -1,
					Message: fmt.Sprintf("input %s drives nothing: no device has it as a gate or a channel terminal", name)})
			}
		}
	}
	for d := 0; d < nd; d++ {
		dv := nl.Device(d)
		if dv.A == dv.B {
			out = append(out, Finding{Kind: ShortedChannel, Node: dv.A, Device: d,
				Message: fmt.Sprintf("device %s has both channel terminals on %s: it can never pass a signal", nl.DeviceDisplayName(d), nl.DisplayName(dv.A))})
		}
	}
	if path := railShort(nl); path != nil {
		out = append(out, Finding{Kind: RailShort, Node: -1, Device: path[0],
			Message: fmt.Sprintf("%s and %s are joined by always-on devices: %s (static current whatever the inputs)",
				nl.DisplayName(nl.Power()), nl.DisplayName(nl.Ground()), deviceList(nl, path))})
	}
	return out
}

// alwaysOn reports whether a device conducts whatever the inputs: a pull,
// an nMOS gated by the power rail or a pMOS gated by the ground rail.
func alwaysOn(nl *switchsim.Netlist, dv switchsim.Device) bool {
	switch {
	case dv.Gate < 0:
		return true
	case dv.Kind == switchsim.NMOS:
		return dv.Gate == nl.Power()
	case dv.Kind == switchsim.PMOS:
		return dv.Gate == nl.Ground()
	}
	return false
}

// railShort finds a chain of always-on devices from the power rail to the
// ground rail through internal nodes (inputs are sources and break the
// chain) and returns its devices, power side first, or nil. It is a
// breadth-first search with one predecessor per node, so linear in the
// netlist's size.
func railShort(nl *switchsim.Netlist) []int {
	pw, gn := nl.Power(), nl.Ground()
	const unseen = -2
	prevNode := make([]int32, nl.NumNodes())
	prevDev := make([]int32, nl.NumNodes())
	for i := range prevNode {
		prevNode[i] = unseen
	}
	prevNode[pw] = -1
	queue := []int{pw}
	for i := 0; i < len(queue); i++ {
		m := queue[i]
		for _, d := range nl.ChannelDevices(m) {
			if !alwaysOn(nl, nl.Device(d)) {
				continue
			}
			o := nl.Other(d, m)
			if prevNode[o] != unseen {
				continue
			}
			prevNode[o], prevDev[o] = int32(m), int32(d)
			if o == gn {
				var path []int
				for at := gn; at != pw; at = int(prevNode[at]) {
					path = append(path, int(prevDev[at]))
				}
				for l, r := 0, len(path)-1; l < r; l, r = l+1, r-1 {
					path[l], path[r] = path[r], path[l]
				}
				return path
			}
			if nl.NodeKind(o) == switchsim.Internal {
				queue = append(queue, o)
			}
		}
	}
	return nil
}

// deviceList names up to four devices, then says how many more.
func deviceList(nl *switchsim.Netlist, ds []int) string {
	names := make([]string, 0, min(len(ds), 5))
	for i, d := range ds {
		if i == 4 {
			names = append(names, fmt.Sprintf("and %d more", len(ds)-4))
			break
		}
		names = append(names, nl.DeviceDisplayName(d))
	}
	return strings.Join(names, ", ")
}
