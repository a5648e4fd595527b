// Package designs holds railyard's embedded demo designs: small pieces of
// a datapath block (operand selectors, pipeline latches, a flip-flop) built
// from pass devices and transmission gates, each a design (.sw, or a
// netlist: .sp cards, a .v module) with a .steps file beside it. Callers name them demo:NAME; the loader (switchsim/load)
// resolves that name in FS, the one place demos are read from.
package designs

import (
	"embed"
	"path"
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

// Entry is one demo: its name (as in demo:NAME), its file, and its
// one-line description: the design statement's (.sw), the title line
// (netlist cards, .sp), or the first comment line (an IEEE 1364 module, .v).
type Entry struct{ Name, Desc, File string }

// List returns every .sw demo, sorted by name (the demos every check of
// the engine runs); All adds the netlist demos.
func List() []Entry { return list(false) }

// All returns every demo, .sw designs and netlists alike, sorted by name:
// what railyard designs lists and demo:NAME opens.
func All() []Entry { return list(true) }

func list(netlists bool) []Entry {
	ents, _ := FS.ReadDir(".")
	var out []Entry
	for _, e := range ents {
		file := e.Name()
		var desc func([]byte) string
		switch path.Ext(file) {
		case ".sw":
			desc = description
		case ".sp":
			desc = titleLine
		case ".v":
			desc = firstComment
		default:
			continue
		}
		if !netlists && path.Ext(file) != ".sw" {
			continue
		}
		src, _ := FS.ReadFile(file)
		out = append(out, Entry{strings.TrimSuffix(file, path.Ext(file)), desc(src), file})
	}
	slices.SortFunc(out, func(a, b Entry) int { return strings.Compare(a.Name, b.Name) })
	return out
}

// titleLine is a card deck's title, its first line by the format's
// convention, or the text of the first comment when the deck starts with
// one.
func titleLine(src []byte) string {
	for _, line := range strings.Split(string(src), "\n") {
		f := strings.TrimSpace(line)
		switch {
		case f == "":
			continue
		case f[0] == '*':
			return strings.TrimSpace(strings.TrimLeft(f, "*"))
		case f[0] == '.':
			return ""
		}
		return f
	}
	return ""
}

// firstComment is the text of a module file's first // comment line.
func firstComment(src []byte) string {
	for _, line := range strings.Split(string(src), "\n") {
		f := strings.TrimSpace(line)
		if f == "" {
			continue
		}
		if rest, ok := strings.CutPrefix(f, "//"); ok {
			return strings.TrimSpace(rest)
		}
		return ""
	}
	return ""
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
