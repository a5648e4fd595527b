// Package fightplot draws the picture of a fight at a node, the way a
// designer judges a keeper: the current its 1 side drives into the node and
// the current its 0 side draws out of it, each against the node's voltage
// from 0 to vdd (the level-1 curves of physical mode), their crossing (the
// node's voltage), and the thresholds that decide what the crossing means:
// VIL and VIH, and the switching threshold VM of the stage the node drives.
// The curves are braille dots (two by four a cell), or ASCII characters
// one a cell for terminals that show nothing else.
package fightplot

import (
	"fmt"
	"math"
	"strings"

	"github.com/charmbracelet/lipgloss"
)

// Picture is what the plot draws. Currents gives, with the node at v, the
// current of the 1 side into it and of the 0 side out of it, in amperes.
type Picture struct {
	Currents     func(v float64) (up, down float64)
	Vdd          float64
	Volts        float64 // the crossing: the node's voltage
	VIL, VIH, VM float64 // VM NaN where the node drives no stage
	Node         string  // the node's name, printable
	UpBy, DownBy string  // the devices of each side, printable ("" none)
}

// Styles draw the plot. ASCII draws with ASCII characters only.
type Styles struct {
	Up, Down, Cross, Axis, Marker lipgloss.Style
	ASCII                         bool
}

// Lines draws the picture in width cells, its curves rows high (at least
// 3), as lines to show one under the other: a unit line, the plot with its
// current axis, the voltage axis with the markers, and the legend. Nothing
// is drawn (nil) when the plot would have no room: width under 30.
func Lines(p Picture, width, rows int, st Styles) []string {
	const labelW = 6 // "123.4" and a space
	cols := min(width-labelW-1, 64)
	if cols < 22 || p.Currents == nil || !(p.Vdd > 0) {
		return nil
	}
	rows = max(rows, 3)
	sub := 2 // samples a cell across, dots a cell down
	dots := 4
	if st.ASCII {
		sub, dots = 1, 1
	}
	nx, ny := cols*sub, rows*dots
	up := make([]float64, nx)
	down := make([]float64, nx)
	top := 0.0
	for i := range up {
		v := p.Vdd * float64(i) / float64(nx-1)
		u, d := p.Currents(v)
		up[i], down[i] = max(u, 0), max(d, 0)
		top = max(top, up[i], down[i])
	}
	if !(top > 0) || math.IsInf(top, 0) {
		return nil
	}
	// The crossing is what a designer reads: scale so that it stands at
	// least a third of the way up, cutting the far ends of the curves (the
	// sides' currents with the node at a rail) off the top rather than
	// squeezing the crossing onto the axis.
	if !math.IsNaN(p.Volts) {
		u, _ := p.Currents(p.Volts)
		lo := min(up[0], down[nx-1]) // the smaller side's current at its far rail
		if want := max(2.5*u, lo); u > 0 && want < top {
			top = want
		}
	}
	top = niceTop(top)
	// the dot row of a current, 0 at the top
	yOf := func(a float64) int { return min(max(int(math.Round((1-a/top)*float64(ny-1))), -1), ny-1) } // -1: off the top

	// which curves set each dot, and the cell's braille bits
	const upBit, downBit = 1, 2
	owner := make([][]uint8, rows)
	bits := make([][]rune, rows)
	for r := range owner {
		owner[r] = make([]uint8, cols)
		bits[r] = make([]rune, cols)
	}
	plot := func(curve []float64, who uint8) {
		prev := 0
		for i, a := range curve {
			y := yOf(a)
			lo, hi := y, y
			if i > 0 { // join to the last sample so that a steep part stays a line
				lo, hi = min(y, prev+sign(y-prev)), max(y, prev+sign(y-prev))
			}
			for yy := max(lo, 0); yy <= hi; yy++ {
				setDot(bits, owner, i, yy, sub, dots, who)
			}
			prev = y
		}
	}
	plot(up, upBit)
	plot(down, downBit)
	cross := math.NaN()
	if !math.IsNaN(p.Volts) {
		cross = p.Volts
	}

	uGlyph, dGlyph, xGlyph := "*", "o", "X"
	axisV, axisH, corner, tick := "|", "-", "+", "^"
	fall, rise := "\\", "/"
	if !st.ASCII {
		axisV, axisH, corner, tick = "⡇", "─", "└", "▲"
		fall, rise = "╲", "╱"
	}
	var out []string
	out = append(out, st.Axis.Render(fmt.Sprintf("%*s", labelW-1, "uA")))
	for r := 0; r < rows; r++ {
		label := ""
		switch r {
		case 0:
			label = microamps(top)
		case rows / 2:
			label = microamps(top / 2)
		}
		var b strings.Builder
		b.WriteString(st.Axis.Render(fmt.Sprintf("%*s ", labelW-1, label) + axisV))
		for c := 0; c < cols; c++ {
			o := owner[r][c]
			var ch string
			switch {
			case o == 0:
				ch = " "
			case st.ASCII:
				ch = map[uint8]string{upBit: uGlyph, downBit: dGlyph, upBit | downBit: xGlyph}[o]
			default:
				ch = string(0x2800 + bits[r][c])
			}
			switch o {
			case upBit:
				ch = st.Up.Render(ch)
			case downBit:
				ch = st.Down.Render(ch)
			case upBit | downBit:
				ch = st.Cross.Render(ch)
			}
			b.WriteString(ch)
		}
		out = append(out, b.String())
	}
	out = append(out, st.Axis.Render(fmt.Sprintf("%*s ", labelW-1, "0")+corner+strings.Repeat(axisH, cols)))

	// the voltage axis: markers at their columns, first come first placed
	marks := []rune(strings.Repeat(" ", cols))
	colOf := func(v float64) int {
		return min(max(int(math.Round(v/p.Vdd*float64(cols-1))), 0), cols-1)
	}
	var unplaced []string
	place := func(v float64, m rune, name string) {
		if math.IsNaN(v) {
			return
		}
		c := colOf(v)
		if marks[c] != ' ' {
			unplaced = append(unplaced, name)
			return
		}
		marks[c] = m
	}
	place(cross, []rune(tick)[0], "the crossing")
	place(p.VIL, 'L', "VIL")
	place(p.VIH, 'H', "VIH")
	place(p.VM, 'M', "VM")
	out = append(out, strings.Repeat(" ", labelW+1)+st.Marker.Render(string(marks)))
	right := fmt.Sprintf("%.2f V", p.Vdd)
	out = append(out, st.Axis.Render(strings.Repeat(" ", labelW+1)+"0"+strings.Repeat(" ", max(cols-1-len(right), 1))+right))

	// the legend
	node := p.Node
	if node == "" {
		node = "the node"
	}
	if !math.IsNaN(cross) {
		u, _ := p.Currents(cross)
		out = append(out, fmt.Sprintf("%s %s at %.2f V: %s each way", st.Marker.Render(tick), node, cross, microampsUnit(u)))
	}
	th := fmt.Sprintf("L VIL %.2f V  H VIH %.2f V", p.VIL, p.VIH)
	if !math.IsNaN(p.VM) {
		th += fmt.Sprintf("  M stage VM %.2f V", p.VM)
	}
	out = append(out, th)
	if len(unplaced) > 0 {
		out = append(out, "(on one column: "+strings.Join(unplaced, ", ")+" not marked)")
	}
	sideUp, sideDown := fall+" 1 side into "+node, rise+" 0 side out"
	if st.ASCII {
		sideUp, sideDown = uGlyph+" "+sideUp, dGlyph+" "+sideDown
	}
	if p.UpBy != "" {
		sideUp += ": " + p.UpBy
	}
	if p.DownBy != "" {
		sideDown += ": " + p.DownBy
	}
	out = append(out, st.Up.Render(sideUp), st.Down.Render(sideDown))
	return out
}

// setDot sets the dot of sample column i, dot row y.
func setDot(bits [][]rune, owner [][]uint8, i, y, sub, dots int, who uint8) {
	c, r := i/sub, y/dots
	if r < 0 || r >= len(bits) || c < 0 || c >= len(bits[r]) {
		return
	}
	owner[r][c] |= who
	if sub == 1 {
		return
	}
	// braille dot numbering: left column 1 2 3 7, right column 4 5 6 8
	left := [4]rune{0x01, 0x02, 0x04, 0x40}
	rightCol := [4]rune{0x08, 0x10, 0x20, 0x80}
	if i%2 == 0 {
		bits[r][c] |= left[y%4]
	} else {
		bits[r][c] |= rightCol[y%4]
	}
}

func sign(x int) int {
	switch {
	case x > 0:
		return 1
	case x < 0:
		return -1
	}
	return 0
}

// niceTop rounds the largest current up to a round number of microamps
// (1, 1.5, 2, 2.5, 3, 4, 5, 6 or 8 times a power of ten), so that the axis
// and its half-way mark read round.
func niceTop(a float64) float64 {
	e := math.Pow(10, math.Floor(math.Log10(a)))
	for _, m := range []float64{1, 1.5, 2, 2.5, 3, 4, 5, 6, 8, 10} {
		if a <= m*e*(1+1e-9) {
			return m * e
		}
	}
	return 10 * e
}

// microamps prints a current in microamps for the axis: "50", "2.5", "0.2".
func microamps(a float64) string {
	u := a * 1e6
	switch {
	case u >= 100:
		return fmt.Sprintf("%.0f", u)
	case u >= 10:
		return fmt.Sprintf("%.0f", u)
	case u >= 1:
		return fmt.Sprintf("%.1f", u)
	}
	return fmt.Sprintf("%.3g", u)
}

func microampsUnit(a float64) string {
	return fmt.Sprintf("%.3g uA", a*1e6)
}
