package netfile_test

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"railyard/switchsim"
	"railyard/switchsim/cardfile"
	"railyard/switchsim/internal/simtest"
	"railyard/switchsim/netfile"
	"railyard/switchsim/vfile"
)

// A latch as a designer's netlist: names that need escaping, a binned
// model card, parasitic capacitors, a title.
const convLatch = `Operand latch, extracted
.model nch.1 nmos (level=1 vto=0.42 kp=190u gamma=0.41 phi=0.72)
.model pch.1 pmos (level=1 vto=-0.44 u0=140 tox=8n)
.subckt OPLATCH D CLK Q<0> VDD VSS
XI0 CLK clk_b# VDD VSS INV
MN1 D CLK s$1 VSS nch W=0.4u L=0.18u
MP1 D clk_b# s$1 VDD pch W=0.8u L=0.18u
XI1 s$1 qb VDD VSS INV
XI2 qb Q<0> VDD VSS INV
MN2 Q<0> clk_b# s$1 VSS nch W=0.4u L=0.18u
MP2 Q<0> CLK s$1 VDD pch W=0.8u L=0.18u
C1 s$1 VSS 3.5f
C2 Q<0> VSS 1.25f
.ends
.subckt INV A Y VDD VSS
MN Y A VSS VSS nch W=0.4u L=0.18u
MP Y A VDD VDD pch W=0.8u L=0.18u
.ends
`

// readsBack reads a converted design.
func readsBack(t *testing.T, src []byte) *netfile.Design {
	t.Helper()
	d, err := netfile.Read("conv.sw", src)
	if err != nil {
		t.Fatalf("the converted design does not read: %v\n%s", err, src)
	}
	return d
}

// A netlist and its .sw conversion give the same netlist: node and device
// names, kinds, terminals, sizes, capacitances, the technology, and the
// spellings people are shown.
func TestConvertRoundTrip(t *testing.T) {
	d, err := cardfile.Read("oplatch.sp", []byte(convLatch), cardfile.Options{})
	if err != nil {
		t.Fatal(err)
	}
	var buf bytes.Buffer
	if err := netfile.WriteConverted(&buf, d); err != nil {
		t.Fatal(err)
	}
	// Without the alias lines the rest must read today, and give the same
	// netlist but for the spellings shown.
	var noAlias []string
	for _, l := range strings.Split(buf.String(), "\n") {
		if !strings.HasPrefix(l, "alias ") {
			noAlias = append(noAlias, l)
		}
	}
	plain, err := netfile.Read("conv.sw", []byte(strings.Join(noAlias, "\n")))
	if err != nil {
		t.Fatalf("the converted design (alias lines left out) does not read: %v\n%s", err, buf.String())
	}
	if diff := diffNetlists(d.Netlist, plain.Netlist); len(diff) > 0 {
		t.Fatalf("converted netlist differs:\n%s\n%s", strings.Join(diff, "\n"), buf.String())
	}
	back := readsBack(t, buf.Bytes())
	if diff := append(diffNetlists(d.Netlist, back.Netlist), diffShown(d.Netlist, back.Netlist)...); len(diff) > 0 {
		t.Errorf("converted netlist differs:\n%s", strings.Join(diff, "\n"))
	}
}

// diffShown compares what people are shown and the resistive devices'
// fields, which diffNetlists leaves out.
func diffShown(a, b *switchsim.Netlist) []string {
	var d []string
	for n := 0; n < a.NumNodes(); n++ {
		m, ok := b.Lookup(a.NodeName(n))
		if ok && a.DisplayName(n) != b.DisplayName(m) {
			d = append(d, "node "+a.NodeName(n)+" shown as "+a.DisplayName(n)+", then "+b.DisplayName(m))
		}
	}
	for i := 0; i < a.NumDevices(); i++ {
		j, ok := b.LookupDevice(a.Device(i).Name)
		if !ok {
			continue
		}
		x, y := a.Device(i), b.Device(j)
		if a.DeviceDisplayName(i) != b.DeviceDisplayName(j) || x.Resistive != y.Resistive || x.Ohms != y.Ohms {
			d = append(d, "device "+x.Name+" differs in its shown name or resistance")
		}
	}
	return d
}

// The converted file, read by hand (testdata/oplatch_converted.sw). What
// was checked: the title is the description; the tech line carries the
// models' vtn 0.42, vtp 0.44, kn 190u, gamma 0.41, phi 0.72 and
// kp = 140e-4 x 3.9 x 8.854e-12 / 8e-9 = 60.43u; the rails are vdd and
// vss (VSS is a default ground name); d and clk are inputs and q[0] the
// output (ports reaching only gates, and a rail-driven stage); the two C
// cards become s$1 = sX241 cap=3.5f and q[0] cap=1.25f; every device has
// w= and l= as written (0.4u, 0.8u by 0.18u); every changed spelling has
// its alias (CLK, Q<0>, s$1, XI0.MN ...).
func TestConvertGolden(t *testing.T) {
	d, err := cardfile.Read("oplatch.sp", []byte(convLatch), cardfile.Options{})
	if err != nil {
		t.Fatal(err)
	}
	var buf bytes.Buffer
	if err := netfile.WriteConverted(&buf, d); err != nil {
		t.Fatal(err)
	}
	golden := filepath.Join("testdata", "oplatch_converted.sw")
	if os.Getenv("RAILYARD_UPDATE") != "" {
		os.MkdirAll("testdata", 0o755)
		os.WriteFile(golden, buf.Bytes(), 0o644)
	}
	want, err := os.ReadFile(golden)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(buf.Bytes(), want) {
		t.Errorf("converted file differs from %s (RAILYARD_UPDATE=1 rewrites it; read the diff):\n%s", golden, buf.String())
	}
}

// Resistive devices and links convert to their statements (tran, rtran,
// rnmos, rpmos, r= on pulls), and read back as the same netlist: kinds,
// terminals, sizes, strengths, resistances and shown names.
func TestConvertResistive(t *testing.T) {
	src := []byte(`module m (input a, input g, output y, output z);
  supply1 vdd;
  tran t (a, y);
  rtran r (y, z);
  rnmos rn (z, a, g);
  pullup (weak1) p (z);
endmodule
`)
	d, err := vfile.Read("m.v", src, vfile.Options{})
	if err != nil {
		t.Fatal(err)
	}
	var buf bytes.Buffer
	if err := netfile.WriteConverted(&buf, d); err != nil {
		t.Fatal(err)
	}
	out := buf.String()
	for _, want := range []string{"tran t a y\n", "rtran r y z\n", "rnmos rn g a z w=360n l=180n\n", "pullup p z strength=weak\n"} {
		if !strings.Contains(out, want) {
			t.Errorf("converted file lacks %q:\n%s", want, out)
		}
	}
	if diff := simtest.Diff(d.Netlist, readsBack(t, buf.Bytes()).Netlist, false); len(diff) > 0 {
		t.Errorf("converted module differs:\n%s\n%s", strings.Join(diff, "\n"), out)
	}
	c, err := cardfile.Read("r.sp", []byte(".subckt r a y\nr1 a y 4.7k\nr2 y 0 22k\n.ends\n"), cardfile.Options{})
	if err != nil {
		t.Fatal(err)
	}
	buf.Reset()
	netfile.WriteConverted(&buf, c)
	for _, want := range []string{"rtran r1 a y r=4.7k\n", "pulldown r2 y r=22k\n"} {
		if !strings.Contains(buf.String(), want) {
			t.Errorf("converted file lacks %q:\n%s", want, buf.String())
		}
	}
	back := readsBack(t, buf.Bytes())
	if diff := simtest.Diff(c.Netlist, back.Netlist, false); len(diff) > 0 {
		t.Errorf("converted netlist differs:\n%s", strings.Join(diff, "\n"))
	}
}
