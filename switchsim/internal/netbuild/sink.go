package netbuild

import (
	"fmt"

	"railyard/switchsim/diag"
)

// Sink collects errors or notes up to a limit (diag.Sink), each
// (position, message) once: a problem inside a subcircuit or module is
// found again in every instance of it, and is worth one line.
type Sink struct {
	S    *diag.Sink
	seen map[diag.Error]bool
}

// NewSink keeps at most max entries.
func NewSink(max int) *Sink { return &Sink{S: diag.NewSink(max), seen: map[diag.Error]bool{}} }

// Add records one entry, unless the same was recorded already.
func (k *Sink) Add(p diag.Pos, format string, args ...any) {
	// Names and text from the file may hold control characters: the
	// message is made printable before anyone shows it.
	e := diag.Error{Pos: p, Msg: diag.Printable(fmt.Sprintf(format, args...))}
	if k.seen[e] {
		return
	}
	if !k.S.Full() {
		k.seen[e] = true // past the limit entries are only counted: remembering them would grow without bound
	}
	k.S.Add(p, "%s", e.Msg)
}

// AddErr records a diag.Error.
func (k *Sink) AddErr(e *diag.Error) { k.Add(e.Pos, "%s", e.Msg) }

// Any reports whether anything was recorded; Full whether the limit is reached.
func (k *Sink) Any() bool  { return k.S.Any() }
func (k *Sink) Full() bool { return k.S.Full() }

// Err is the sorted list as an error (nil when empty).
func (k *Sink) Err() error { return k.S.Err() }

// List is the sorted list, with a last line counting what was left out.
func (k *Sink) List() diag.List {
	if err := k.S.Err(); err != nil {
		return err.(diag.List)
	}
	return nil
}
