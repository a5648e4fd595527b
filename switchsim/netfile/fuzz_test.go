package netfile_test

import (
	"bytes"
	"errors"
	"strings"
	"testing"

	"railyard/designs"
	"railyard/switchsim/diag"
	"railyard/switchsim/netfile"
	"railyard/switchsim/steps"
)

// Fuzzing limits: small enough that one input never takes long to expand.
var fuzzLimits = netfile.Limits{FileSize: 64 << 10, LineLen: 4 << 10, Depth: 16, Devices: 20000, Errors: 20}

func seedDesigns(f *testing.F) {
	for _, e := range designs.List() {
		sw, _ := designs.FS.ReadFile(e.Name + ".sw")
		f.Add(sw)
	}
	f.Add(netfile.LibrarySource())
	f.Add([]byte("cell a X\n  use b i X\nend\ncell b Y\n  use a j Y\nend\nuse a top q\n"))
	f.Add([]byte("design x \"d\"\ntech generic vdd=1.2 vtp=-0.3\npower vcc\nground vss\ninput a\nnode a cap=1f charge=small\npulldown p a strength=weak\n"))
	f.Add([]byte("tech generic vdd=1.8\ncorner slow vdd=1.62 vtn=0.5 kn=150u\ncorner fast vdd=1.98\ninput a\nuse inv u a y\nalias u.n \"MN<0>\"\nalias y \"net\\\"3\"\n"))
	f.Add([]byte("input a\nnmos n a y gnd w=0.5 l=2m\nnode y cap=5\ncorner k vdd=0.3\nalias q \"Q\"\n"))
	f.Add([]byte(resistiveDesign))
}

// FuzzRead: no input panics; every error is a diag.List with a position in
// the file; a design that reads survives the writer: read(write(d)) gives
// the same netlist, both from the tree and flat.
func FuzzRead(f *testing.F) {
	seedDesigns(f)
	f.Fuzz(func(t *testing.T, src []byte) {
		d, err := netfile.ReadLimits("f.sw", src, fuzzLimits)
		if err != nil {
			var list diag.List
			if !errors.As(err, &list) || len(list) == 0 {
				t.Fatalf("error %T: %v", err, err)
			}
			for _, e := range list {
				if e.Pos.File != "f.sw" || e.Pos.Line < 1 {
					t.Fatalf("error without a position in f.sw: %v", e)
				}
			}
			return
		}
		lim := netfile.DefaultLimits()
		lim.Devices = fuzzLimits.Devices
		for _, flat := range []bool{false, true} {
			w := d
			if flat {
				w = &netfile.Design{Netlist: d.Netlist}
			}
			var buf bytes.Buffer
			if err := netfile.Write(&buf, w); err != nil {
				if flat && strings.Contains(err.Error(), "cannot be written") {
					continue // a generated name such as top.x is fine; others are the writer's to refuse
				}
				t.Fatalf("write: %v", err)
			}
			d2, err := netfile.ReadLimits("f.sw", buf.Bytes(), lim) // same name: a design without a design line is named after its file
			if err != nil {
				t.Fatalf("written design does not read: %v\n%s", err, buf.String())
			}
			if diff := diffNetlists(d.Netlist, d2.Netlist); len(diff) > 0 {
				t.Fatalf("read(write(d)) differs (flat %v):\n%s\n%s", flat, strings.Join(diff, "\n"), buf.String())
			}
			if flat {
				continue // the flat writer writes the netlist alone
			}
			if len(d2.Corners) != len(d.Corners) {
				t.Fatalf("read(write(d)) has %d corners, not %d", len(d2.Corners), len(d.Corners))
			}
			for i := range d.Corners {
				if d.Corners[i].Name != d2.Corners[i].Name || d.Corners[i].Tech != d2.Corners[i].Tech {
					t.Fatalf("corner %d differs: %+v vs %+v", i, d.Corners[i], d2.Corners[i])
				}
			}
			for n := 0; n < d.Netlist.NumNodes(); n++ {
				if a, b := d.Netlist.DisplayName(n), d2.Netlist.DisplayName(n); a != b {
					t.Fatalf("node %s shows as %q, then %q", d.Netlist.NodeName(n), a, b)
				}
			}
		}
	})
}

// FuzzSteps reads a design and a steps file against it: no panic, errors
// are diag.Lists, and rows that read have one value per column.
func FuzzSteps(f *testing.F) {
	for _, e := range designs.List() {
		sw, _ := designs.FS.ReadFile(e.Name + ".sw")
		st, _ := designs.FS.ReadFile(e.Name + ".steps")
		f.Add(sw, st)
	}
	f.Add([]byte("input a b\noutput y\nuse nand2 g a b y\n"), []byte("apply a b\ncheck y g.mid\n0 0|1 -\nx z | X Z # l\n"))
	f.Fuzz(func(t *testing.T, sw, src []byte) {
		d, err := netfile.ReadLimits("f.sw", sw, fuzzLimits)
		if err != nil {
			return
		}
		st, err := steps.ReadLimits("f.steps", src, d.Netlist, steps.Limits{FileSize: 64 << 10, LineLen: 4 << 10})
		if err != nil {
			var list diag.List
			if !errors.As(err, &list) || len(list) == 0 {
				t.Fatalf("error %T: %v", err, err)
			}
			return
		}
		for _, n := range st.Apply {
			if n < 0 || n >= d.Netlist.NumNodes() {
				t.Fatalf("apply column %d out of range", n)
			}
		}
		for _, r := range st.Rows {
			if len(r.Drives) != len(st.Apply) || (len(st.Check) > 0 && len(r.Wants) != len(st.Check)) {
				t.Fatalf("row %d: %d drives %d wants for %d/%d columns", r.Line, len(r.Drives), len(r.Wants), len(st.Apply), len(st.Check))
			}
		}
	})
}
