// Package netbuild is what the readers of netlists from elsewhere (the
// transistor-netlist cards of switchsim/cardfile and the IEEE 1364 modules
// of switchsim/vfile) share: the escaping that turns a netlist's names into
// railyard names, the flat design they build before naming, and its
// translation into a switchsim.Builder with positions for every error.
package netbuild

import (
	"strconv"
	"strings"
)

// Escape maps one component of a netlist name (no hierarchy) to the
// characters of a railyard name: letters, digits, _ . [ ] (the .sw rules).
// Letters, digits, _ . [ and ] are kept; < and > become [ and ] (bus bits:
// net<3> is net[3]); / becomes . (a flattened path: X1/MN3 is X1.MN3);
// every other byte b becomes X followed by b in two upper-case hex digits
// (a_193_47# is a_193_47X23, vdd! is vddX21); a name, and every part of
// it after a dot, that would not start with a letter or _ gets a leading N
// (node 12 is N12, x1.00 is x1.N00, as the inner node 00 of instance x1
// is named), and a name ending in a dot gets a trailing N. The card
// reader folds names to lower case first, so the upper-case X, N and
// hex digits never stand for themselves there and the escape reads back
// unambiguously; where two names still meet (net<3> beside net[3]), Namer
// tells them apart. The original spelling is kept as well
// (switchsim.Builder.Original), so the mapping can always be undone.
func Escape(s string) string {
	clean := s != ""
	for i := 0; i < len(s) && clean; i++ {
		clean = keep(s[i]) && ((i > 0 && s[i-1] != '.') || startOK(s[i]))
	}
	if clean && s[len(s)-1] != '.' {
		return s
	}
	var b strings.Builder
	b.Grow(len(s) + 8)
	for i := 0; i < len(s); i++ {
		c := s[i]
		switch {
		case keep(c):
		case c == '<':
			c = '['
		case c == '>':
			c = ']'
		case c == '/':
			c = '.'
		default:
			b.WriteByte('X')
			b.WriteByte(hexDigit[c>>4])
			b.WriteByte(hexDigit[c&15])
			continue
		}
		if (b.Len() == 0 || b.String()[b.Len()-1] == '.') && !startOK(c) {
			b.WriteByte('N') // every component starts with a letter: a flat x1.00 names what x1's 00 does
		}
		b.WriteByte(c)
	}
	out := b.String()
	if out == "" || out[len(out)-1] == '.' {
		out += "N"
	}
	return out
}

const hexDigit = "0123456789ABCDEF"

func keep(c byte) bool {
	return c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z' || c >= '0' && c <= '9' || c == '_' || c == '.' || c == '[' || c == ']'
}

func startOK(c byte) bool { return c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z' || c == '_' }

// IsName reports whether s is a railyard name (the .sw rules, ASCII).
func IsName(s string) bool {
	if s == "" || !startOK(s[0]) {
		return false
	}
	for i := 1; i < len(s); i++ {
		if !keep(s[i]) {
			return false
		}
	}
	return true
}

// Namer hands out railyard names that are unique in one name space (the
// nodes, or the devices, of a design): the wanted name if it is free, else
// the wanted name followed by Q and the first number that makes it free
// (Q never comes out of Escape after the card reader's case folding).
type Namer struct{ taken map[string]bool }

// Reserve marks a name as taken without handing it out.
func (n *Namer) Reserve(name string) {
	if n.taken == nil {
		n.taken = map[string]bool{}
	}
	n.taken[name] = true
}

// Name returns want, or want made unique.
func (n *Namer) Name(want string) string {
	if n.taken == nil {
		n.taken = map[string]bool{}
	}
	if !n.taken[want] {
		n.taken[want] = true
		return want
	}
	for i := 2; ; i++ {
		s := want + "Q" + strconv.Itoa(i)
		if !n.taken[s] {
			n.taken[s] = true
			return s
		}
	}
}

// List words a list of names for a message: "a, b, c", at most 12 and
// then how many more, "none" for none.
func List(names []string) string {
	switch {
	case len(names) == 0:
		return "none"
	case len(names) > 12:
		return strings.Join(names[:12], ", ") + ", and " + strconv.Itoa(len(names)-12) + " more"
	}
	return strings.Join(names, ", ")
}
