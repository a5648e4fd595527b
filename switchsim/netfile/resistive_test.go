package netfile_test

import (
	"bytes"
	"strings"
	"testing"

	sw "railyard/switchsim"
	"railyard/switchsim/internal/simtest"
	"railyard/switchsim/netfile"
)

// Every resistive and link statement, at the top level and in a cell,
// with and without its options.
const resistiveDesign = `design links "every resistive statement"
input a g en en_b
output y z q
cell pass IN OUT EN
  rnmos n EN IN mid w=0.5u l=0.2u
  rtran r mid OUT r=2k strength=weak
end
tran t a m
rtran r1 m y
rtran r2 y z r=4.7k
rnmos rn g a q
rpmos rp g a q w=0.9u strength=weak
rtgate tg en en_b a q wn=0.4u wp=0.8u l=0.2u
pullup pu z r=22k
pulldown pd q strength=weak
use pass u1 a w en
use pass u2 a v en strength=weak
`

// The statements make the devices they name: kinds, terminals, sizes, the
// resistive flag, resistances, and strengths (a resistive device defaults
// to pull, which is the most it passes; a cap on a use lowers it).
func TestResistiveStatements(t *testing.T) {
	d, err := netfile.Read("links.sw", []byte(resistiveDesign))
	if err != nil {
		t.Fatal(err)
	}
	nl := d.Netlist
	for _, want := range []struct {
		name, kind, ends string
		w, l             float64 // 0: not compared
		resistive        bool
		ohms             float64
		strength         sw.Strength
	}{
		{"t", "tran", "- a m", 0, 0, false, 0, sw.Strong},
		{"r1", "tran", "- m y", 0, 0, true, 0, sw.Pull},
		{"r2", "tran", "- y z", 0, 0, true, 4700, sw.Pull},
		{"rn", "nmos", "g a q", nl.Tech.Wn, nl.Tech.L, true, 0, sw.Pull},
		{"rp", "pmos", "g a q", 0.9e-6, nl.Tech.L, true, 0, sw.Weak},
		{"tg.n", "nmos", "en a q", 0.4e-6, 0.2e-6, true, 0, sw.Pull},
		{"tg.p", "pmos", "en_b a q", 0.8e-6, 0.2e-6, true, 0, sw.Pull},
		{"pu", "pullup", "- vdd z", 0, 0, false, 22e3, sw.Pull},
		{"pd", "pulldown", "- gnd q", 0, 0, false, 0, sw.Weak},
		{"u1.n", "nmos", "en a u1.mid", 0.5e-6, 0.2e-6, true, 0, sw.Pull},
		{"u1.r", "tran", "- u1.mid w", 0, 0, true, 2000, sw.Weak},
		{"u2.n", "nmos", "en a u2.mid", 0.5e-6, 0.2e-6, true, 0, sw.Weak},
	} {
		i, ok := nl.LookupDevice(want.name)
		if !ok {
			t.Errorf("no device %s", want.name)
			continue
		}
		dv := nl.Device(i)
		term := func(n int) string {
			if n < 0 {
				return "-"
			}
			return nl.NodeName(n)
		}
		ends := term(dv.Gate) + " " + term(dv.A) + " " + term(dv.B)
		if dv.Kind.String() != want.kind || ends != want.ends || dv.Resistive != want.resistive || dv.Ohms != want.ohms || dv.Strength != want.strength ||
			(want.w != 0 && (dv.W != want.w || dv.L != want.l)) {
			t.Errorf("%s: %s %s w=%g l=%g resistive=%v ohms=%g %s; want %s %s w=%g l=%g resistive=%v ohms=%g %s", want.name,
				dv.Kind, ends, dv.W, dv.L, dv.Resistive, dv.Ohms, dv.Strength,
				want.kind, want.ends, want.w, want.l, want.resistive, want.ohms, want.strength)
		}
	}
}

// In ideal mode a chain of rtran reduces the strength one step a device,
// by the table of IEEE 1364-2005 §7.12: a strong input leaves the first
// as pull and the second as weak; a tran passes the strength unchanged.
// An rnmos passes what it reduces the same way, and a pull's strength is
// its own whatever r= says (r= is for physical mode).
func TestResistiveChainIdeal(t *testing.T) {
	d, err := netfile.Read("chain.sw", []byte(`input a g
output p q r s
tran t a p
rtran r1 p q
rtran r2 q r r=1k
rnmos n g r s
pulldown pd s strength=weak r=10k
`))
	if err != nil {
		t.Fatal(err)
	}
	s := simtest.New(t, d.Netlist, sw.Ideal)
	s.Apply("a=1 g=1")
	in := s.Node("a").Strength
	if in != sw.Strong && in != sw.Supply {
		t.Fatalf("input a at %s: the chain below assumes a strong or supply input", in)
	}
	for _, want := range []struct {
		node     string
		strength sw.Strength
	}{
		{"p", sw.Strong}, // a tran: supply becomes strong, strong stays (§7.1)
		{"q", sw.Pull},   // strong becomes pull (§7.12)
		{"r", sw.Weak},   // pull becomes weak
	} {
		if got := s.Node(want.node); got.Value != sw.V1 || got.Strength != want.strength {
			t.Errorf("%s: %s %s, want 1 at %s", want.node, got.Value, got.Strength, want.strength)
		}
	}
	// The rnmos leaves weak as medium, a charge strength (§7.12), which
	// the weak pulldown's drive beats.
	if got := s.Node("s"); got.Value != sw.V0 || got.Strength != sw.Weak {
		t.Errorf("s: %s %s, want 0 at weak", got.Value, got.Strength)
	}
}

// Each mistake in the new statements is reported at the word at fault.
func TestResistiveErrors(t *testing.T) {
	cases := []struct {
		name, src string
		wants     []string
	}{
		{"tran terminals", "input a\ntran t a\n", []string{"2:1: wrong number of terminals: tran takes NAME A B"}},
		{"rtran terminals", "input a\nrtran t a b c\n", []string{"2:13: wrong number of terminals: rtran takes NAME A B"}},
		{"rnmos terminals", "input a\nrnmos n a b\n", []string{"2:1: wrong number of terminals: rnmos takes NAME GATE A B"}},
		{"rtgate terminals", "input a\nrtgate t a b c\n", []string{"2:1: wrong number of terminals: rtgate takes NAME NGATE PGATE A B"}},
		{"r on tran", "input a\ntran t a b r=1k\n", []string{`2:12: unknown option "r" for tran`}},
		{"r on rnmos", "input a\nrnmos n a b c r=1k\n", []string{`2:15: unknown option "r" for rnmos`}},
		{"r not positive", "input a\nrtran t a b r=-1k\n", []string{"2:15: r must be positive"}},
		{"r bad number", "input a\npullup p a r=4k7\n", []string{`2:14: bad number "4k7" for r`}},
		{"strong on rtran", "input a\nrtran t a b strength=strong\n", []string{"2:22: strength=strong on rtran: a resistive device passes at most pull"}},
		{"supply on rnmos", "input a\nrnmos n a b c strength=supply\n", []string{"2:24: strength=supply on rnmos"}},
		{"rtgate name taken", "input a b\nrtgate t a b a c\nnmos t a b c\n", []string{"3:6: duplicate device or instance name t"}},
		{"in a cell", "cell c x\n  rtran r x\nend\ninput a\nuse c u a\n", []string{"2:3: wrong number of terminals: rtran takes NAME A B"}},
		{"misspelt", "input a\nrtrans t a b\n", []string{`2:1: unknown statement "rtrans": did you mean rtran?`}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) { wantErrors(t, c.src, nil, c.wants...) })
	}
}

// The canonical writer prints the new statements with their options in a
// fixed order (r before strength; w l strength; wn wp l strength) and
// numbers in engineering notation, and the result reads as the same
// netlist; so does the flat writer of a compiled netlist.
func TestResistiveWrite(t *testing.T) {
	src := "input a g\noutput y\nrtran r1 a m strength=Weak r=4700\nrnmos n g m y l=0.2u w=0.5u\npullup p y strength=weak r=0.022M\n"
	d, err := netfile.Read("w.sw", []byte(src))
	if err != nil {
		t.Fatal(err)
	}
	var buf bytes.Buffer
	if err := netfile.Write(&buf, d); err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"rtran r1 a m r=4.7k strength=weak\n", "rnmos n g m y w=500n l=200n\n", "pullup p y r=22k strength=weak\n"} {
		if !strings.Contains(buf.String(), want) {
			t.Errorf("canonical form lacks %q:\n%s", want, buf.String())
		}
	}
	back, err := netfile.Read("w.sw", buf.Bytes())
	if err != nil {
		t.Fatalf("canonical form does not read: %v\n%s", err, buf.String())
	}
	if diff := simtest.Diff(d.Netlist, back.Netlist, false); len(diff) > 0 {
		t.Errorf("canonical form differs:\n%s", strings.Join(diff, "\n"))
	}
	full, err := netfile.Read("links.sw", []byte(resistiveDesign))
	if err != nil {
		t.Fatal(err)
	}
	buf.Reset()
	if err := netfile.WriteNetlist(&buf, full.Netlist); err != nil {
		t.Fatal(err)
	}
	flat, err := netfile.Read("flat.sw", buf.Bytes())
	if err != nil {
		t.Fatalf("flat form does not read: %v\n%s", err, buf.String())
	}
	if diff := simtest.Diff(full.Netlist, flat.Netlist, false); len(diff) > 0 {
		t.Errorf("flat form differs:\n%s\n%s", strings.Join(diff, "\n"), buf.String())
	}
}
