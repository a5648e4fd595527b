// Package steps reads railyard's .steps files (switchsim/FORMATS.md): the inputs each
// step applies, the nodes checked after it settles, and what each check
// wants. It also holds the check semantics, Want.Check, shared by the batch
// run, the explorer and replay.
package steps

import (
	"strings"

	"railyard/switchsim"
)

// Want is what a check asks of a node.
type Want uint8

const (
	WantAny Want = iota // -: checks nothing
	Want0               // logic 0 (a stored 0 counts)
	Want1               // logic 1 (a stored 1 counts)
	WantX               // logic X
	WantZ               // floating: no driving path
	WantL               // a weak or degraded 0 (state L)
	WantH               // a weak or degraded 1 (state H)
)

func (w Want) String() string {
	if int(w) < len(wantLetters) {
		return string(wantLetters[w])
	}
	return "?"
}

const wantLetters = "-01XZLH"

// ParseWant reads a check value: - 0 1 X Z L H (any case).
func ParseWant(s string) (Want, bool) {
	if len(s) != 1 {
		return WantAny, false
	}
	i := strings.IndexByte(wantLetters, upper(s[0]))
	if i < 0 {
		return WantAny, false
	}
	return Want(i), true
}

func upper(c byte) byte {
	if c >= 'a' && c <= 'z' {
		return c - 'a' + 'A'
	}
	return c
}

// Check reports whether a node's state satisfies the want (switchsim/FORMATS.md):
// 0, 1 and X compare the logic value, so a floating node holding 1 by
// charge passes 1; with fullSwing, 0 and 1 also require the strong,
// full-level states 0 and 1. Z requires a floating node; L and H require
// the weak-or-degraded states L and H; - passes always.
func (w Want) Check(ns switchsim.NodeState, fullSwing bool) bool {
	switch w {
	case WantAny:
		return true
	case Want0:
		return ns.Value == switchsim.V0 && (!fullSwing || ns.State == switchsim.State0)
	case Want1:
		return ns.Value == switchsim.V1 && (!fullSwing || ns.State == switchsim.State1)
	case WantX:
		return ns.Value == switchsim.VX
	case WantZ:
		return ns.Floating || ns.State == switchsim.StateZ
	case WantL:
		return ns.State == switchsim.StateL
	case WantH:
		return ns.State == switchsim.StateH
	}
	return false
}

// Row is one step: the drives for the apply columns, the wants for the
// check columns, and the label from its trailing comment.
type Row struct {
	Line   int
	Drives []switchsim.Drive
	Wants  []Want
	Label  string
}

// Steps is a steps file read against a netlist. Apply and Check hold node
// numbers of that netlist, in column order.
type Steps struct {
	File  string
	Apply []int
	Check []int
	Rows  []Row
}

// Limits bound what the reader accepts.
type Limits struct {
	FileSize int // bytes
	LineLen  int // bytes in one line
	Errors   int // errors reported before the rest are only counted
}

// DefaultLimits are the limits Read uses.
func DefaultLimits() Limits { return Limits{FileSize: 4 << 20, LineLen: 64 << 10, Errors: 100} }

// Read reads a steps file against nl; filename is used in positions.
// Every error comes back as a diag.List. Files are opened by the loader
// (switchsim/load), which also finds a design's default steps.
func Read(filename string, src []byte, nl *switchsim.Netlist) (*Steps, error) {
	return ReadLimits(filename, src, nl, DefaultLimits())
}

// ApplyNames returns the names of src's apply line, or nil when src has
// none before its first row. It reads no more than that line, so that a
// netlist reader can learn which ports the steps drive before the netlist
// is read (README, "Netlists from elsewhere"); Read judges the rest.
func ApplyNames(src []byte) []string {
	text := string(src)
	for len(text) > 0 {
		line := text
		if i := strings.IndexByte(text, '\n'); i >= 0 {
			line, text = text[:i], text[i+1:]
		} else {
			text = ""
		}
		toks, _, _ := tokens(line)
		if len(toks) == 0 || toks[0].text == "check" {
			continue
		}
		if toks[0].text != "apply" {
			return nil
		}
		var names []string
		for _, t := range toks[1:] {
			if t.text != "|" {
				names = append(names, t.text)
			}
		}
		return names
	}
	return nil
}
