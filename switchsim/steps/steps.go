// Package steps reads railyard's .steps files (FORMAT.md): the inputs each
// step applies, the nodes checked after it settles, and what each check
// wants. It also holds the check semantics, Want.Check, shared by the batch
// run, the explorer and replay.
package steps

import (
	"os"
	"path/filepath"
	"strings"

	"railyard/designs"
	"railyard/switchsim"
	"railyard/switchsim/netfile"
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

// Check reports whether a node's state satisfies the want (FORMAT.md):
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
// Every error comes back as a netfile.ErrorList.
func Read(filename string, src []byte, nl *switchsim.Netlist) (*Steps, error) {
	return ReadLimits(filename, src, nl, DefaultLimits())
}

// ReadFile reads a steps file from a path, or a demo's embedded steps as
// demo:NAME.steps.
func ReadFile(path string, nl *switchsim.Netlist) (*Steps, error) {
	if name, ok := strings.CutPrefix(path, "demo:"); ok {
		_, src, ok := designs.Source(strings.TrimSuffix(name, ".steps"))
		if !ok || src == nil {
			return nil, netfile.ErrorList{{Pos: netfile.Pos{File: path}, Msg: "no such demo steps"}}
		}
		return Read(path, src, nl)
	}
	src, err := netfile.ReadText(path, DefaultLimits().FileSize)
	if err != nil {
		return nil, err
	}
	return Read(path, src, nl)
}

// Default returns the design's default steps: the same-named .steps file
// beside a design file, or demo:NAME.steps for a demo that has steps.
func Default(designPath string) (string, bool) {
	if name, ok := strings.CutPrefix(designPath, "demo:"); ok {
		if _, src, ok := designs.Source(name); ok && src != nil {
			return designPath + ".steps", true
		}
		return "", false
	}
	p := strings.TrimSuffix(designPath, filepath.Ext(designPath)) + ".steps"
	if p == designPath {
		return "", false
	}
	if st, err := os.Stat(p); err == nil && st.Mode().IsRegular() {
		return p, true
	}
	return "", false
}
