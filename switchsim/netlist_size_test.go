package switchsim

import (
	"math"
	"testing"
)

// WithSize changes one transistor's W/L in a copy and nothing else: the
// original keeps its sizes, the copy its other devices' sizes, and the
// copy's resistance follows R = r_sq L / W (the estimate physical mode
// uses: README, "Physical mode"). A pull has no size to change.
func TestWithSize(t *testing.T) {
	b := NewBuilder()
	b.SetTech(Generic())
	b.Input("a")
	b.Output("y")
	if err := b.NMOS("n", "a", "y", "gnd", DeviceOpts{W: 1.44e-6, L: 0.18e-6}); err != nil {
		t.Fatal(err)
	}
	b.Pull("up", "y", true, Pull)
	nl, err := b.Compile()
	if err != nil {
		t.Fatal(err)
	}
	n, _ := nl.LookupDevice("n")
	up, _ := nl.LookupDevice("up")
	c, err := nl.WithSize(n, 0.72e-6, 0.36e-6)
	if err != nil {
		t.Fatal(err)
	}
	if d := nl.Device(n); d.W != 1.44e-6 || d.L != 0.18e-6 {
		t.Errorf("the original changed: %g/%g", d.W, d.L)
	}
	if d := c.Device(n); d.W != 0.72e-6 || d.L != 0.36e-6 {
		t.Errorf("the copy: %g/%g, want 0.72u/0.36u", d.W, d.L)
	}
	// generic rn = 12.5 kohm a square; L/W = 0.36/0.72 is half a square
	if r := deviceResistance(c, n); math.Abs(r-6.25e3) > 1e-6 {
		t.Errorf("copy's resistance %g ohm, want rn L/W = 6.25 kohm", r)
	}
	if _, err := nl.WithSize(up, 1e-6, 1e-6); err == nil {
		t.Error("a pull was given a size")
	}
	if _, err := nl.WithSize(n, math.NaN(), 1e-6); err == nil {
		t.Error("a NaN width was taken")
	}
}
