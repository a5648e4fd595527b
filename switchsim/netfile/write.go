package netfile

import (
	"bufio"
	"io"
	"strconv"
	"strings"

	"railyard/switchsim"
)

// canonical option order for each statement.
var optOrder = map[string][]string{
	"nmos": {"w", "l", "strength"}, "pmos": {"w", "l", "strength"},
	"rnmos": {"w", "l", "strength"}, "rpmos": {"w", "l", "strength"},
	"tgate": {"wn", "wp", "l", "strength"}, "rtgate": {"wn", "wp", "l", "strength"},
	"tran": {"strength"}, "rtran": {"r", "strength"},
	"pullup": {"r", "strength"}, "pulldown": {"r", "strength"},
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
// technology's defaults, original spellings as alias lines. Reading the
// output gives the same netlist.
func WriteNetlist(w io.Writer, nl *switchsim.Netlist) error {
	bw := bufio.NewWriter(w)
	bw.WriteString("# written from a compiled netlist: cells are expanded\n")
	if err := writeFlat(bw, nl, false); err != nil {
		return err
	}
	return bw.Flush()
}
