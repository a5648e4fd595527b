package switchsim

import (
	"slices"
	"testing"
)

// Explain gives the node's group with the explanation: its member nodes
// and every device that is not off in it, each once, so that a viewer
// need not walk the group again. A chain a -w1- m -w2- q with w1, w2 on
// and a third device w3 gated off: the group of q is {q, m}, its devices
// w1 and w2 (w1 joins m to the input a); w3 is off and not in it. A
// source's group is the devices it feeds directly (common practice:
// a driven node ends a channel-connected group).
func TestExplainCarriesTheGroup(t *testing.T) {
	b := NewBuilder()
	b.Input("a")
	b.Input("en")
	b.Input("off")
	b.NMOS("w1", "en", "a", "m", DeviceOpts{})
	b.NMOS("w2", "en", "m", "q", DeviceOpts{})
	b.NMOS("w3", "off", "q", "gnd", DeviceOpts{})
	s := NewSim(mustCompile(t, b), Options{Mode: Ideal})
	set(t, s, "a", Drive1)
	set(t, s, "en", Drive1)
	set(t, s, "off", Drive0)
	s.Settle()
	nl := s.Netlist()
	id := func(name string) int {
		if n, ok := nl.Lookup(name); ok {
			return n
		}
		d, _ := nl.LookupDevice(name)
		return d
	}
	q := id("q")
	e := s.Explain(q)
	if len(e.Group) != 2 || e.Group[0] != q || !slices.Contains(e.Group, id("m")) {
		t.Errorf("group of q = %v, want q first, then m", e.Group)
	}
	devs := slices.Clone(e.Devices)
	slices.Sort(devs)
	want := []int{id("w1"), id("w2")}
	slices.Sort(want)
	if !slices.Equal(devs, want) {
		t.Errorf("devices of q's group = %v, want w1 and w2 %v (w3 is off)", e.Devices, want)
	}
	ea := s.Explain(id("a"))
	if ea.Group != nil || len(ea.Devices) != 1 || ea.Devices[0] != id("w1") {
		t.Errorf("input a: group %v devices %v, want none and [w1]", ea.Group, ea.Devices)
	}
	// with en unknown the devices are of unknown state: still in the group,
	// and listed as unknown too
	set(t, s, "en", DriveX)
	s.Settle()
	e = s.Explain(q)
	if len(e.Devices) != 2 || len(e.Unknown) != 2 {
		t.Errorf("en=X: devices %v unknown %v, want both w1 and w2 in each", e.Devices, e.Unknown)
	}
}
