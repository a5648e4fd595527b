// Package diag holds what every reader of railyard's text files shares:
// positions, errors with positions collected in a sorted list, a sink that
// stops collecting at a limit, and the checks that a file is text of a
// bounded size. It is railyard's go/token and go/scanner.ErrorList: each
// reader (designs, netlists, steps, traces) reports through it, so every
// error a person reads has the form FILE:LINE:COL: message.
package diag

import (
	"fmt"
	"slices"
	"sort"
	"strconv"
	"strings"
	"unicode/utf8"
)

// Pos is a position in a source file. Line and Col count from 1; Col counts
// bytes, as go/scanner does. A zero Col means the whole line, a zero Line
// the whole file.
type Pos struct {
	File      string
	Line, Col int
}

// String prints FILE:LINE:COL, FILE:LINE when Col is 0, FILE when Line is 0.
func (p Pos) String() string {
	s := p.File
	if p.Line > 0 {
		s += ":" + strconv.Itoa(p.Line)
		if p.Col > 0 {
			s += ":" + strconv.Itoa(p.Col)
		}
	}
	return s
}

// Before orders positions by file, line and column.
func (p Pos) Before(q Pos) bool {
	if p.File != q.File {
		return p.File < q.File
	}
	if p.Line != q.Line {
		return p.Line < q.Line
	}
	return p.Col < q.Col
}

// Error is one problem found in a source file.
type Error struct {
	Pos Pos
	Msg string
}

func (e *Error) Error() string { return e.Pos.String() + ": " + e.Msg }

// List is every problem found in a file, printed one a line in order of
// position.
type List []*Error

// Add appends an error at pos.
func (l *List) Add(pos Pos, format string, args ...any) {
	*l = append(*l, &Error{pos, fmt.Sprintf(format, args...)})
}

// Sort orders the list by position, then message; it is stable so that
// errors found at one position keep the order they were found in.
func (l List) Sort() {
	sort.SliceStable(l, func(i, j int) bool {
		if l[i].Pos != l[j].Pos {
			return l[i].Pos.Before(l[j].Pos)
		}
		return l[i].Msg < l[j].Msg
	})
}

func (l List) Error() string {
	switch len(l) {
	case 0:
		return "no errors"
	case 1:
		return l[0].Error()
	}
	var b strings.Builder
	for i, e := range l {
		if i > 0 {
			b.WriteByte('\n')
		}
		b.WriteString(e.Error())
	}
	return b.String()
}

// Err returns the sorted list as an error, or nil when it is empty.
func (l List) Err() error {
	if len(l) == 0 {
		return nil
	}
	l.Sort()
	return l
}

// Sink collects errors up to a limit, so a file of garbage cannot fill
// memory; past the limit it only counts them.
type Sink struct {
	List    List
	Max     int
	Dropped int
}

// NewSink makes a sink that keeps at most max errors (max <= 0: 100).
func NewSink(max int) *Sink {
	if max <= 0 {
		max = 100
	}
	return &Sink{Max: max}
}

// Add records an error at p, or counts it past the limit.
func (s *Sink) Add(p Pos, format string, args ...any) {
	if len(s.List) >= s.Max {
		s.Dropped++
		return
	}
	s.List.Add(p, format, args...)
}

// Full reports whether the limit has been reached.
func (s *Sink) Full() bool { return len(s.List) >= s.Max }

// Any reports whether an error was recorded.
func (s *Sink) Any() bool { return len(s.List) > 0 }

// Err returns the sorted errors, with a last line saying how many were
// left out; nil when there are none.
func (s *Sink) Err() error {
	if len(s.List) == 0 {
		return nil
	}
	s.List.Sort()
	if s.Dropped > 0 {
		last := s.List[len(s.List)-1].Pos
		s.List = append(s.List, &Error{last, fmt.Sprintf("too many errors: %d more not shown", s.Dropped)})
		s.Dropped = 0
	}
	return s.List
}

// CheckText reports the first byte that makes src not a UTF-8 text file
// (a NUL byte, invalid UTF-8), with its position.
func CheckText(file string, src []byte) *Error {
	line, col := 1, 1
	for i := 0; i < len(src); {
		c := src[i]
		if c == 0 {
			return &Error{Pos{file, line, col}, "not a text file: NUL byte"}
		}
		if c < utf8.RuneSelf {
			i++
			if c == '\n' {
				line, col = line+1, 1
			} else {
				col++
			}
			continue
		}
		r, n := utf8.DecodeRune(src[i:])
		if r == utf8.RuneError && n <= 1 {
			return &Error{Pos{file, line, col}, "not a text file: invalid UTF-8"}
		}
		i += n
		col += n
	}
	return nil
}

// CheckSize reports a file longer than max bytes, at the position where
// the limit was passed.
func CheckSize(file string, src []byte, max int) *Error {
	if len(src) <= max {
		return nil
	}
	line, col := 1, 1
	for _, c := range src[:max] {
		if c == '\n' {
			line, col = line+1, 1
		} else {
			col++
		}
	}
	return &Error{Pos{file, line, col}, "file is longer than the limit of " + SizeString(max)}
}

// SizeString words a byte count: "4 MiB", "64 KiB", "100 bytes".
func SizeString(n int) string {
	switch {
	case n >= 1<<20 && n%(1<<20) == 0:
		return strconv.Itoa(n>>20) + " MiB"
	case n >= 1<<10 && n%(1<<10) == 0:
		return strconv.Itoa(n>>10) + " KiB"
	}
	return strconv.Itoa(n) + " bytes"
}

// Printable returns s with every control character and every invalid byte
// replaced by a visible escape (\x1b, \u009b, ...), so that a string taken
// from a file cannot move a terminal's cursor, set its title or clear it.
// Printable text, tabs aside, is returned unchanged.
func Printable(s string) string {
	clean := true
	for _, r := range s {
		if r == utf8.RuneError || isControl(r) {
			clean = false
			break
		}
	}
	if clean {
		return s
	}
	var b strings.Builder
	for i := 0; i < len(s); {
		r, n := utf8.DecodeRuneInString(s[i:])
		switch {
		case r == utf8.RuneError && n <= 1:
			fmt.Fprintf(&b, `\x%02x`, s[i])
		case r < 0x80 && isControl(r):
			fmt.Fprintf(&b, `\x%02x`, r)
		case isControl(r):
			fmt.Fprintf(&b, `\u%04x`, r)
		default:
			b.WriteString(s[i : i+n])
		}
		i += n
	}
	return b.String()
}

// isControl reports C0 and C1 control characters and DEL, and the Unicode
// characters that reorder or hide text (bidirectional overrides), which a
// terminal or a viewer would act on rather than show.
func isControl(r rune) bool {
	switch {
	case r < 0x20, r == 0x7f, r >= 0x80 && r < 0xa0:
		return true
	case r >= 0x202a && r <= 0x202e, r >= 0x2066 && r <= 0x2069:
		return true
	}
	return false
}

// Count words a number of things: "1 step", "3 steps", "0 steps". The
// plural is the word with an s, which serves every word the readers count.
func Count(n int, word string) string {
	if n == 1 {
		return "1 " + word
	}
	return strconv.Itoa(n) + " " + word + "s"
}

// Suggest returns the candidate closest to word by edit distance
// (Levenshtein: insertions, deletions and substitutions of bytes), when it
// is close enough to be what was meant: at most one edit for a word of up
// to four bytes, two up to eight, three beyond. "" when none is. Ties go to
// the candidate listed first, so callers list the likelier ones first. A
// word that is itself a candidate needs no suggestion.
func Suggest(word string, candidates []string) string {
	if slices.Contains(candidates, word) {
		return ""
	}
	limit := 1
	switch {
	case len(word) > 8:
		limit = 3
	case len(word) > 4:
		limit = 2
	}
	best, bestD := "", limit+1
	for _, c := range candidates {
		// A suggestion keeps at least one byte of the word: x is not a typo of w.
		if d := distance(word, c, bestD); d < bestD && d < len(word) {
			best, bestD = c, d
		}
	}
	return best
}

// DidYouMean is Suggest worded to follow what was not understood:
// ": did you mean inv?", or "" when nothing is close.
func DidYouMean(word string, candidates []string) string {
	if s := Suggest(word, candidates); s != "" {
		return ": did you mean " + s + "?"
	}
	return ""
}

// distance is the edit distance between a and b, or any value >= bound
// once it is known to reach bound (so long names cost little).
func distance(a, b string, bound int) int {
	if d := len(a) - len(b); d >= bound || -d >= bound {
		return bound
	}
	if len(a) > 64 || len(b) > 64 {
		return bound // names that long are not typos of keywords
	}
	prev := make([]int, len(b)+1)
	cur := make([]int, len(b)+1)
	for j := range prev {
		prev[j] = j
	}
	for i := 1; i <= len(a); i++ {
		cur[0] = i
		low := cur[0]
		for j := 1; j <= len(b); j++ {
			sub := prev[j-1]
			if a[i-1] != b[j-1] {
				sub++
			}
			cur[j] = min(sub, prev[j]+1, cur[j-1]+1)
			low = min(low, cur[j])
		}
		if low >= bound {
			return bound
		}
		prev, cur = cur, prev
	}
	return prev[len(b)]
}
