package cardfile_test

import (
	"bytes"
	"flag"
	"os"
	"path/filepath"
	"railyard/designs"
	"railyard/switchsim/internal/simtest"
	"strings"
	"testing"

	sw "railyard/switchsim"
	"railyard/switchsim/cardfile"
	"railyard/switchsim/netfile"
	"railyard/switchsim/steps"
)

var update = flag.Bool("update", false, "rewrite the golden decks")

const latchSteps = `apply clk d
check q
1 0 | 0   # write 0
1 1 | 1   # write 1
0 1 | 1   # close
0 0 | 1   # hold
0 z | 1   # d released
`

// The testbench for the transmission-gate latch. The golden file was read
// by hand; what was checked in it: the cell subcircuit keeps every device
// with its drain gate source, the bulk at its rail and the sizes of the
// netlist (0.36u/0.72u by 0.18u); every node has a C card of its
// capacitance; the level-1 cards carry the generic technology (vto 0.45,
// kp 170u and 60u, gamma 0.4, phi 0.7) with the pMOS threshold negative;
// the supply is 1.8 V; clk's source is 1.8 V for the first two steps and
// ramps down over 100p at 20n; d ramps up at 10n, down at 30n, and is cut
// off by its switch from 40n (its enable ramps to 0 there); the transient
// runs 5 steps of 10n (50n); each check is measured at the end of its
// step (10n ... 50n).
func TestDeckGolden(t *testing.T) {
	d := read(t, tgateLatch, cardfile.Options{})
	st, err := steps.Read("latch.steps", []byte(latchSteps), d.Netlist)
	if err != nil {
		t.Fatal(err)
	}
	var buf bytes.Buffer
	if err := cardfile.WriteDeck(&buf, d.Netlist, st, cardfile.DeckOptions{Source: "t.sp, latch.steps"}); err != nil {
		t.Fatal(err)
	}
	golden(t, "latch_deck.sp", buf.Bytes())
}

func golden(t *testing.T, name string, got []byte) {
	t.Helper()
	path := filepath.Join("testdata", name)
	if *update {
		os.WriteFile(path, got, 0o644)
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(got, want) {
		t.Errorf("%s differs from the golden file (go test -update rewrites it; read the diff):\n%s", name, got)
	}
}

// Reading a deck back gives the same cell: nodes, inputs, outputs,
// devices (their names but for the M the card format puts in front),
// kinds, terminals, sizes, capacitances, and the technology keys the deck
// carries.
func TestDeckReadsBack(t *testing.T) {
	for _, c := range []struct {
		name, src string
		inputs    []string
	}{{"latch", tgateLatch, nil}, {"adder", mirrorAdder, []string{"a", "b", "c"}}} {
		d := read(t, c.src, cardfile.Options{Inputs: c.inputs})
		nl := d.Netlist
		var in []string
		for _, n := range nl.Inputs() {
			in = append(in, nl.NodeName(n))
		}
		st, err := steps.Read("x.steps", []byte("apply "+strings.Join(in, " ")+"\n"+strings.Repeat("0 ", len(in))+"\n"+strings.Repeat("1 ", len(in))+"\n"), nl)
		if err != nil {
			t.Fatal(err)
		}
		var buf bytes.Buffer
		if err := cardfile.WriteDeck(&buf, nl, st, cardfile.DeckOptions{}); err != nil {
			t.Fatal(err)
		}
		back, err := cardfile.Read("deck.sp", buf.Bytes(), cardfile.Options{Top: nl.Name})
		if err != nil {
			t.Fatalf("%s: the deck does not read back: %v\n%s", c.name, err, buf.String())
		}
		if diff := simtest.Diff(nl, back.Netlist, true); len(diff) > 0 {
			t.Errorf("%s: the deck reads back differently:\n%s", c.name, strings.Join(diff, "\n"))
		}
	}
}

// A pull and a weak keeper at the default size are written as what they
// stand for: a resistor of the pull's default resistance and a transistor
// lengthened to the weak strength's default resistance (railyard's
// physical mode, DefaultResistance).
func TestDeckStrengths(t *testing.T) {
	d, err := netfile.Read("k.sw", []byte("input a\noutput y\nnmos n a y gnd\npullup p y\npmos k a vdd y strength=weak\n"))
	if err != nil {
		t.Fatal(err)
	}
	nl := d.Netlist
	st, _ := steps.Read("k.steps", []byte("apply a\n1\n"), nl)
	var buf bytes.Buffer
	if err := cardfile.WriteDeck(&buf, nl, st, cardfile.DeckOptions{NMOSModel: "nch_lib", PMOSModel: "pch_lib"}); err != nil {
		t.Fatal(err)
	}
	out := buf.String()
	// By hand, generic technology: RefResistance = max(12.5k x 0.18/0.36,
	// 30k x 0.18/0.72) = 7.5k; a pull is 10 x that, 75k; a weak device
	// 40 x, 300k, which a pMOS of 0.72u (30k per square) reaches at
	// l = 300k x 0.72u / 30k = 7.2u.
	const rPull = 75e3
	for _, want := range []string{
		"rp vdd y 75k",
		"mk vdd a y vdd pch_lib w=720n l=7.2u",
		"mn y a gnd gnd nch_lib w=360n l=180n",
	} {
		if !strings.Contains(out, want) {
			t.Errorf("deck lacks %q:\n%s", want, out)
		}
	}
	if strings.Contains(out, ".model nfet_l1") {
		t.Error("named models given, but generic .model cards written")
	}
	// Read back, the resistor is a pull of that resistance: the same
	// resistance in physical mode.
	back, err := cardfile.Read("k.sp", buf.Bytes(), cardfile.Options{Top: "k"})
	if err != nil {
		t.Fatal(err)
	}
	i, _ := back.Netlist.LookupDevice("rp")
	if dv := back.Netlist.Device(i); dv.Kind != sw.PullUp || !near(dv.Ohms, rPull) || !near(dv.Ohms, nl.Tech.DefaultResistance(sw.Pull)) {
		t.Errorf("rp read back as %+v", dv)
	}
}

// A dynamic latch whose steps begin closed: its storage node floats after
// the first step, never written, and a circuit simulator's operating point
// would quietly give it a value. The deck sets it with .ic at railyard's
// stored value, here X, so half the supply. Checked by hand in the golden
// file: one .ic line, v(xdut.s)=900m; s_b is driven by its inverter (X in,
// X out: driven, so no .ic); the times of the sources and measures are
// whole multiples of the 3n period.
func TestDeckInitialConditions(t *testing.T) {
	sw, err := designs.FS.ReadFile("dynamic_latch.sw")
	if err != nil {
		t.Fatal(err)
	}
	d, err := netfile.Read("demo:dynamic_latch", sw)
	if err != nil {
		t.Fatal(err)
	}
	st, err := steps.Read("hold.steps", []byte("apply clk d\ncheck s q\n0 1 | Z X # closed before any write\n1 1 | 1 1 # write 1\n0 0 | Z 1 # hold\n"), d.Netlist)
	if err != nil {
		t.Fatal(err)
	}
	var buf bytes.Buffer
	if err := cardfile.WriteDeck(&buf, d.Netlist, st, cardfile.DeckOptions{Period: 3e-9, Edge: 50e-12, Source: "demo:dynamic_latch"}); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(buf.String(), ".ic v(") {
		t.Errorf("no initial condition in the dynamic latch's deck:\n%s", buf.String())
	}
	golden(t, "dynamic_latch_deck.sp", buf.Bytes())
}
