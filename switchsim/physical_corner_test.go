package switchsim

import (
	"fmt"
	"math"
	"testing"
)

func TestWithTechCorner(t *testing.T) {
	// A slow corner as commonly drawn: supply 10 % low, thresholds and k'
	// moved together against the device (thresholds up, k' down; common
	// practice, not a foundry's numbers). The pseudo-nMOS fight's low output
	// follows the textbook VOL at the corner's values (pseudoNMOSVOL), and
	// the nominal netlist is left as it was.
	b := NewBuilder()
	b.Input("a")
	b.PMOS("load", "gnd", "vdd", "y", DeviceOpts{L: 4 * Generic().L})
	b.NMOS("drv", "a", "y", "gnd", DeviceOpts{})
	b.Output("y")             // a stage's output: cnode, not a diffusion node's cdiff (switchsim §1)
	b.Node("c", 7e-15, HighZ) // a capacitance of its own
	b.NMOS("dc", "a", "c", "gnd", DeviceOpts{})
	nl := mustCompile(t, b)
	nom := nl.Tech
	slow := nom
	slow.Vdd *= 0.9
	slow.Vtn, slow.Vtp = nom.Vtn*1.1, nom.Vtp*1.1
	slow.Kn, slow.Kp = nom.Kn*0.9, nom.Kp*0.9
	slow.Cnode = 6e-15
	cn, err := nl.WithTech(slow)
	if err != nil {
		t.Fatal(err)
	}
	if &cn.devA[0] != &nl.devA[0] || &cn.nodeName[0] != &nl.nodeName[0] {
		t.Error("the corner does not share the netlist's arrays")
	}
	for _, c := range []struct {
		nl *Netlist
		tc Tech
	}{{nl, nom}, {cn, slow}} {
		s := NewSim(c.nl, Options{})
		set(t, s, "a", Drive1)
		s.Settle()
		want := pseudoNMOSVOL(c.tc, betaOf(c.tc.Kn, c.tc.Wn, c.tc.L), betaOf(c.tc.Kp, c.tc.Wp, 4*c.tc.L))
		phNear(t, fmt.Sprintf("y at vdd %g", c.tc.Vdd), node(s, "y").Volts, want, 1e-9)
	}
	y, _ := nl.Lookup("y")
	cc, _ := nl.Lookup("c")
	if cn.NodeCap(y) != 6e-15 || cn.NodeCap(cc) != 7e-15 || nl.NodeCap(y) != nom.Cnode {
		t.Errorf("caps: corner y %g c %g, nominal y %g", cn.NodeCap(y), cn.NodeCap(cc), nl.NodeCap(y))
	}
	bad := nom
	bad.Kn = 1e-320
	if _, err := nl.WithTech(bad); err == nil {
		t.Error("a corner with kn=1e-320 accepted")
	} else if te, ok := err.(*TechError); !ok || te.Key != "kn" {
		t.Errorf("error %v, want a TechError naming kn", err)
	}
	// Default sizes follow a corner that changes them; drawn ones stay.
	wide := nom
	wide.Wn = 2 * nom.Wn
	cw, err := nl.WithTech(wide)
	if err != nil {
		t.Fatal(err)
	}
	drv, _ := nl.LookupDevice("drv")
	load, _ := nl.LookupDevice("load")
	if w, _ := cw.DeviceSize(drv); w != wide.Wn {
		t.Errorf("drv width %g at the corner, want the new default %g", w, wide.Wn)
	}
	if _, l := cw.DeviceSize(load); math.Abs(l-4*nom.L) > 1e-18 {
		t.Errorf("load length %g, want its drawn %g", l, 4*nom.L)
	}
}
