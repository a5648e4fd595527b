package netfile

import (
	"fmt"
	"sort"
	"strconv"
	"strings"
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

func (p Pos) before(q Pos) bool {
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

// ErrorList is every problem found in a file, printed one a line in order
// of position.
type ErrorList []*Error

// Add appends an error at pos.
func (l *ErrorList) Add(pos Pos, format string, args ...any) {
	*l = append(*l, &Error{pos, fmt.Sprintf(format, args...)})
}

// Sort orders the list by position, then message; it is stable so that
// errors found at one position keep the order they were found in.
func (l ErrorList) Sort() {
	sort.SliceStable(l, func(i, j int) bool {
		if l[i].Pos != l[j].Pos {
			return l[i].Pos.before(l[j].Pos)
		}
		return l[i].Msg < l[j].Msg
	})
}

func (l ErrorList) Error() string {
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
func (l ErrorList) Err() error {
	if len(l) == 0 {
		return nil
	}
	l.Sort()
	return l
}

// sink collects errors up to a limit, so a file of garbage cannot fill memory.
type sink struct {
	list    ErrorList
	max     int
	dropped int
}

func (s *sink) add(p Pos, format string, args ...any) {
	if len(s.list) >= s.max {
		s.dropped++
		return
	}
	s.list.Add(p, format, args...)
}

func (s *sink) any() bool { return len(s.list) > 0 }

// err returns the sorted errors, with a last line saying how many were left out.
func (s *sink) err() error {
	if len(s.list) == 0 {
		return nil
	}
	s.list.Sort()
	if s.dropped > 0 {
		last := s.list[len(s.list)-1].Pos
		s.list = append(s.list, &Error{last, fmt.Sprintf("too many errors: %d more not shown", s.dropped)})
	}
	return s.list
}
