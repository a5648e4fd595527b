package netfile

import (
	"bufio"
	"fmt"
	"io"
	"strconv"
	"strings"

	"railyard/switchsim"
	"railyard/switchsim/diag"
)

// WriteConverted writes a design as a flat .sw file, for railyard convert:
// a netlist or module read from elsewhere (or any design) with every
// instance expanded, so that it can be annotated (strengths, charge
// classes, corners) and kept. It writes the design and the technology
// (every key that differs from the preset), the rails, inputs and outputs,
// node capacitances and charge classes, every device with its sizes, and
// an alias line for each name whose original spelling differs. The notes
// of the reading come first as comments. Reading the output gives the
// same netlist.
//
// Resistive devices are written with the statements of their kinds (README,
// "Designs"): rnmos and rpmos, tran and rtran (a netlist's resistor between
// two nodes, r= its resistance), and r= on a pullup or pulldown (a
// resistor to a rail).
func WriteConverted(w io.Writer, d *Design) error {
	if d.Netlist == nil {
		return fmt.Errorf("no netlist to write")
	}
	bw := bufio.NewWriter(w)
	if d.File != "" {
		fmt.Fprintf(bw, "# converted from %s: every instance expanded\n", diag.Printable(d.File))
	}
	for _, n := range d.Notes {
		fmt.Fprintf(bw, "# note: %s\n", diag.Printable(strings.ReplaceAll(n.Error(), "\n", " ")))
	}
	if err := writeFlat(bw, d.Netlist, true); err != nil {
		return err
	}
	return bw.Flush()
}

// writeFlat writes a compiled netlist as flat statements: the design line,
// the technology, rails, inputs, outputs, node annotations, every device
// and the alias lines. sizes writes every transistor's w and l; without
// it only those that differ from the technology's defaults.
func writeFlat(bw *bufio.Writer, nl *switchsim.Netlist, sizes bool) error {
	node := func(n int) (string, error) { return flatName(nl.NodeName(n), "node") }
	if nl.Name != "" {
		if _, err := flatName(nl.Name, "design name"); err != nil {
			return err
		}
		bw.WriteString("design " + nl.Name)
		if nl.Desc != "" {
			bw.WriteString(" " + strconv.Quote(nl.Desc))
		}
		bw.WriteByte('\n')
	}
	tech := nl.Tech
	base, ok := switchsim.Preset(tech.Name)
	if !ok {
		base = switchsim.Generic()
	}
	parts := []string{"tech", base.Name}
	for _, k := range switchsim.TechKeys() {
		v, _ := tech.Get(k)
		if bv, _ := base.Get(k); v != bv {
			parts = append(parts, k+"="+FormatNumber(v))
		}
	}
	bw.WriteString(strings.Join(parts, " ") + "\n")
	for _, r := range []struct {
		kw  string
		n   int
		def string
	}{{"power", nl.Power(), "vdd"}, {"ground", nl.Ground(), "gnd"}} {
		s, err := node(r.n)
		if err != nil {
			return err
		}
		if s != r.def {
			bw.WriteString(r.kw + " " + s + "\n")
		}
	}
	for _, io := range []struct {
		kw    string
		nodes []int
	}{{"input", nl.Inputs()}, {"output", nl.Outputs()}} {
		for i := 0; i < len(io.nodes); i += 12 {
			line := []string{io.kw}
			for _, n := range io.nodes[i:min(i+12, len(io.nodes))] {
				s, err := node(n)
				if err != nil {
					return err
				}
				line = append(line, s)
			}
			bw.WriteString(strings.Join(line, " ") + "\n")
		}
	}
	for n := 0; n < nl.NumNodes(); n++ {
		if n == nl.Power() || n == nl.Ground() {
			continue
		}
		c, q := nl.NodeCap(n), nl.NodeCharge(n)
		dc, dq := nl.DefaultCap(n), nl.DefaultCharge(n) // cnode and medium, or on a diffusion node cdiff and small
		if c == dc && q == dq {
			continue
		}
		s, err := node(n)
		if err != nil {
			return err
		}
		line := "node " + s
		if c != dc {
			line += " cap=" + FormatNumber(c)
		}
		if q != dq {
			line += " charge=" + q.String()
		}
		bw.WriteString(line + "\n")
	}
	for i := 0; i < nl.NumDevices(); i++ {
		line, err := deviceLine(nl, i, sizes, node)
		if err != nil {
			return err
		}
		bw.WriteString(line + "\n")
	}
	for _, a := range aliases(nl) {
		bw.WriteString("alias " + a[0] + " " + strconv.Quote(a[1]) + "\n")
	}
	return nil
}

// flatName refuses a name the design format cannot hold.
func flatName(s, what string) (string, error) {
	if !isName(s) {
		return "", fmt.Errorf("%s %q cannot be written: it is not a name in the design format", what, s)
	}
	return s, nil
}

// deviceLine is one device's statement; sizes writes w and l even where
// they are the technology's defaults.
func deviceLine(nl *switchsim.Netlist, i int, sizes bool, node func(int) (string, error)) (string, error) {
	dv := nl.Device(i)
	if _, err := flatName(dv.Name, "device"); err != nil {
		return "", err
	}
	kw, def := dv.Kind.String(), switchsim.Strong
	var terms []int
	switch dv.Kind {
	case switchsim.NMOS, switchsim.PMOS:
		if dv.Ohms > 0 {
			return "", fmt.Errorf("device %s cannot be written: a transistor with a resistance of its own has no statement", dv.Name)
		}
		terms = []int{dv.Gate, dv.A, dv.B}
	case switchsim.Tran:
		if dv.Ohms > 0 && !dv.Resistive {
			return "", fmt.Errorf("device %s cannot be written: a tran with a resistance of its own has no statement (rtran has)", dv.Name)
		}
		terms = []int{dv.A, dv.B}
	default:
		def = switchsim.Pull
		terms = []int{dv.B}
	}
	if dv.Resistive {
		if dv.Kind == switchsim.PullUp || dv.Kind == switchsim.PullDown {
			return "", fmt.Errorf("device %s cannot be written: a resistive pull has no statement", dv.Name)
		}
		kw, def = "r"+kw, switchsim.Pull
	}
	parts := []string{kw, dv.Name}
	for _, n := range terms {
		s, err := node(n)
		if err != nil {
			return "", err
		}
		parts = append(parts, s)
	}
	if dv.Kind == switchsim.NMOS || dv.Kind == switchsim.PMOS {
		wdef := nl.Tech.Wn
		if dv.Kind == switchsim.PMOS {
			wdef = nl.Tech.Wp
		}
		if sizes || dv.W != wdef {
			parts = append(parts, "w="+FormatNumber(dv.W))
		}
		if sizes || dv.L != nl.Tech.L {
			parts = append(parts, "l="+FormatNumber(dv.L))
		}
	}
	if dv.Ohms > 0 {
		parts = append(parts, "r="+FormatNumber(dv.Ohms))
	}
	if dv.Strength != def {
		parts = append(parts, "strength="+dv.Strength.String())
	}
	return strings.Join(parts, " "), nil
}

// aliases lists (railyard name, original) for every node and device whose
// displayed name differs from its railyard name: one line a name, since
// an original spelling is recorded by name for a node and a device alike.
func aliases(nl *switchsim.Netlist) [][2]string {
	var out [][2]string
	seen := map[string]bool{}
	add := func(name, orig string) {
		if orig != name && !seen[name] {
			seen[name] = true
			out = append(out, [2]string{name, orig})
		}
	}
	for n := 0; n < nl.NumNodes(); n++ {
		add(nl.NodeName(n), nl.DisplayName(n))
	}
	for d := 0; d < nl.NumDevices(); d++ {
		add(nl.Device(d).Name, nl.DeviceDisplayName(d))
	}
	return out
}
