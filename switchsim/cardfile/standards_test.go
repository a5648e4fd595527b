package cardfile_test

// Cells written by hand in the card format, checked against their truth
// tables (common practice: the static CMOS mirror adder and the
// transmission-gate latch of the textbooks), in both modes.

import (
	"fmt"
	"railyard/switchsim/internal/simtest"
	"testing"

	sw "railyard/switchsim"
	"railyard/switchsim/cardfile"
)

// The 28-transistor static CMOS mirror adder (common practice): a mirror
// carry stage cob = not(a b + c (a + b)) of 10 devices, a mirror sum stage
// sob = not(a b c + cob (a + b + c)) of 14, and two output inverters.
const mirrorAdder = `* 28-transistor mirror full adder (static CMOS), written by hand
.subckt fadd a b c sum cout vdd gnd
* carry stage
mp1 x1 a vdd vdd pch w=1.44u l=0.18u
mp2 x1 b vdd vdd pch w=1.44u l=0.18u
mp3 cob c x1 vdd pch w=1.44u l=0.18u
mp4 x2 a vdd vdd pch w=1.44u l=0.18u
mp5 cob b x2 vdd pch w=1.44u l=0.18u
mn1 y1 a gnd gnd nch w=0.72u l=0.18u
mn2 y1 b gnd gnd nch w=0.72u l=0.18u
mn3 cob c y1 gnd nch w=0.72u l=0.18u
mn4 y2 a gnd gnd nch w=0.72u l=0.18u
mn5 cob b y2 gnd nch w=0.72u l=0.18u
* sum stage
mp6 x3 a vdd vdd pch w=1.44u l=0.18u
mp7 x3 b vdd vdd pch w=1.44u l=0.18u
mp8 x3 c vdd vdd pch w=1.44u l=0.18u
mp9 sob cob x3 vdd pch w=1.44u l=0.18u
mp10 x4 a vdd vdd pch w=2.16u l=0.18u
mp11 x5 b x4 vdd pch w=2.16u l=0.18u
mp12 sob c x5 vdd pch w=2.16u l=0.18u
mn6 y3 a gnd gnd nch w=0.72u l=0.18u
mn7 y3 b gnd gnd nch w=0.72u l=0.18u
mn8 y3 c gnd gnd nch w=0.72u l=0.18u
mn9 sob cob y3 gnd nch w=0.72u l=0.18u
mn10 y4 a gnd gnd nch w=1.08u l=0.18u
mn11 y5 b y4 gnd nch w=1.08u l=0.18u
mn12 sob c y5 gnd nch w=1.08u l=0.18u
* output inverters
xis sob sum vdd gnd inv
xic cob cout vdd gnd inv
.ends fadd

.subckt inv in out vdd gnd
mn out in gnd gnd nch w=0.36u l=0.18u
mp out in vdd vdd pch w=0.72u l=0.18u
.ends inv
`

func TestMirrorAdderTruthTable(t *testing.T) {
	d := read(t, mirrorAdder, cardfile.Options{Inputs: []string{"a", "b", "c"}})
	if got := d.Netlist.NumDevices(); got != 28 {
		t.Fatalf("%d devices, want 28 (the mirror adder)", got)
	}
	for _, mode := range modes {
		s := simtest.New(t, d.Netlist, mode)
		for v := 0; v < 8; v++ {
			a, b, c := v>>2&1, v>>1&1, v&1
			s.Apply(fmt.Sprintf("a=%d b=%d c=%d", a, b, c))
			sum, cout := (a+b+c)&1, (a+b+c)>>1 // the full adder's truth table
			for _, chk := range []struct {
				node string
				want int
			}{{"sum", sum}, {"cout", cout}} {
				got := s.Node(chk.node)
				want := sw.State0 + sw.State(chk.want) // a static CMOS output is a strong full level
				if got.State != want {
					t.Errorf("%s: a=%d b=%d c=%d: %s is %s, want %s", mode, a, b, c, chk.node, got.State, want)
				}
			}
		}
	}
}

// A transmission-gate latch (common practice): transparent while clk=1
// (d through a transmission gate to s, two inverters to q), holding while
// clk=0 through a feedback transmission gate from q back to s.
const tgateLatch = `Transmission-gate latch of a pipeline register bit
.subckt tlatch d clk q
*.pininfo d:I clk:I q:O
Xinv0 clk clkb INV
MN1 d clk s 0 NCH W=0.36U L=0.18U
MP1 d clkb s VDD PCH W=0.72U L=0.18U
Xinv1 s qb INV
Xinv2 qb q INV
MN2 q clkb s 0 NCH W=0.36U L=0.18U
+ $ the feedback gate is on while clk=0
MP2 q clk s VDD PCH
+ W=0.72U
+ L=0.18U
.ENDS
.SUBCKT INV A Y
MN Y A 0 0 NCH W=0.36U L=0.18U
MP Y A VDD VDD PCH W=0.72U L=0.18U
.ENDS
`

func TestTGateLatchTransparentAndHold(t *testing.T) {
	d := read(t, tgateLatch, cardfile.Options{})
	nl := d.Netlist
	if d.Desc != "Transmission-gate latch of a pipeline register bit" {
		t.Errorf("title %q: line 1 of a deck is its title (common practice)", d.Desc)
	}
	for _, mode := range modes {
		s := simtest.New(t, nl, mode)
		// One input changes a step: a change of d together with the closing
		// clock is a race (a hold-time violation) and rightly gives X.
		steps := []struct {
			apply string
			q     sw.State
			why   string
		}{
			{"clk=1 d=0", sw.State0, "transparent: q follows d"},
			{"clk=1 d=1", sw.State1, "transparent: q follows d"},
			{"clk=0 d=1", sw.State1, "closing: q keeps 1"},
			{"clk=0 d=0", sw.State1, "closed: d is ignored, the loop holds 1"},
			{"clk=1 d=0", sw.State0, "open again: q follows d"},
			{"clk=0 d=0", sw.State0, "closing: q keeps 0"},
			{"clk=0 d=1", sw.State0, "closed: the loop holds 0"},
		}
		for i, st := range steps {
			s.Apply(st.apply)
			if got := s.Node("q"); got.State != st.q {
				t.Errorf("%s step %d (%s): q is %s, want %s: %s", mode, i+1, st.apply, got.State, st.q, st.why)
			}
		}
		// The held value is driven by the loop, not stored charge.
		if s.Node("s").Floating {
			t.Errorf("%s: s floats while the latch holds: the feedback gate should drive it", mode)
		}
	}
}
