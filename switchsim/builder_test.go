package switchsim

import (
	"fmt"
	"strings"
	"sync"
	"testing"
)

// Bad netlists built through the API give errors, never panics.
func TestBuilderErrors(t *testing.T) {
	cases := []struct {
		name  string
		build func(b *Builder) error
		want  string
	}{
		{"duplicate device", func(b *Builder) error {
			b.NMOS("m", "a", "x", "y", DeviceOpts{})
			return b.PMOS("m", "a", "x", "y", DeviceOpts{})
		}, "duplicate device name"},
		{"duplicate tgate half", func(b *Builder) error {
			b.NMOS("t.n", "a", "x", "y", DeviceOpts{})
			return b.TGate("t", "a", "ab", "x", "y", 0, 0, 0, 0)
		}, "duplicate device name"},
		{"missing gate", func(b *Builder) error { return b.NMOS("m", "", "x", "y", DeviceOpts{}) }, "missing gate"},
		{"missing channel", func(b *Builder) error { return b.PMOS("m", "g", "x", "", DeviceOpts{}) }, "missing channel"},
		{"missing device name", func(b *Builder) error { return b.NMOS("", "g", "x", "y", DeviceOpts{}) }, "missing device name"},
		{"charge strength as cap", func(b *Builder) error {
			return b.NMOS("m", "g", "x", "y", DeviceOpts{Strength: Medium})
		}, "strength must be"},
		{"negative size", func(b *Builder) error { return b.NMOS("m", "g", "x", "y", DeviceOpts{W: -1}) }, "sizes must be positive"},
		{"drive strength as charge", func(b *Builder) error { return b.Node("x", 0, Strong) }, "charge must be"},
		{"input twice", func(b *Builder) error { b.Input("a"); return b.Input("a") }, "declared twice"},
		{"same rails", func(b *Builder) error { return b.SetRails("v", "v") }, "both"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			err := c.build(NewBuilder())
			if err == nil || !strings.Contains(err.Error(), c.want) {
				t.Fatalf("error %v, want one containing %q", err, c.want)
			}
		})
	}
}

// Compile reports every problem it finds, not just the first.
func TestCompileErrors(t *testing.T) {
	b := NewBuilder()
	b.Input("vdd")             // a rail cannot be an input
	b.Output("nowhere")        // an output no device touches
	b.Node("lonely", 0, Small) // a node no device touches
	b.NMOS("m", "a", "x", "y", DeviceOpts{})
	_, err := b.Compile()
	if err == nil {
		t.Fatal("compiled a bad netlist")
	}
	for _, want := range []string{`rail "vdd" cannot be an input`, `output "nowhere" is not connected`, `node "lonely" is not connected`} {
		if !strings.Contains(err.Error(), want) {
			t.Errorf("%v: missing %q", err, want)
		}
	}
}

// Looking up an unknown node or driving a non-input is an error, not a panic.
func TestUnknownNode(t *testing.T) {
	b := NewBuilder()
	b.Input("a")
	b.NMOS("m", "a", "x", "gnd", DeviceOpts{})
	s := NewSim(mustCompile(t, b), Options{})
	if _, ok := s.Netlist().Lookup("nope"); ok {
		t.Error("found a node that does not exist")
	}
	if _, ok := s.Netlist().LookupDevice("m"); !ok {
		t.Error("device m not found")
	}
	x, _ := s.Netlist().Lookup("x")
	for _, n := range []int{-1, 99, x} {
		if err := s.SetInput(n, Drive1); err == nil {
			t.Errorf("SetInput(%d) accepted", n)
		}
	}
}

// TestOriginalNames: a node and a device named by a netlist in a spelling
// the design format cannot hold keep that spelling for display and are
// found by either name.
func TestOriginalNames(t *testing.T) {
	b := NewBuilder()
	b.Input("a")
	b.NMOS("mn_3_", "a", "net_3_", "gnd", DeviceOpts{})
	b.PMOS("mp", "a", "net_3_", "vdd", DeviceOpts{})
	if err := b.Original("net_3_", "net<3>"); err != nil {
		t.Fatal(err)
	}
	b.Original("mn_3_", "MN<3>")
	nl, err := b.Compile()
	if err != nil {
		t.Fatal(err)
	}
	n, ok := nl.Lookup("net<3>")
	m, ok2 := nl.Lookup("net_3_")
	if !ok || !ok2 || n != m {
		t.Fatalf("lookup by both names: %d %v, %d %v", n, ok, m, ok2)
	}
	if got := nl.DisplayName(n); got != "net<3>" {
		t.Errorf("DisplayName = %q, want net<3>", got)
	}
	if got := nl.NodeName(n); got != "net_3_" {
		t.Errorf("NodeName = %q, want net_3_", got)
	}
	a, _ := nl.Lookup("a")
	if nl.DisplayName(a) != "a" {
		t.Errorf("a node without an original shows %q", nl.DisplayName(a))
	}
	d, ok := nl.LookupDevice("MN<3>")
	if !ok || nl.DeviceDisplayName(d) != "MN<3>" || nl.Device(d).Name != "mn_3_" {
		t.Errorf("device: %d %v %q", d, ok, nl.DeviceDisplayName(d))
	}
	if _, ok := nl.Lookup("nothing"); ok {
		t.Error("found a node that does not exist")
	}
}

// The name indices are sorted on the first look-up (nameIndex): Sims in
// several goroutines may share a netlist and look names up at once, and
// a netlist copied by WithTech finds the same names through the shared
// index. Run under -race to check the first.
func TestLookupShared(t *testing.T) {
	b := NewBuilder()
	b.Input("a")
	for i := 0; i < 50; i++ {
		b.NMOS(fmt.Sprintf("mn%d", i), "a", fmt.Sprintf("x%d", i), "gnd", DeviceOpts{})
	}
	nl, err := b.Compile()
	if err != nil {
		t.Fatal(err)
	}
	var wg sync.WaitGroup
	for g := 0; g < 4; g++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := 0; i < 50; i++ {
				if n, ok := nl.Lookup(fmt.Sprintf("x%d", i)); !ok || nl.NodeName(n) != fmt.Sprintf("x%d", i) {
					t.Errorf("x%d: %d %v", i, n, ok)
				}
				if d, ok := nl.LookupDevice(fmt.Sprintf("mn%d", i)); !ok || nl.Device(d).Name != fmt.Sprintf("mn%d", i) {
					t.Errorf("mn%d: %d %v", i, d, ok)
				}
			}
		}()
	}
	wg.Wait()
	c, err := nl.WithTech(nl.Tech)
	if err != nil {
		t.Fatal(err)
	}
	if n, ok := c.Lookup("x7"); !ok || c.NodeName(n) != "x7" {
		t.Errorf("copy: x7 = %d %v", n, ok)
	}
}
