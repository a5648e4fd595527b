package fightplot

import (
	"math"
	"strings"
	"testing"

	"github.com/charmbracelet/x/ansi"
)

// A fight of two resistors (Ohm's law): the 1 side through R1 from vdd
// drives (vdd - V) / R1 into the node, the 0 side through R2 draws V / R2
// out of it; they cross at the divider's V = vdd R2 / (R1 + R2).
func divider(vdd, r1, r2 float64) Picture {
	return Picture{
		Currents: func(v float64) (float64, float64) { return (vdd - v) / r1, v / r2 },
		Vdd:      vdd, Volts: vdd * r2 / (r1 + r2), VIL: 0.74, VIH: 0.96, VM: 0.86, Node: "s", UpBy: "pass.n", DownBy: "keep.n",
	}
}

func plain() Styles { return Styles{} }

// markerColumn is the column of glyph g on the marker line (after the
// axis labels), or -1.
func markerColumn(lines []string, g string) int {
	for _, l := range lines {
		l = ansi.Strip(l)
		if strings.HasPrefix(l, strings.Repeat(" ", 7)) && strings.Contains(l, "L") && strings.Contains(l, "H") && !strings.Contains(l, "V") {
			return len([]rune(l[:strings.Index(l, g)])) - 7
		}
	}
	return -1
}

func TestMarkersAtTheirVolts(t *testing.T) {
	p := divider(1.8, 10e3, 2e3) // crossing at 1.8 x 2/12 = 0.30 V
	if math.Abs(p.Volts-0.3) > 1e-12 {
		t.Fatalf("the divider's crossing %v", p.Volts)
	}
	for _, ascii := range []bool{false, true} {
		st := plain()
		st.ASCII = ascii
		lines := Lines(p, 47, 6, st)
		cols := 47 - 7 // the plot's columns beside the axis labels
		at := func(v float64) int { return int(math.Round(v / 1.8 * float64(cols-1))) }
		tick := "▲"
		if ascii {
			tick = "^"
		}
		for _, m := range []struct {
			g string
			v float64
		}{{tick, 0.3}, {"L", 0.74}, {"M", 0.86}, {"H", 0.96}} {
			if got := markerColumn(lines, m.g); got != at(m.v) {
				t.Errorf("ascii %v: %s at column %d, want %d (%.2f V)\n%s", ascii, m.g, got, at(m.v), m.v, strings.Join(lines, "\n"))
			}
		}
		// The legend gives the crossing and its current: 1.5 V / 10 kohm = 150 uA.
		if !strings.Contains(strings.Join(lines, "\n"), "s at 0.30 V: 150 uA each way") {
			t.Errorf("legend:\n%s", strings.Join(lines, "\n"))
		}
		for i, l := range lines {
			if w := ansi.StringWidth(l); w > 47 {
				t.Errorf("line %d is %d cells wide", i, w)
			}
			if ascii && strings.IndexFunc(l, func(r rune) bool { return r > 0x7e }) >= 0 {
				t.Errorf("ascii line %d holds a non-ASCII rune: %q", i, l)
			}
		}
	}
}

// In ASCII the two curves cross in the cell of the crossing (X) or next
// to it: the drawing and the markers agree.
func TestCurvesCrossAtTheNode(t *testing.T) {
	p := divider(1.8, 3e3, 3e3) // 0.90 V, 300 uA
	lines := Lines(p, 60, 8, Styles{ASCII: true})
	cols := 60 - 7
	want := int(math.Round(0.9 / 1.8 * float64(cols-1)))
	// Where the two meet (X, the rows being coarse: a run of cells) holds
	// the node's column.
	crossed := false
	for _, l := range lines[1:9] {
		if i, j := strings.Index(l, "X"), strings.LastIndex(l, "X"); i >= 0 && i-7 <= want && want <= j-7 {
			crossed = true
		}
	}
	if !crossed {
		t.Errorf("no X run over column %d (the node's 0.90 V)\n%s", want, strings.Join(lines, "\n"))
	}
	// The 1 side falls from the top left, the 0 side rises to the top right.
	for _, l := range lines[1:9] {
		if strings.ContainsAny(l, "*o") {
			if strings.Index(l, "*") < 0 || strings.Index(l, "*") > strings.Index(l, "o") {
				t.Errorf("the highest row drawn: %q", l)
			}
			break
		}
	}
}

func TestNothingToDraw(t *testing.T) {
	if Lines(divider(1.8, 1e3, 1e3), 25, 6, plain()) != nil {
		t.Error("drawn in 25 cells")
	}
	zero := Picture{Currents: func(float64) (float64, float64) { return 0, 0 }, Vdd: 1.8, Volts: 0.9}
	if Lines(zero, 60, 6, plain()) != nil {
		t.Error("drawn with no current")
	}
}
