package vfile

import (
	"railyard/switchsim/internal/netbuild"
	"strings"

	"railyard/switchsim/diag"
)

type tokKind uint8

const (
	tEOF tokKind = iota
	tIdent
	tNumber
	tPunct
)

// tok is one lexical token with its position. Escaped identifiers
// (\name ending at white space) are tIdent with the backslash dropped and
// esc set.
type tok struct {
	kind tokKind
	text string
	pos  diag.Pos
	esc  bool
}

func (t tok) is(p string) bool { return t.kind == tPunct && t.text == p }

// lexer splits the source into tokens; comments (// and /* */) are
// skipped, and the compiler directives that say nothing to a switch-level
// netlist are read and dropped.
type lexer struct {
	file      string
	src       []byte
	i         int
	line, col int
	errs      *netbuild.Sink
	notes     *netbuild.Sink
}

func isSpace(c byte) bool {
	return c == ' ' || c == '\t' || c == '\r' || c == '\n' || c == '\f' || c == '\v'
}
func isIdentStart(c byte) bool {
	return c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z' || c == '_'
}
func isIdent(c byte) bool { return isIdentStart(c) || c >= '0' && c <= '9' || c == '$' }

// Directives read and ignored: they set time units, cell markers and
// defaults that mean nothing at switch level.
var ignoredDirectives = map[string]bool{"timescale": true, "celldefine": true, "endcelldefine": true, "resetall": true,
	"default_nettype": true, "suppress_faults": true, "nosuppress_faults": true, "enable_portfaults": true,
	"disable_portfaults": true, "delay_mode_path": true, "delay_mode_distributed": true, "delay_mode_unit": true, "delay_mode_zero": true}

func (l *lexer) advance(n int) {
	for k := 0; k < n && l.i < len(l.src); k++ {
		if l.src[l.i] == '\n' {
			l.line, l.col = l.line+1, 1
		} else {
			l.col++
		}
		l.i++
	}
}

func (l *lexer) pos() diag.Pos { return diag.Pos{File: l.file, Line: l.line, Col: l.col} }

// all returns every token, ending with tEOF; at most max tokens are kept
// (a longer source is an error).
func (l *lexer) all(max int) []tok {
	var out []tok
	for {
		t := l.next()
		if len(out) >= max && t.kind != tEOF {
			l.errs.Add(t.pos, "the file has more than the limit of %d tokens", max)
			t = tok{kind: tEOF, pos: t.pos}
		}
		out = append(out, t)
		if t.kind == tEOF {
			return out
		}
	}
}

func (l *lexer) next() tok {
	for l.i < len(l.src) {
		c := l.src[l.i]
		switch {
		case isSpace(c):
			l.advance(1)
		case c == '/' && l.i+1 < len(l.src) && l.src[l.i+1] == '/':
			for l.i < len(l.src) && l.src[l.i] != '\n' {
				l.advance(1)
			}
		case c == '/' && l.i+1 < len(l.src) && l.src[l.i+1] == '*':
			p := l.pos()
			l.advance(2)
			for l.i < len(l.src) && !(l.src[l.i] == '*' && l.i+1 < len(l.src) && l.src[l.i+1] == '/') {
				l.advance(1)
			}
			if l.i >= len(l.src) {
				l.errs.Add(p, "comment /* is not closed")
				return tok{kind: tEOF, pos: l.pos()}
			}
			l.advance(2)
		case c == '`':
			p := l.pos()
			j := l.i + 1
			for j < len(l.src) && isIdent(l.src[j]) {
				j++
			}
			name := string(l.src[l.i+1 : j])
			l.advance(j - l.i)
			if !ignoredDirectives[name] {
				l.errs.Add(p, "compiler directive `%s is not supported (`timescale, `celldefine, `resetall and `default_nettype are read and ignored)", name)
			}
			// The directive's arguments run to the end of its line.
			for l.i < len(l.src) && l.src[l.i] != '\n' {
				l.advance(1)
			}
		default:
			return l.token()
		}
	}
	return tok{kind: tEOF, pos: l.pos()}
}

func (l *lexer) token() tok {
	p := l.pos()
	c := l.src[l.i]
	j := l.i
	switch {
	case isIdentStart(c) || c == '$':
		for j < len(l.src) && isIdent(l.src[j]) {
			j++
		}
		t := tok{kind: tIdent, text: string(l.src[l.i:j]), pos: p}
		l.advance(j - l.i)
		return t
	case c == '\\':
		j++
		for j < len(l.src) && !isSpace(l.src[j]) {
			j++
		}
		t := tok{kind: tIdent, text: string(l.src[l.i+1 : j]), pos: p, esc: true}
		if t.text == "" {
			l.errs.Add(p, "an escaped identifier needs characters after the backslash")
		}
		l.advance(j - l.i)
		return t
	case c >= '0' && c <= '9' || c == '\'':
		// Numbers: decimal, real, and based constants (1'b0, 4'hf, 'b1).
		for j < len(l.src) && (l.src[j] >= '0' && l.src[j] <= '9' || l.src[j] == '_' || l.src[j] == '.') {
			j++
		}
		if j < len(l.src) && l.src[j] == '\'' {
			j++
			if j < len(l.src) && (l.src[j] == 's' || l.src[j] == 'S') {
				j++
			}
			for j < len(l.src) && (isIdent(l.src[j]) || l.src[j] == '?') {
				j++
			}
		} else if j < len(l.src) && (l.src[j] == 'e' || l.src[j] == 'E') {
			j++
			if j < len(l.src) && (l.src[j] == '+' || l.src[j] == '-') {
				j++
			}
			for j < len(l.src) && l.src[j] >= '0' && l.src[j] <= '9' {
				j++
			}
		}
		t := tok{kind: tNumber, text: strings.ToLower(string(l.src[l.i:j])), pos: p}
		l.advance(j - l.i)
		return t
	}
	t := tok{kind: tPunct, text: string(c), pos: p}
	l.advance(1)
	return t
}
