package session

// Rebuilt sessions: the history in force re-simulated in the other mode
// or on a design with a size changed, and the same design started again
// on other steps. Each returns a new session and leaves s as it was, so
// that a caller can compare the two and keep either.

import (
	"errors"
	"fmt"

	"railyard/switchsim"
	"railyard/switchsim/netfile"
	"railyard/switchsim/steps"
)

// Attach is called on a rebuilt session just after its start and before
// its history is replayed: the place to attach recorders (a trace), which
// must see the whole session. nil attaches nothing.
type Attach func(*Session) error

// Remode returns a session on s's design in mode, with the actions in
// force replayed: each input set and step of s's history (not the actions
// undone, nor their backs) taken again in order, so that the new session
// stands where s stands, as the other mode sees it.
func Remode(s *Session, mode switchsim.Mode, attach Attach) (*Session, error) {
	opt := s.opts
	opt.Mode = mode
	return s.rebuild(s.nominal(), s.edits, opt, attach)
}

// Resize returns a session with transistor device drawn w wide and l long
// (metres) and the actions in force replayed on it. The design becomes an
// edited one (Edits, Edited): its netlist has the size, and its Source,
// which the trace's content hash is of, is the .sw text that says so
// (what SaveDesign writes). Setting a device back to its size as loaded
// drops its edit; with no edit left the design is the one loaded.
func Resize(s *Session, device int, w, l float64, attach Attach) (*Session, error) {
	orig := s.Original()
	if device < 0 || device >= orig.Netlist.NumDevices() {
		return nil, fmt.Errorf("no device %d", device)
	}
	was := orig.Netlist.Device(device)
	var edits []Edit
	found := false
	for _, e := range s.edits {
		if e.Device == device {
			e.W, e.L, found = w, l, true
		}
		if e.W != e.WasW || e.L != e.WasL {
			edits = append(edits, e)
		}
	}
	if !found && (w != was.W || l != was.L) {
		edits = append(edits, Edit{Device: device, W: w, L: l, WasW: was.W, WasL: was.L})
	}
	d := orig
	if len(edits) > 0 {
		if _, err := orig.Netlist.WithSize(device, w, l); err != nil {
			return nil, err // a pull, a resistor, a size that is no size: say so plainly
		}
		var err error
		if d, err = editedDesign(orig, edits); err != nil {
			return nil, err
		}
	}
	return s.rebuild(d, edits, s.opts, attach)
}

// Restart returns a session on s's design (with its edits), mode and
// options, at its start, with st as its steps (nil: none): a finding's
// shortest sequence, say, to be walked from the first settle. The steps
// have no file; step actions carry their drives, so a trace of the
// session replays without one.
func Restart(s *Session, st *steps.Steps, attach Attach) (*Session, error) {
	ns := New(s.nominal(), s.designPath, st, s.opts)
	ns.orig, ns.edits = s.orig, s.edits
	if attach != nil {
		if err := attach(ns); err != nil {
			return nil, err
		}
	}
	return ns, nil
}

// rebuild starts a session on d (at the design's own technology: New
// puts it at opt.Corner) with opt, the steps and edits given, and replays
// s's actions in force on it.
func (s *Session) rebuild(d *netfile.Design, edits []Edit, opt Options, attach Attach) (*Session, error) {
	if s.folded > 0 {
		return nil, fmt.Errorf("the first %d actions have left the history (it keeps %d): it cannot be re-simulated from the start", s.folded, s.opts.MaxHistory)
	}
	ns := New(d, s.designPath, s.steps, opt)
	ns.stepsPath, ns.stepsHash = s.stepsPath, s.stepsHash
	if len(edits) > 0 {
		ns.orig, ns.edits = s.Original(), edits
	}
	if attach != nil {
		if err := attach(ns); err != nil {
			return nil, err
		}
	}
	for _, en := range s.hist[1:] {
		a := en.ev.Action
		var err error
		switch a.Kind {
		case Set:
			_, err = ns.SetInput(a.Node, a.Drive)
		case Step:
			_, err = ns.ApplyAction(a)
		}
		if err != nil {
			return nil, fmt.Errorf("replaying %s: %v", s.ActionString(a), err)
		}
	}
	return ns, nil
}

// SavedAs records that the edited design was saved to path, whose content
// is src: from then on the session names its design by that file (traces
// name it, and replay finds it there by its content hash), as a session
// opened on the file would. src must be the design's Source (its hash is
// checked), so that the name never points at other text.
func (s *Session) SavedAs(path string, src []byte) error {
	if !s.Edited() {
		return errors.New("the design has no size tried: it is the file it was loaded from")
	}
	if Hash(src) != s.hash {
		return fmt.Errorf("%s does not hold the edited design", path)
	}
	s.designPath = path
	return nil
}

// Edits are the sizes tried on the design, one per device changed, in
// the order first tried; nil for the design as loaded.
func (s *Session) Edits() []Edit { return append([]Edit(nil), s.edits...) }

// Edited reports whether the design has sizes changed from the one loaded.
func (s *Session) Edited() bool { return len(s.edits) > 0 }

// Original is the design as loaded, before any size was tried, at its own
// technology.
func (s *Session) Original() *netfile.Design {
	if s.orig != nil {
		return s.orig
	}
	return s.nominal()
}

// nominal is the session's design (with its sizes tried) at its own
// technology: what a rebuild at another mode, size or corner starts from.
func (s *Session) nominal() *netfile.Design {
	if s.base != nil {
		return s.base
	}
	return s.design
}
