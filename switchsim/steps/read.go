package steps

import (
	"strings"

	"railyard/switchsim"
	"railyard/switchsim/diag"
)

// MaxRows bounds the steps of one file, so memory stays bounded.
const MaxRows = 1 << 20

type token struct {
	text string
	col  int
}

// tokens splits a line into words, '|' standing alone even when written
// against a value, and returns the trailing comment.
func tokens(line string) ([]token, string, bool) {
	var out []token
	for i := 0; i < len(line); {
		c := line[i]
		switch {
		case c == ' ' || c == '\t' || c == '\r' || c == '\f' || c == '\v':
			i++
		case c == '#':
			return out, strings.TrimSpace(line[i+1:]), true
		case c == '|':
			out = append(out, token{"|", i + 1})
			i++
		default:
			j := i
			for j < len(line) && !strings.ContainsRune(" \t\r\f\v#|", rune(line[j])) {
				j++
			}
			out = append(out, token{line[i:j], i + 1})
			i = j
		}
	}
	return out, "", false
}

type reader struct {
	file    string
	colName map[string][]string // apply, check: the column names as written
	nl      *switchsim.Netlist
	errs    *diag.Sink
	fold    bool
	folded  map[string]int // lower-case name -> node (-1: several), made at the first miss
}

// Options are how a steps file is read: its limits, and whether its names
// match the design's whatever their case (FoldCase: a design read from
// netlist cards, whose names are case-insensitive).
type Options struct {
	Limits
	FoldCase bool
}

// lookup finds a column's node: by either spelling the netlist knows, and
// with FoldCase in any case. several reports a name that, case folded,
// is more than one node's.
func (r *reader) lookup(name string) (n int, ok, several bool) {
	if n, ok := r.nl.Lookup(name); ok || !r.fold {
		return n, ok, false
	}
	if r.folded == nil {
		r.folded = map[string]int{}
		add := func(s string, n int) {
			k := strings.ToLower(s)
			if m, dup := r.folded[k]; dup && m != n {
				n = -1
			}
			r.folded[k] = n
		}
		for n := 0; n < r.nl.NumNodes(); n++ {
			add(r.nl.NodeName(n), n)
			add(r.nl.DisplayName(n), n)
		}
	}
	n, ok = r.folded[strings.ToLower(name)]
	return n, ok && n >= 0, ok && n < 0
}

func (r *reader) errAt(line, col int, format string, args ...any) {
	r.errs.Add(diag.Pos{File: r.file, Line: line, Col: col}, format, args...)
}

// ReadLimits is Read with the given limits.
func ReadLimits(filename string, src []byte, nl *switchsim.Netlist, lim Limits) (*Steps, error) {
	return ReadWith(filename, src, nl, Options{Limits: lim})
}

// ReadWith is Read with the given options.
func ReadWith(filename string, src []byte, nl *switchsim.Netlist, opt Options) (*Steps, error) {
	lim := opt.Limits
	d := DefaultLimits()
	if lim.FileSize <= 0 {
		lim.FileSize = d.FileSize
	}
	if lim.LineLen <= 0 {
		lim.LineLen = d.LineLen
	}
	if lim.Errors <= 0 {
		lim.Errors = d.Errors
	}
	if e := diag.CheckSize(filename, src, lim.FileSize); e != nil {
		return nil, diag.List{e}
	}
	if e := diag.CheckText(filename, src); e != nil {
		return nil, diag.List{e}
	}
	if len(src) >= 3 && src[0] == 0xEF && src[1] == 0xBB && src[2] == 0xBF {
		src = src[3:]
	}
	r := &reader{file: filename, nl: nl, errs: diag.NewSink(lim.Errors), colName: map[string][]string{}, fold: opt.FoldCase}
	st := &Steps{File: filename}
	applyLine, checkLine := 0, 0
	var drives []switchsim.Drive // one backing array for every row's drives
	var wants []Want
	type span struct{ d0, d1, w0, w1 int }
	var spans []span
	text := string(src)
	for num := 1; len(text) > 0; num++ {
		line := text
		if i := strings.IndexByte(text, '\n'); i >= 0 {
			line, text = text[:i], text[i+1:]
		} else {
			text = ""
		}
		if len(line) > lim.LineLen {
			r.errAt(num, lim.LineLen+1, "line is longer than the limit of %d bytes", lim.LineLen)
			continue
		}
		toks, comment, _ := tokens(line)
		if len(toks) == 0 {
			continue
		}
		switch kw := toks[0]; kw.text {
		case "apply", "check":
			prev := &applyLine
			if kw.text == "check" {
				prev = &checkLine
			}
			switch {
			case *prev != 0:
				r.errAt(num, kw.col, "%s given twice (first on line %d)", kw.text, *prev)
				continue
			case kw.text == "check" && applyLine == 0:
				r.errAt(num, kw.col, "check before the apply line: a steps file starts with apply NAME ...")
			case len(st.Rows) > 0 || len(spans) > 0:
				r.errAt(num, kw.col, "%s must come before the first row", kw.text)
			}
			*prev = num
			if len(toks) == 1 {
				r.errAt(num, kw.col, "%s needs at least one node name", kw.text)
				continue
			}
			cols := r.columns(num, kw.text, toks[1:])
			if kw.text == "apply" {
				st.Apply = cols
			} else {
				st.Check = cols
			}
			continue
		}
		// A row.
		if applyLine == 0 {
			r.errAt(num, toks[0].col, "missing apply line: a steps file starts with apply NAME ... (found %q)", toks[0].text)
			applyLine = -1 // say it once
			continue
		}
		if applyLine < 0 {
			continue
		}
		if len(spans) >= MaxRows {
			r.errAt(num, toks[0].col, "more than the limit of %d steps", MaxRows)
			break
		}
		sp := span{d0: len(drives), w0: len(wants)}
		bar := -1
		for i, t := range toks {
			if t.text == "|" {
				if bar >= 0 {
					r.errAt(num, t.col, "a row takes one | between its apply and check values")
				}
				bar = i
			}
		}
		applyToks, checkToks := toks, []token(nil)
		if bar >= 0 {
			applyToks, checkToks = toks[:bar], toks[bar+1:]
			if checkLine == 0 {
				r.errAt(num, toks[bar].col, "| with no check line: nothing to check")
			}
		}
		ok := r.count(num, toks, applyToks, len(st.Apply), "apply", bar >= 0 || len(st.Check) == 0)
		for _, t := range applyToks {
			d, good := switchsim.ParseDrive(t.text)
			if !good {
				r.errAt(num, t.col, "unknown apply value %q: want 0, 1, x or z", t.text)
				ok = false
			}
			drives = append(drives, d)
		}
		if bar >= 0 && checkLine != 0 {
			if len(checkToks) != len(st.Check) {
				at := toks[len(toks)-1].col
				if len(checkToks) > len(st.Check) {
					at = checkToks[len(st.Check)].col
				}
				r.errAt(num, at, "wrong number of values: %d check values, want %d (%s)", len(checkToks), len(st.Check), r.names("check"))
				ok = false
			}
			for _, t := range checkToks {
				w, good := ParseWant(t.text)
				if !good {
					r.errAt(num, t.col, "unknown check value %q: want 0, 1, X, Z, L, H or -", t.text)
					ok = false
				}
				wants = append(wants, w)
			}
		} else if checkLine != 0 {
			for range st.Check {
				wants = append(wants, WantAny) // a row without | checks nothing
			}
		}
		if !ok {
			drives, wants = drives[:sp.d0], wants[:sp.w0]
			continue
		}
		sp.d1, sp.w1 = len(drives), len(wants)
		spans = append(spans, sp)
		st.Rows = append(st.Rows, Row{Line: num, Label: comment})
	}
	if applyLine == 0 && !r.errs.Any() {
		r.errAt(1, 0, "missing apply line: a steps file starts with apply NAME ...")
	}
	if r.errs.Any() {
		return nil, r.errs.Err()
	}
	for i, sp := range spans {
		st.Rows[i].Drives = drives[sp.d0:sp.d1:sp.d1]
		if len(st.Check) > 0 {
			st.Rows[i].Wants = wants[sp.w0:sp.w1:sp.w1]
		}
	}
	return st, nil
}

// count checks the number of apply values in a row. withBar says the row
// has its check part or needs none.
func (r *reader) count(num int, all, apply []token, want int, what string, withBar bool) bool {
	if len(apply) == want {
		return true
	}
	switch {
	case len(apply) > want && !withBar:
		r.errAt(num, apply[want].col, "wrong number of values: %d values, want %d %s values (%s), then | and the check values",
			len(apply), want, what, r.names(what))
	case len(apply) > want:
		r.errAt(num, apply[want].col, "wrong number of values: %d %s values, want %d (%s)", len(apply), what, want, r.names(what))
	default:
		col := all[0].col
		if len(apply) > 0 {
			col = apply[len(apply)-1].col
		}
		r.errAt(num, col, "wrong number of values: %s, want %d (%s)", diag.Count(len(apply), what+" value"), want, r.names(what))
	}
	return false
}

func (r *reader) names(what string) string {
	s := r.colName[what]
	if len(s) > 8 {
		s = append(s[:8], "...")
	}
	return strings.Join(s, " ")
}

func (r *reader) inputs() string {
	var s []string
	for _, n := range r.nl.Inputs() {
		s = append(s, r.nl.NodeName(n))
	}
	if len(s) > 8 {
		s = append(s[:8], "...")
	}
	return strings.Join(s, " ")
}

// columns resolves the names of an apply or check line. A bad column is
// reported and kept as -1, so that rows are still counted against the
// line as written (the -1 never leaves the reader: there are errors).
func (r *reader) columns(num int, kw string, toks []token) []int {
	var cols []int
	seen := map[int]int{} // node -> the column that named it first
	for _, t := range toks {
		if t.text == "|" {
			r.errAt(num, t.col, "unexpected | in the %s line", kw)
			continue
		}
		r.colName[kw] = append(r.colName[kw], t.text)
		n, ok, several := r.lookup(t.text)
		switch {
		case several:
			r.errAt(num, t.col, "%s column %q names more than one node of design %s when case is ignored: give its exact name", kw, t.text, r.nl.Name)
			n = -1
		case !ok:
			r.errAt(num, t.col, "%s column %q is no node of design %s", kw, t.text, r.nl.Name)
			n = -1
		case kw == "apply" && r.nl.NodeKind(n) != switchsim.Input:
			r.errAt(num, t.col, "apply column %q is not an input of design %s (inputs: %s)", t.text, r.nl.Name, r.inputs())
			n = -1
		default:
			if c, dup := seen[n]; dup && kw == "apply" {
				r.errAt(num, t.col, "apply column %q given twice (first at column %d)", t.text, c)
				n = -1
			}
		}
		if _, dup := seen[n]; !dup && n >= 0 {
			seen[n] = t.col
		}
		cols = append(cols, n)
	}
	return cols
}
