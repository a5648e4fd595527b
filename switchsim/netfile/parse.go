package netfile

import (
	"strings"

	"railyard/switchsim/diag"
)

// Tree is a design file as written: its statements in file order with their
// positions and comments, before any checking or cell expansion. The writer
// prints it back in canonical form.
type Tree struct {
	File  string
	Stmts []*Stmt
}

// Stmt is one line's statement. Kind is its keyword, or "" for a line that
// holds only a comment or nothing.
type Stmt struct {
	Kind       string
	Line, Col  int
	Args       []Word  // positional words after the keyword
	Strs       []Word  // quoted strings (only design takes one)
	Opts       []Opt   // KEY=VALUE words, in the order written
	Comment    string  // trailing or whole-line comment, without '#'
	HasComment bool    // a comment was written, perhaps empty
	Body       []*Stmt // a cell's statements
	End        *Stmt   // a cell's end line; nil when it is missing
}

// Opt is one KEY=VALUE word.
type Opt struct {
	Key, Val  string
	Line, Col int // of the key
	ValCol    int
}

// Get returns the option named key.
func (s *Stmt) Get(key string) (Opt, bool) {
	for _, o := range s.Opts {
		if o.Key == key {
			return o, true
		}
	}
	return Opt{}, false
}

// parseTree groups lines into statements and cell bodies. Only the block
// structure is checked here (cell ... end); the checker judges the rest.
func parseTree(file string, lines []srcLine, errs *diag.Sink) *Tree {
	t := &Tree{File: file}
	var cell *Stmt
	add := func(s *Stmt) {
		if cell != nil {
			cell.Body = append(cell.Body, s)
		} else {
			t.Stmts = append(t.Stmts, s)
		}
	}
	slab := make([]Stmt, len(lines)) // one allocation for every statement
	for i, l := range lines {
		s := &slab[i]
		*s = Stmt{Line: l.num, Comment: l.comment, HasComment: l.hasComment}
		if len(l.words) == 0 {
			add(s)
			continue
		}
		kw := l.words[0]
		s.Col = kw.Col
		if kw.Quoted {
			errs.Add(at(file, kw.Line, kw.Col), "expected a statement keyword, found a string")
			continue
		}
		s.Kind = kw.Text
		plain := true
		for _, w := range l.words[1:] {
			plain = plain && !w.Quoted && strings.IndexByte(w.Text, '=') < 0
		}
		if plain {
			s.Args = l.words[1:] // the common case: no copy
		}
		for _, w := range l.words[1:] {
			if plain {
				break
			}
			if w.Quoted {
				s.Strs = append(s.Strs, w)
				continue
			}
			if i := strings.IndexByte(w.Text, '='); i >= 0 {
				s.Opts = append(s.Opts, Opt{Key: w.Text[:i], Val: w.Text[i+1:], Line: w.Line, Col: w.Col, ValCol: w.Col + i + 1})
				continue
			}
			s.Args = append(s.Args, w)
		}
		switch s.Kind {
		case "cell":
			if cell != nil {
				errs.Add(at(file, s.Line, s.Col), "cell %s starts inside cell %s (line %d), which has no end: cells cannot be nested",
					firstArg(s), firstArg(cell), cell.Line)
			}
			cell = nil
			add(s)
			cell = s
		case "end":
			if cell == nil {
				errs.Add(at(file, s.Line, s.Col), "end without a cell to close")
				continue
			}
			if len(s.Args)+len(s.Opts)+len(s.Strs) > 0 {
				errs.Add(at(file, s.Line, s.Col), "end takes nothing after it")
			}
			cell.End = s
			cell = nil
		default:
			add(s)
		}
	}
	if cell != nil {
		errs.Add(at(file, cell.Line, cell.Col), "cell %s has no end", firstArg(cell))
	}
	return t
}

func firstArg(s *Stmt) string {
	if len(s.Args) > 0 {
		return s.Args[0].Text
	}
	return "(unnamed)"
}
