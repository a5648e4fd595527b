package panel

import (
	"math"
	"testing"

	"railyard/switchsim"
)

// A level within 10 mV of a rail is full (it prints as the rail with two
// decimals); 0.20 V on a 1.8 V supply is not; NaN (ideal mode) adds nothing.
func TestFullLevel(t *testing.T) {
	for _, c := range []struct {
		v, vdd float64
		full   bool
	}{{0, 1.8, true}, {0.004, 1.8, true}, {1.8, 1.8, true}, {1.795, 1.8, true},
		{0.20, 1.8, false}, {1.14, 1.8, false}, {1.78, 1.8, false}, {math.NaN(), 1.8, true}, {0.5, math.NaN(), true}} {
		if got := FullLevel(c.v, c.vdd); got != c.full {
			t.Errorf("FullLevel(%g, %g) = %v, want %v", c.v, c.vdd, got, c.full)
		}
	}
}

// Delays print with an SI prefix (ps, ns, us), three figures.
func TestSeconds(t *testing.T) {
	for _, c := range []struct {
		s    float64
		want string
	}{{47.1e-12, "47.1ps"}, {1.5e-9, "1.5ns"}, {2e-6, "2us"}, {0.5, "0.5s"}, {math.NaN(), "-"}, {math.Inf(1), "-"}} {
		if got := Seconds(c.s); got != c.want {
			t.Errorf("Seconds(%g) = %q, want %q", c.s, got, c.want)
		}
	}
	if Volts(math.NaN()) != "-" || Volts(1.144) != "1.14" {
		t.Errorf("Volts: %q %q", Volts(math.NaN()), Volts(1.144))
	}
}

// Names are the display names, made printable once.
func TestNamesArePrintable(t *testing.T) {
	b := switchsim.NewBuilder()
	if err := b.Pull("up", "y", true, switchsim.Weak); err != nil {
		t.Fatal(err)
	}
	if err := b.Original("y", "y\x1b[2J"); err != nil {
		t.Fatal(err)
	}
	nl, err := b.Compile()
	if err != nil {
		t.Fatal(err)
	}
	n := NewNames(nl)
	y, _ := nl.Lookup("y")
	if n.Node[y] != `y\x1b[2J` || n.Device[0] != "up" {
		t.Errorf("names %q %q", n.Node[y], n.Device[0])
	}
}
