package switchsim

import "testing"

func mustCompile(t *testing.T, b *Builder) *Netlist {
	t.Helper()
	nl, err := b.Compile()
	if err != nil {
		t.Fatal(err)
	}
	return nl
}

func set(t *testing.T, s *Sim, name string, d Drive) {
	t.Helper()
	n, ok := s.Netlist().Lookup(name)
	if !ok {
		t.Fatalf("no node %s", name)
	}
	if err := s.SetInput(n, d); err != nil {
		t.Fatal(err)
	}
}

func node(s *Sim, name string) NodeState {
	n, _ := s.Netlist().Lookup(name)
	return s.Node(n)
}

// A CMOS inverter computes NOT (common practice).
func TestSmokeInverter(t *testing.T) {
	b := NewBuilder()
	b.Input("a")
	b.PMOS("p", "a", "vdd", "y", DeviceOpts{})
	b.NMOS("n", "a", "y", "gnd", DeviceOpts{})
	s := NewSim(mustCompile(t, b), Options{Mode: Ideal})
	s.Settle()
	if got := node(s, "y"); got.Value != VX {
		t.Fatalf("y with a=X: %+v", got)
	}
	for _, c := range []struct {
		in   Drive
		want State
	}{{Drive0, State1}, {Drive1, State0}} {
		set(t, s, "a", c.in)
		r := s.Settle()
		if got := node(s, "y"); got.State != c.want {
			t.Fatalf("a=%v: y=%v (rounds %d)", c.in, got.State, r.Rounds)
		}
	}
}

// A ring of three inverters oscillates (common practice).
func TestSmokeRing(t *testing.T) {
	b := gatedRing()
	s := NewSim(mustCompile(t, b), Options{Mode: Ideal})
	set(t, s, "en", Drive0)
	if r := s.Settle(); r.Oscillated {
		t.Fatal("disabled ring oscillated")
	}
	set(t, s, "en", Drive1)
	r := s.Settle()
	if !r.Oscillated {
		t.Fatalf("enabled ring did not oscillate: rounds %d", r.Rounds)
	}
	if got := node(s, "n1"); got.Value != VX {
		t.Fatalf("n1 = %+v", got)
	}
}

// A keeper fight explained: a strong write path beats a weak keeper (common practice).
func TestSmokeExplain(t *testing.T) {
	b := NewBuilder()
	b.Input("d")
	b.Input("en")
	b.NMOS("w", "en", "d", "q", DeviceOpts{})
	b.PMOS("k", "gnd", "vdd", "q", DeviceOpts{Strength: Weak})
	s := NewSim(mustCompile(t, b), Options{Mode: Ideal})
	set(t, s, "d", Drive0)
	set(t, s, "en", Drive1)
	s.Settle()
	q, _ := s.Netlist().Lookup("q")
	e := s.Explain(q)
	if e.State != StateL || len(e.Winning) != 1 || len(e.Opposing) != 1 {
		t.Fatalf("explain q: %+v", e)
	}
	if nl := s.Netlist(); nl.Device(e.Winning[0].Steps[0].Device).Name != "w" || nl.Device(e.Opposing[0].Steps[0].Device).Name != "k" {
		t.Fatalf("paths: %+v", e)
	}
	if e.Opposing[0].Strength != Weak {
		t.Fatalf("opposing strength %v", e.Opposing[0].Strength)
	}
}

// Physical explanation of a pass-device high: the nMOS that drops the
// threshold is named (common practice: an nMOS passes a 1 only up to Vg - Vt).
func TestSmokeExplainDegrader(t *testing.T) {
	b := NewBuilder()
	b.Input("a")
	b.NMOS("pass", "vdd", "a", "y", DeviceOpts{})
	b.PMOS("lp", "y", "vdd", "z", DeviceOpts{})
	b.NMOS("ln", "y", "z", "gnd", DeviceOpts{})
	s := NewSim(mustCompile(t, b), Options{Mode: Physical})
	set(t, s, "a", Drive1)
	s.Settle()
	y, _ := s.Netlist().Lookup("y")
	e := s.Explain(y)
	if e.State != StateH || e.Degrader < 0 || s.Netlist().Device(e.Degrader).Name != "pass" {
		t.Fatalf("explain y: state %v degrader %d", e.State, e.Degrader)
	}
	if !(e.Volts < s.Netlist().Tech.Vdd-s.Netlist().Tech.Vtn+1e-9) {
		t.Fatalf("y at %.3f V: not below vdd - vtn", e.Volts)
	}
}

// Physical explanation of a ratioed fight: the node sits at the
// resistive-load inverter's VOL (level-1, worked by hand in
// resistiveLoadVOL), and the effective resistances at that point give it
// back, V = vdd Rdown / (Rup + Rdown) (Ohm's law): the pull's is its own.
func TestSmokeExplainDivider(t *testing.T) {
	b := NewBuilder()
	b.Input("en")
	b.NMOS("down", "en", "y", "gnd", DeviceOpts{})
	b.Pull("up", "y", true, Pull)
	s := NewSim(mustCompile(t, b), Options{Mode: Physical})
	set(t, s, "en", Drive1)
	s.Settle()
	y, _ := s.Netlist().Lookup("y")
	e := s.Explain(y)
	if e.Divider == nil {
		t.Fatalf("no divider: %+v", e)
	}
	tech := s.Netlist().Tech
	rUp := tech.DefaultResistance(Pull) // the documented default of an unsized pull
	want := resistiveLoadVOL(tech, betaOf(tech.Kn, tech.Wn, tech.L), rUp)
	cur := (tech.Vdd - want) / rUp // through the pull (Ohm's law)
	rDown := want / cur
	if abs(want-e.Volts) > 1e-6 || abs(e.Divider.Up-rUp) > 1e-6*rUp || abs(e.Divider.Down-rDown) > 1e-6*rDown {
		t.Fatalf("divider %+v at %.4f V, want up %.0f down %.0f ohm, %.4f V", e.Divider, e.Volts, rUp, rDown, want)
	}
}

func abs(x float64) float64 {
	if x < 0 {
		return -x
	}
	return x
}

// gatedRing is a NAND (enable en) and two inverters in a ring: three
// inverting stages, so it oscillates while en is 1 (common practice).
func gatedRing() *Builder {
	b := NewBuilder()
	b.Input("en")
	b.PMOS("p0", "en", "vdd", "n0", DeviceOpts{})
	b.PMOS("p0b", "n2", "vdd", "n0", DeviceOpts{})
	b.NMOS("m0", "en", "n0", "x0", DeviceOpts{})
	b.NMOS("m0b", "n2", "x0", "gnd", DeviceOpts{})
	for i, io := range [][2]string{{"n0", "n1"}, {"n1", "n2"}} {
		b.PMOS("p"+string(rune('1'+i)), io[0], "vdd", io[1], DeviceOpts{})
		b.NMOS("m"+string(rune('1'+i)), io[0], io[1], "gnd", DeviceOpts{})
	}
	return b
}
