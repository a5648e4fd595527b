package netfile

import (
	"bufio"
	"fmt"
	"io"
	"strconv"
	"strings"

	"railyard/switchsim"
)

// canonical option order for each statement.
var optOrder = map[string][]string{
	"nmos": {"w", "l", "strength"}, "pmos": {"w", "l", "strength"},
	"tgate": {"wn", "wp", "l", "strength"}, "pullup": {"strength"}, "pulldown": {"strength"},
	"node": {"cap", "charge"}, "use": {"strength"},
}

// Write prints a design in canonical form: one space between words,
// options in a fixed order with numbers in engineering notation, cell
// bodies indented by two spaces, comments kept, runs of blank lines
// folded to one. Reading the output gives the same netlist. A design with
// no Tree (made from a netlist) is written flat by WriteNetlist.
func Write(w io.Writer, d *Design) error {
	if d.Tree == nil {
		return WriteNetlist(w, d.Netlist)
	}
	bw := bufio.NewWriter(w)
	blank := true // no blank line at the top
	var stmts func(list []*Stmt, indent string)
	stmts = func(list []*Stmt, indent string) {
		for _, s := range list {
			if s.Kind == "" && !s.HasComment {
				if !blank {
					bw.WriteByte('\n')
					blank = true
				}
				continue
			}
			blank = false
			bw.WriteString(indent)
			bw.WriteString(stmtText(s))
			bw.WriteByte('\n')
			if s.Kind == "cell" {
				stmts(s.Body, indent+"  ")
				bw.WriteString(indent + "end")
				if s.End != nil && s.End.HasComment {
					bw.WriteString("  " + commentText(s.End.Comment))
				}
				bw.WriteByte('\n')
				blank = false
			}
		}
	}
	stmts(d.Tree.Stmts, "")
	return bw.Flush()
}

func commentText(c string) string {
	if c == "" {
		return "#"
	}
	return "# " + c
}

// stmtText prints one statement's line, without indent or newline.
func stmtText(s *Stmt) string {
	if s.Kind == "" {
		return commentText(s.Comment)
	}
	parts := []string{s.Kind}
	for _, a := range s.Args {
		parts = append(parts, a.Text)
	}
	for _, q := range s.Strs {
		parts = append(parts, strconv.Quote(q.Text))
	}
	order := optOrder[s.Kind]
	if s.Kind == "tech" || s.Kind == "corner" {
		order = switchsim.TechKeys()
	}
	written := map[int]bool{}
	for _, k := range order {
		for i, o := range s.Opts {
			if o.Key == k && !written[i] {
				written[i] = true
				parts = append(parts, k+"="+canonValue(k, o.Val))
			}
		}
	}
	for i, o := range s.Opts { // none in a checked tree; kept so nothing is lost
		if !written[i] {
			parts = append(parts, o.Key+"="+o.Val)
		}
	}
	line := strings.Join(parts, " ")
	if s.HasComment {
		line += "  " + commentText(s.Comment)
	}
	return line
}

func canonValue(key, v string) string {
	switch key {
	case "strength", "charge":
		return strings.ToLower(v)
	}
	if x, err := ParseNumber(v); err == nil {
		return FormatNumber(x)
	}
	return v
}

// WriteNetlist prints a compiled netlist as a flat design: every device by
// its full name, sizes and strengths only where they differ from the
// technology's defaults. Reading the output gives the same netlist.
func WriteNetlist(w io.Writer, nl *switchsim.Netlist) error {
	bw := bufio.NewWriter(w)
	name := func(n int) (string, error) {
		s := nl.NodeName(n)
		if !isName(s) {
			return "", fmt.Errorf("node %q cannot be written: it is not a name in the design format", s)
		}
		return s, nil
	}
	bw.WriteString("# written from a compiled netlist: cells are expanded\n")
	if nl.Name != "" && isName(nl.Name) {
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
	line := "tech " + base.Name
	for _, k := range switchsim.TechKeys() {
		v, _ := tech.Get(k)
		if bv, _ := base.Get(k); v != bv {
			line += " " + k + "=" + FormatNumber(v)
		}
	}
	bw.WriteString(line + "\n")
	pw, gn := nl.NodeName(nl.Power()), nl.NodeName(nl.Ground())
	if pw != "vdd" {
		bw.WriteString("power " + pw + "\n")
	}
	if gn != "gnd" {
		bw.WriteString("ground " + gn + "\n")
	}
	list := func(kw string, nodes []int) error {
		for i := 0; i < len(nodes); i += 16 {
			parts := []string{kw}
			for _, n := range nodes[i:min(i+16, len(nodes))] {
				s, err := name(n)
				if err != nil {
					return err
				}
				parts = append(parts, s)
			}
			bw.WriteString(strings.Join(parts, " ") + "\n")
		}
		return nil
	}
	if err := list("input", nl.Inputs()); err != nil {
		return err
	}
	if err := list("output", nl.Outputs()); err != nil {
		return err
	}
	for n := 0; n < nl.NumNodes(); n++ {
		if n == nl.Power() || n == nl.Ground() {
			continue
		}
		c, q := nl.NodeCap(n), nl.NodeCharge(n)
		if c == tech.Cnode && q == switchsim.Medium {
			continue
		}
		s, err := name(n)
		if err != nil {
			return err
		}
		line := "node " + s
		if c != tech.Cnode {
			line += " cap=" + FormatNumber(c)
		}
		if q != switchsim.Medium {
			line += " charge=" + q.String()
		}
		bw.WriteString(line + "\n")
	}
	for d := 0; d < nl.NumDevices(); d++ {
		dv := nl.Device(d)
		if !isName(dv.Name) {
			return fmt.Errorf("device %q cannot be written: it is not a name in the design format", dv.Name)
		}
		parts := []string{dv.Kind.String(), dv.Name}
		def := switchsim.Strong
		switch dv.Kind {
		case switchsim.NMOS, switchsim.PMOS:
			for _, n := range []int{dv.Gate, dv.A, dv.B} {
				s, err := name(n)
				if err != nil {
					return err
				}
				parts = append(parts, s)
			}
			wdef := tech.Wn
			if dv.Kind == switchsim.PMOS {
				wdef = tech.Wp
			}
			if dv.W != wdef {
				parts = append(parts, "w="+FormatNumber(dv.W))
			}
			if dv.L != tech.L {
				parts = append(parts, "l="+FormatNumber(dv.L))
			}
		default:
			def = switchsim.Pull
			s, err := name(dv.B)
			if err != nil {
				return err
			}
			parts = append(parts, s)
		}
		if dv.Strength != def {
			parts = append(parts, "strength="+dv.Strength.String())
		}
		bw.WriteString(strings.Join(parts, " ") + "\n")
	}
	return bw.Flush()
}
