package netfile_test

import (
	"testing"

	"railyard/designs"
	"railyard/switchsim"
	"railyard/switchsim/diag"
	"railyard/switchsim/netfile"
)

func mustRead(t *testing.T, src string) *netfile.Design {
	t.Helper()
	d, err := netfile.Read("t.sw", []byte(src))
	if err != nil {
		t.Fatalf("%v\nin:\n%s", err, src)
	}
	return d
}

type sim struct {
	t *testing.T
	s *switchsim.Sim
}

func newSim(t *testing.T, d *netfile.Design) *sim {
	s := switchsim.NewSim(d.Netlist, switchsim.Options{Mode: switchsim.Ideal})
	s.Settle()
	return &sim{t, s}
}

func (s *sim) set(name string, dr switchsim.Drive) {
	s.t.Helper()
	n, ok := s.s.Netlist().Lookup(name)
	if !ok {
		s.t.Fatalf("no node %s", name)
	}
	if err := s.s.SetInput(n, dr); err != nil {
		s.t.Fatal(err)
	}
}

func (s *sim) node(name string) switchsim.NodeState {
	s.t.Helper()
	n, ok := s.s.Netlist().Lookup(name)
	if !ok {
		s.t.Fatalf("no node %s", name)
	}
	return s.s.Node(n)
}

var drive = map[int]switchsim.Drive{0: switchsim.Drive0, 1: switchsim.Drive1}
var strong = map[int]switchsim.State{0: switchsim.State0, 1: switchsim.State1}

// Static CMOS gates drive their output to a full, strong level for every
// input combination (common practice): inv is NOT, nand2 NOT AND, nor2 NOT OR.
func TestLibraryTruthTables(t *testing.T) {
	cases := []struct {
		cell  string
		table [][3]int // a, b, out (b unused for inv)
	}{
		{"inv", [][3]int{{0, 0, 1}, {1, 0, 0}}},
		{"nand2", [][3]int{{0, 0, 1}, {0, 1, 1}, {1, 0, 1}, {1, 1, 0}}},
		{"nor2", [][3]int{{0, 0, 1}, {0, 1, 0}, {1, 0, 0}, {1, 1, 0}}},
	}
	for _, c := range cases {
		t.Run(c.cell, func(t *testing.T) {
			src := "input a b\noutput y\nuse " + c.cell + " g a b y\n"
			if c.cell == "inv" {
				src = "input a b\noutput y\nuse inv g a y\n"
			}
			s := newSim(t, mustRead(t, src))
			for _, row := range c.table {
				s.set("a", drive[row[0]])
				s.set("b", drive[row[1]])
				s.s.Settle()
				if got := s.node("y"); got.State != strong[row[2]] {
					t.Errorf("%s(%d,%d): y state %s, want %s", c.cell, row[0], row[1], got.State, strong[row[2]])
				}
			}
		})
	}
}

// A clocked inverter drives NOT IN while enabled (EN=1, ENB=0) and floats,
// keeping its last value as charge, while disabled (common practice).
func TestLibraryTinv(t *testing.T) {
	s := newSim(t, mustRead(t, "input in en enb\noutput y\nuse tinv g in en enb y\n"))
	s.set("en", switchsim.Drive1)
	s.set("enb", switchsim.Drive0)
	for _, in := range []int{0, 1, 0} {
		s.set("in", drive[in])
		s.s.Settle()
		if got := s.node("y"); got.State != strong[1-in] {
			t.Errorf("enabled, in=%d: y state %s, want %s", in, got.State, strong[1-in])
		}
	}
	// disable while y is 1 (in=0), then move in: y floats, holding 1
	s.set("en", switchsim.Drive0)
	s.set("enb", switchsim.Drive1)
	s.s.Settle()
	for _, in := range []int{1, 0, 1} {
		s.set("in", drive[in])
		s.s.Settle()
		if got := s.node("y"); got.State != switchsim.StateZ || got.Value != switchsim.V1 || !got.Floating {
			t.Errorf("disabled, in=%d: y %+v, want floating with stored 1", in, got)
		}
	}
}

// The library parses, holds at least the four cells switchsim/FORMATS.md names with
// the ports it names.
func TestLibraryCells(t *testing.T) {
	cells := netfile.LibraryCells()
	want := map[string]string{"inv": "IN OUT", "nand2": "A B OUT", "nor2": "A B OUT", "tinv": "IN EN ENB OUT"}
	for name, ports := range want {
		got := cells[name]
		s := ""
		for i, p := range got {
			if i > 0 {
				s += " "
			}
			s += p
		}
		if s != ports {
			t.Errorf("cell %s ports %q, want %q", name, s, ports)
		}
	}
}

// A design's own cell wins over the library's of the same name: here an
// "inv" that is really a pass device gated by the power rail, so y follows a.
func TestOwnCellWins(t *testing.T) {
	d := mustRead(t, "input a\noutput y\ncell inv IN OUT\n  nmos n vdd IN OUT\nend\nuse inv u a y\n")
	if _, ok := d.Netlist.LookupDevice("u.p"); ok {
		t.Fatal("the library's inv was used")
	}
	s := newSim(t, d)
	s.set("a", switchsim.Drive1)
	s.s.Settle()
	if got := s.node("y"); got.Value != switchsim.V1 {
		t.Errorf("y = %v, want 1 (a pass device, not an inverter)", got.Value)
	}
}

// Library cells connect to the design's rails, whatever they are called.
func TestLibraryRenamedRails(t *testing.T) {
	d := mustRead(t, "power vcc\nground vss\ninput a\noutput y\nuse inv u a y\n")
	nl := d.Netlist
	p, _ := nl.LookupDevice("u.p")
	if dv := nl.Device(p); nl.NodeName(dv.A) != "vcc" && nl.NodeName(dv.B) != "vcc" {
		t.Errorf("u.p is not on vcc: %s %s", nl.NodeName(dv.A), nl.NodeName(dv.B))
	}
	if _, ok := nl.Lookup("vdd"); ok {
		t.Error("a node vdd exists though the power rail is vcc")
	}
	s := newSim(t, d)
	s.set("a", switchsim.Drive0)
	s.s.Settle()
	if got := s.node("y"); got.State != switchsim.State1 {
		t.Errorf("y = %s, want 1", got.State)
	}
}

// readDemo reads an embedded demo's design, as the reader sees its bytes.
func readDemo(name string) (*netfile.Design, error) {
	src, err := designs.FS.ReadFile(name + ".sw")
	if err != nil {
		return nil, err
	}
	return netfile.Read("demo:"+name, src)
}

func demoNames() []string {
	var names []string
	for _, e := range designs.List() {
		names = append(names, e.Name)
	}
	return names
}

func pos(line int) diag.Pos { return diag.Pos{File: "x.sp", Line: line, Col: 1} }
