package gen_test

import (
	"math/rand/v2"
	"slices"
	"strings"
	"testing"

	"railyard/switchsim"
	"railyard/switchsim/gen"
)

func compile(t *testing.T, b *switchsim.Builder) *switchsim.Netlist {
	t.Helper()
	nl, err := b.Compile()
	if err != nil {
		t.Fatal(err)
	}
	return nl
}

// The sizes the generators document, from their structure (closed-form counts).
func TestSizes(t *testing.T) {
	for _, k := range []int{1, 3, 6} {
		nl := compile(t, gen.MuxTree(k))
		if want := 2*(1<<(k+1)-2) + 2*k; nl.NumDevices() != want {
			t.Errorf("MuxTree(%d): %d devices, want %d", k, nl.NumDevices(), want)
		}
		if want := 1<<(k+1) + 2*k + 1; nl.NumNodes() != want {
			t.Errorf("MuxTree(%d): %d nodes, want %d", k, nl.NumNodes(), want)
		}
	}
	for _, n := range []int{1, 4} {
		nl := compile(t, gen.FlipFlopChain(n))
		if nl.NumDevices() != 16*n || nl.NumNodes() != 6*n+5 {
			t.Errorf("FlipFlopChain(%d): %d devices, %d nodes, want %d and %d", n, nl.NumDevices(), nl.NumNodes(), 16*n, 6*n+5)
		}
		if nl := compile(t, gen.FlipFlopChainPreset(n)); nl.NumDevices() != 17*n {
			t.Errorf("FlipFlopChainPreset(%d): %d devices, want %d", n, nl.NumDevices(), 17*n)
		}
		nl = compile(t, gen.InverterChain(n))
		if nl.NumDevices() != 2*n || nl.NumNodes() != n+3 {
			t.Errorf("InverterChain(%d): %d devices, %d nodes", n, nl.NumDevices(), nl.NumNodes())
		}
	}
	for _, n := range []int{0, 21, 34, 200, 1000} {
		nl := compile(t, gen.Sized(n))
		if want := max(n, 21); nl.NumNodes() != want {
			t.Errorf("Sized(%d): %d nodes, want %d", n, nl.NumNodes(), want)
		}
	}
}

// Random specs compile, and Shuffled keeps the same devices.
func TestRandomAndShuffled(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 1))
	for i := 0; i < 300; i++ {
		s := gen.Random(rng, 1+rng.IntN(12), 1+rng.IntN(16))
		u := s.Shuffled(rng)
		nla := compileSpec(t, s)
		nlb := compileSpec(t, u)
		if nla.NumNodes() != nlb.NumNodes() || nla.NumDevices() != nlb.NumDevices() {
			t.Fatalf("shuffled build differs in size\n%s", s)
		}
		key := func(nl *switchsim.Netlist) []string {
			var out []string
			for d := 0; d < nl.NumDevices(); d++ {
				dv := nl.Device(d)
				ends := []string{nl.NodeName(dv.A), nl.NodeName(dv.B)}
				slices.Sort(ends)
				g := "-"
				if dv.Gate >= 0 {
					g = nl.NodeName(dv.Gate)
				}
				out = append(out, strings.Join(append([]string{dv.Name, dv.Kind.String(), g, dv.Strength.String()}, ends...), " "))
			}
			slices.Sort(out)
			return out
		}
		if !slices.Equal(key(nla), key(nlb)) {
			t.Fatalf("shuffled build has other devices\n%s", s)
		}
		for n := 0; n < nla.NumNodes(); n++ {
			m, ok := nlb.Lookup(nla.NodeName(n))
			if !ok || nla.NodeCharge(n) != nlb.NodeCharge(m) || nla.NodeKind(n) != nlb.NodeKind(m) {
				t.Fatalf("node %s differs after shuffling\n%s", nla.NodeName(n), s)
			}
		}
	}
}

func compileSpec(t *testing.T, s *gen.Spec) *switchsim.Netlist {
	t.Helper()
	b, err := s.Builder()
	if err != nil {
		t.Fatalf("%v\n%s", err, s)
	}
	return compile(t, b)
}
