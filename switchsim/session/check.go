package session

import (
	"fmt"
	"math/bits"
	"strings"

	"railyard/switchsim"
)

// Finding kinds of the static checks. An output that no device can drive
// is reported as FindFloatingOutput: it floats whatever the inputs do.
const (
	FindUndrivenNode  = "undriven-node"   // a node no device can drive
	FindUndrivenGate  = "undriven-gate"   // a node that gates devices but that nothing can drive
	FindUnusedInput   = "unused-input"    // an input that drives nothing
	FindShortedDevice = "shorted-channel" // a device whose channel terminals are the same node
	FindRailShort     = "rail-short"      // the rails joined by always-on devices
)

// Finding kinds of the exhaustive check, beside the engine's warning kinds
// conflict, level-lost, contention and oscillation.
const (
	FindFloatingOutput = "floating-output" // an output left floating (state Z)
	FindDegradedOutput = "degraded-output" // an output at L or H: weak, threshold-dropped or contested
)

// Finding is one problem a check found.
type Finding struct {
	Kind    string
	Node    int // -1 where it names no node
	Device  int // -1 where it names no device
	Message string
	// Exhaustive only: the first input vector that shows it, worded
	// "a=0 b=1", and the number of vectors whose settle showed it.
	Vector string
	Count  int
}

// Failing reports whether a finding makes `check` fail (FORMAT.md: a
// conflict, a lost level or a floating output).
func (f Finding) Failing() bool {
	switch f.Kind {
	case string(switchsim.WarnConflict), string(switchsim.WarnLevelLost), FindFloatingOutput:
		return true
	}
	return false
}

// AnyFailing reports whether any finding makes `check` fail.
func AnyFailing(fs []Finding) bool {
	for _, f := range fs {
		if f.Failing() {
			return true
		}
	}
	return false
}

// StaticCheck inspects the netlist's structure alone, whatever the inputs.
// Findings come in a fixed order: nodes in netlist order, then devices, then
// the rail short.
func StaticCheck(nl *switchsim.Netlist) []Finding {
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
		name := nl.NodeName(n)
		switch nl.NodeKind(n) {
		case switchsim.Internal:
			if drivable[n] {
				continue
			}
			gated := nl.GatedDevices(n)
			switch {
			case isOutput[n]:
				out = append(out, Finding{Kind: FindFloatingOutput, Node: n, Device: -1,
					Message: fmt.Sprintf("output %s: no device can drive it (no channel path to a rail or an input), so it always floats", name)})
			case len(gated) > 0:
				out = append(out, Finding{Kind: FindUndrivenGate, Node: n, Device: gated[0],
					Message: fmt.Sprintf("%s gates %s but nothing can drive it: its devices stay of unknown state", name, deviceList(nl, gated))})
			default:
				out = append(out, Finding{Kind: FindUndrivenNode, Node: n, Device: -1,
					Message: fmt.Sprintf("%s: no device can drive it (no channel path to a rail or an input)", name)})
			}
		case switchsim.Input:
			if len(nl.GatedDevices(n)) == 0 && len(nl.ChannelDevices(n)) == 0 {
				out = append(out, Finding{Kind: FindUnusedInput, Node: n, Device: -1,
					Message: fmt.Sprintf("input %s drives nothing: no device has it as a gate or a channel terminal", name)})
			}
		}
	}
	for d := 0; d < nd; d++ {
		dv := nl.Device(d)
		if dv.A == dv.B {
			out = append(out, Finding{Kind: FindShortedDevice, Node: dv.A, Device: d,
				Message: fmt.Sprintf("device %s has both channel terminals on %s: it can never pass a signal", dv.Name, nl.NodeName(dv.A))})
		}
	}
	if path := railShort(nl); path != nil {
		out = append(out, Finding{Kind: FindRailShort, Node: -1, Device: path[0],
			Message: fmt.Sprintf("%s and %s are joined by always-on devices: %s (static current whatever the inputs)",
				nl.NodeName(nl.Power()), nl.NodeName(nl.Ground()), deviceList(nl, path))})
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
// chain) and returns its devices, power side first, or nil.
func railShort(nl *switchsim.Netlist) []int {
	pw, gn := nl.Power(), nl.Ground()
	type pred struct{ node, dev int }
	prev := map[int]pred{pw: {-1, -1}}
	queue := []int{pw}
	for i := 0; i < len(queue); i++ {
		m := queue[i]
		for _, d := range nl.ChannelDevices(m) {
			dv := nl.Device(d)
			if !alwaysOn(nl, dv) {
				continue
			}
			o := nl.Other(d, m)
			if _, seen := prev[o]; seen {
				continue
			}
			prev[o] = pred{m, d}
			if o == gn {
				var path []int
				for at := gn; at != pw; at = prev[at].node {
					path = append([]int{prev[at].dev}, path...)
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

func deviceList(nl *switchsim.Netlist, ds []int) string {
	names := make([]string, 0, len(ds))
	for i, d := range ds {
		if i == 4 {
			names = append(names, fmt.Sprintf("and %d more", len(ds)-4))
			break
		}
		names = append(names, nl.Device(d).Name)
	}
	return strings.Join(names, ", ")
}

// MaxExhaustiveInputs is the largest design the exhaustive check takes:
// 2^20 vectors, about a million settles.
const MaxExhaustiveInputs = 20

// ExhaustiveOptions configure the exhaustive check.
type ExhaustiveOptions struct {
	MaxInputs int                   // 0: MaxExhaustiveInputs
	Progress  func(done, total int) // called now and then, and at the end; may be nil
}

// ExhaustiveReport is what the exhaustive check found.
type ExhaustiveReport struct {
	Inputs   []int
	Vectors  int
	Findings []Finding // in the order first seen
}

// TooManyInputsError is the refusal of a design with too many inputs.
type TooManyInputsError struct{ Inputs, Max int }

func (e *TooManyInputsError) Error() string {
	return fmt.Sprintf("the design has %d inputs; the exhaustive check takes at most %d (2^%d vectors)", e.Inputs, e.Max, e.Max)
}

// Exhaustive applies every combination of 0 and 1 on the inputs, starting
// from the session's present state, in Gray-code order so that each vector
// changes one input from the one before (the first sets every input to 0).
// The order matters for designs that store state: each vector is judged
// as reached from the previous one, which is how a real cell meets them.
// After each settle it records conflicts, lost levels, contention and
// oscillation anywhere (the engine's warnings), and outputs left floating
// or at a degraded L/H. Each node and kind is reported once, with the first
// vector that shows it and the number of vectors whose settle showed it.
// The session itself is left unchanged.
func (s *Session) Exhaustive(opt ExhaustiveOptions) (*ExhaustiveReport, error) {
	max := opt.MaxInputs
	if max <= 0 {
		max = MaxExhaustiveInputs
	}
	nl := s.Netlist()
	ins := nl.Inputs()
	if len(ins) > max {
		return nil, &TooManyInputsError{len(ins), max}
	}
	sim := switchsim.NewSim(nl, switchsim.Options{Mode: s.Opts.Mode})
	sim.Restore(s.Sim.Snapshot())

	rep := &ExhaustiveReport{Inputs: ins, Vectors: 1 << len(ins)}
	type key struct {
		kind string
		node int
	}
	index := map[key]int{}
	last := []int{} // parallel to Findings: the vector that last counted it
	vec := make([]switchsim.Drive, len(ins))
	vector := func() string {
		var b strings.Builder
		for i, n := range ins {
			if i > 0 {
				b.WriteByte(' ')
			}
			b.WriteString(nl.NodeName(n))
			b.WriteByte('=')
			b.WriteString(vec[i].String())
		}
		return b.String()
	}
	note := func(k int, kind string, node int, msg func() string) {
		kk := key{kind, node}
		i, ok := index[kk]
		if !ok {
			i = len(rep.Findings)
			index[kk] = i
			rep.Findings = append(rep.Findings, Finding{Kind: kind, Node: node, Device: -1, Message: msg(), Vector: vector()})
			last = append(last, -1)
		}
		if last[i] != k {
			last[i] = k
			rep.Findings[i].Count++
		}
	}
	outs := nl.Outputs()
	const progressEvery = 1 << 12
	for k := 0; k < rep.Vectors; k++ {
		if k == 0 {
			for i, n := range ins {
				vec[i] = switchsim.Drive0
				sim.SetInput(n, switchsim.Drive0)
			}
		} else {
			i := bits.TrailingZeros(uint(k)) // the bit Gray code k changes
			vec[i] ^= 1                      // Drive0 <-> Drive1
			sim.SetInput(ins[i], vec[i])
		}
		r := sim.Settle()
		for _, w := range r.Warnings {
			switch w.Kind {
			case switchsim.WarnConflict, switchsim.WarnLevelLost, switchsim.WarnContention, switchsim.WarnOscillation:
				w := w
				note(k, string(w.Kind), w.Node, func() string { return sim.Message(w) })
			}
		}
		for _, o := range outs {
			st := sim.Node(o)
			switch st.State {
			case switchsim.StateZ:
				note(k, FindFloatingOutput, o, func() string {
					return fmt.Sprintf("output %s floats, holding %s by charge", nl.NodeName(o), st.Value)
				})
			case switchsim.StateL, switchsim.StateH:
				note(k, FindDegradedOutput, o, func() string {
					return fmt.Sprintf("output %s is %s%s, not a strong full level", nl.NodeName(o), st.State, voltsSuffix(st.Volts))
				})
			}
		}
		if opt.Progress != nil && (k+1)%progressEvery == 0 {
			opt.Progress(k+1, rep.Vectors)
		}
	}
	if opt.Progress != nil {
		opt.Progress(rep.Vectors, rep.Vectors)
	}
	return rep, nil
}

func voltsSuffix(v float64) string {
	if s := FormatVolts(v); s != "-" {
		return " at " + s + " V"
	}
	return ""
}
