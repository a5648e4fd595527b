package netbuild

import (
	"testing"

	"railyard/switchsim"
	"railyard/switchsim/diag"
)

// Nodes and devices share one name space, exact names are served first,
// and an original spelling is kept only where it names one thing.
func TestBuildNames(t *testing.T) {
	d := NewDesign(Node{Want: "vdd"}, Node{Want: "gnd"})
	esc := d.Node("net<3>", Node{Want: "net[3]", Orig: "net<3>"})
	lit := d.Node("net[3]", Node{Want: "net[3]", Orig: "net[3]", Exact: true})
	x := d.Node("x", Node{Want: "x", Orig: "X", Exact: true})
	d.Inputs = []int32{esc, lit}
	d.AddDevice(Device{Want: "x", Orig: "X", Exact: true, Kind: NMOS, Gate: esc, A: lit, B: x})
	d.AddDevice(Device{Want: "p", Kind: PullUp, Gate: -1, A: -1, B: x})
	errs := NewSink(10)
	nl := d.Build(errs.S)
	if nl == nil {
		t.Fatal(errs.Err())
	}
	for _, c := range []struct{ name, shown string }{{"net[3]", "net[3]"}, {"net[3]Q2", "net<3>"}, {"x", "X"}} {
		n, ok := nl.Lookup(c.name)
		if !ok || nl.DisplayName(n) != c.shown {
			t.Errorf("node %s: found %v, shown %q, want %q", c.name, ok, nl.DisplayName(n), c.shown)
		}
	}
	dv, ok := nl.LookupDevice("xQ2")
	if !ok || nl.DeviceDisplayName(dv) != "xQ2" {
		t.Errorf("the device X beside node X: found %v, shown %q; want xQ2 shown as itself", ok, nl.DeviceDisplayName(dv))
	}
	if n, _ := nl.Lookup("X"); nl.NodeName(n) != "x" {
		t.Errorf("the spelling X finds %s, want the node x", nl.NodeName(n))
	}
	empty := NewDesign(Node{Want: "vdd"}, Node{Want: "gnd"})
	empty.At = diag.Pos{File: "e.sp", Line: 3, Col: 9}
	errs = NewSink(10)
	if empty.Build(errs.S) != nil || errs.Err() == nil || errs.Err().Error() != "e.sp:3:9: the design has no devices: nothing to simulate" {
		t.Errorf("a design with no devices: %v", errs.Err())
	}
	_ = switchsim.NMOS
}
