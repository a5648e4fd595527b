// Package designs holds railyard's embedded demo designs: small pieces of
// a datapath block (operand selectors, pipeline latches, a flip-flop) built
// from pass devices and transmission gates, each a .sw design with a .steps
// file beside it. Callers name them demo:NAME; the readers resolve that.
package designs

import (
	"embed"
	"sort"
	"strconv"
	"strings"
)

//go:embed *.sw *.steps *.sp *.v
var files embed.FS

// Default is the demo railyard opens when it is given none: the static latch.
const Default = "static_latch"

// Entry is one demo: its name (as in demo:NAME) and the one-line
// description from its design statement.
type Entry struct{ Name, Desc string }

// List returns every demo, sorted by name.
func List() []Entry {
	ents, _ := files.ReadDir(".")
	var out []Entry
	for _, e := range ents {
		name, ok := strings.CutSuffix(e.Name(), ".sw")
		if !ok {
			continue
		}
		sw, _ := files.ReadFile(e.Name())
		out = append(out, Entry{name, description(sw)})
	}
	sort.Slice(out, func(i, j int) bool { return out[i].Name < out[j].Name })
	return out
}

// Source returns a demo's design and steps text (steps nil when it has
// none); ok is false when there is no such demo.
func Source(name string) (sw []byte, steps []byte, ok bool) {
	if name == "" || strings.ContainsAny(name, "/\\") {
		return nil, nil, false
	}
	sw, err := files.ReadFile(name + ".sw")
	if err != nil {
		return nil, nil, false
	}
	steps, err = files.ReadFile(name + ".steps")
	if err != nil {
		steps = nil
	}
	return sw, steps, true
}

// description finds the quoted string of the first design statement. It
// reads only that line, so this package need not import the reader; the
// reader's tests check that both agree.
func description(sw []byte) string {
	for _, line := range strings.Split(string(sw), "\n") {
		f := strings.TrimSpace(line)
		if f == "" || f[0] == '#' {
			continue
		}
		rest, ok := strings.CutPrefix(f, "design")
		if !ok || (rest != "" && rest[0] != ' ' && rest[0] != '\t') {
			return ""
		}
		if i := strings.IndexByte(rest, '"'); i >= 0 {
			if q, err := strconv.QuotedPrefix(rest[i:]); err == nil {
				s, _ := strconv.Unquote(q)
				return s
			}
		}
		return ""
	}
	return ""
}
