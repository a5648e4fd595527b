// Package designs holds railyard's embedded demo designs: small pieces of
// a datapath block (operand selectors, pipeline latches, a flip-flop) built
// from pass devices and transmission gates, each a .sw design with a .steps
// file beside it. Callers name them demo:NAME; the loader (switchsim/load)
// resolves that name in FS, the one place demos are read from.
package designs

import (
	"embed"
	"slices"
	"strconv"
	"strings"
)

// FS holds the demos at its root: NAME.sw and NAME.steps for each, and
// demos in the forms railyard also reads, NAME.sp (netlist cards) and
// NAME.v (an IEEE 1364 module), each with its NAME.steps.
//
//go:embed *.sw *.steps *.sp *.v
var FS embed.FS

// Default is the demo railyard opens when it is given none: the static latch.
const Default = "static_latch"

// Entry is one demo: its name (as in demo:NAME) and the one-line
// description from its design statement.
type Entry struct{ Name, Desc string }

// List returns every demo, sorted by name.
func List() []Entry {
	ents, _ := FS.ReadDir(".")
	var out []Entry
	for _, e := range ents {
		name, ok := strings.CutSuffix(e.Name(), ".sw")
		if !ok {
			continue
		}
		sw, _ := FS.ReadFile(e.Name())
		out = append(out, Entry{name, description(sw)})
	}
	slices.SortFunc(out, func(a, b Entry) int { return strings.Compare(a.Name, b.Name) })
	return out
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
