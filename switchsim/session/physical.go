package session

// What physical mode adds to a session: each check's margin (and the
// --min-margin rule), the margins, fight pictures and device biases of the
// present state, the nodes whose levels are checked, and technology
// corners (DEVELOPERS.md, physical mode; the README, "Margins" and
// "Corners").

import (
	"fmt"
	"math"
	"slices"
	"strings"

	"railyard/switchsim"
	"railyard/switchsim/netfile"
	"railyard/switchsim/steps"
)

// Nominal is the name the reports and the explorer give a design's own
// technology, beside its corners.
const Nominal = "nominal"

// Reader reads the state just after an event: the live session (while the
// event is its last) or the simulator of a walk (WalkStates). A
// *switchsim.Sim is one.
type Reader interface {
	Node(n int) switchsim.NodeState
	Margin(n int) switchsim.Margin
	DeviceBias(d int) switchsim.Bias
}

// Margin returns node n's margins at the present state (NaN in ideal mode
// and where a margin does not apply).
func (s *Session) Margin(n int) switchsim.Margin { return s.sim.Margin(n) }

// DeviceBias returns device d's gate voltage, current and pass limit at
// the present state.
func (s *Session) DeviceBias(d int) switchsim.Bias { return s.sim.DeviceBias(d) }

// Fight returns the picture of the fight at node n (the two sides'
// currents against its voltage), false where n is not in one.
func (s *Session) Fight(n int) (switchsim.FightPicture, bool) { return s.sim.Fight(n) }

// Corner is the name of the technology corner the session runs at, or ""
// for the design's own technology.
func (s *Session) Corner() string { return s.opts.Corner }

// CornerName is Corner, with Nominal for the design's own technology.
func (s *Session) CornerName() string { return CornerLabel(s.opts.Corner) }

// CornerLabel names a corner for people: Nominal for "".
func CornerLabel(name string) string {
	if name == "" {
		return Nominal
	}
	return name
}

// Watched are the nodes whose levels the session checks besides the
// outputs (Options.Watch and the steps' check columns), sorted.
func (s *Session) Watched() []int { return slices.Clone(s.watch) }

// watchList is the nodes whose levels matter to the session besides the
// outputs: the options' and the steps' check columns, once each, sorted.
func watchList(opt Options, st *steps.Steps, nn int) []int {
	var w []int
	add := func(n int) {
		if n >= 0 && n < nn {
			w = append(w, n)
		}
	}
	for _, n := range opt.Watch {
		add(n)
	}
	if st != nil {
		for _, n := range st.Check {
			add(n)
		}
	}
	slices.Sort(w)
	return slices.Compact(w)
}

// newSim is a simulator of the session's netlist, mode and watched nodes:
// every simulator a session settles on (the live one, the scratch one for
// rebuilding, a walk's) is made here, so that they all warn alike.
func (s *Session) newSim() *switchsim.Sim {
	races := switchsim.RacesWhenNeeded
	if s.opts.Glitches {
		races = switchsim.RacesGlitches
	}
	sim := switchsim.NewSim(s.Netlist(), switchsim.Options{Mode: s.opts.Mode, Races: races})
	sim.Watch(s.watch)
	return sim
}

// CheckMargin is a check's margin: how far the node's level is from
// failing the wanted value, in volts. For a wanted 1 or H it is V - VIH,
// for a wanted 0 or L it is VIL - V (so a check that passes has the node's
// own noise margin, and one that fails on its level says by how much); for
// X, Z and - it is the node's noise margin. NaN where the voltage is
// unknown and in ideal mode.
func CheckMargin(want steps.Want, st switchsim.NodeState, m switchsim.Margin, th Thresholds) float64 {
	if math.IsNaN(st.Volts) {
		return math.NaN()
	}
	switch want {
	case steps.Want1, steps.WantH:
		return st.Volts - th.VIH
	case steps.Want0, steps.WantL:
		return th.VIL - st.Volts
	}
	return m.Noise
}

// WriteMargin is, for a check of a node of a fight that drives a stage,
// how far the node is past the stage's switching threshold toward the
// wanted value (V - VM for a 1 or H, VM - V for a 0 or L): positive when
// the fight flips the stage the wanted way. NaN otherwise.
func WriteMargin(want steps.Want, st switchsim.NodeState, m switchsim.Margin) float64 {
	if math.IsNaN(m.Write) || math.IsNaN(st.Volts) {
		return math.NaN()
	}
	switch want {
	case steps.Want1, steps.WantH:
		return st.Volts - m.StageVM
	case steps.Want0, steps.WantL:
		return m.StageVM - st.Volts
	}
	return math.NaN()
}

// NodeMargin is the one figure a report gives for a node's margin: its
// noise margin (switchsim.Margin.Noise).
func NodeMargin(m switchsim.Margin) float64 { return m.Noise }

// judge fills a check's margin and applies the --min-margin rule: a check
// that passes on its value but whose margin is below the minimum fails.
func judge(c *CheckResult, m switchsim.Margin, th Thresholds, opt Options) {
	c.Margin = CheckMargin(c.Want, c.Got, m, th)
	if c.Pass && opt.MarginCheck && IsCheck(*c) && !math.IsNaN(c.Margin) && c.Margin < opt.MinMargin {
		c.Pass, c.LowMargin = false, true
	}
}

// CornerError is an unknown corner name, with the corners the design has.
type CornerError struct {
	Name    string
	Design  string
	Corners []string
}

func (e *CornerError) Error() string {
	if len(e.Corners) == 0 {
		return fmt.Sprintf("%s has no corner %q: it names no corners (add `corner NAME KEY=VALUE ...` statements to a .sw design)", e.Design, e.Name)
	}
	return fmt.Sprintf("%s has no corner %q (its corners: %s)", e.Design, e.Name, strings.Join(e.Corners, ", "))
}

// AtCorner returns the design at the named corner: a copy whose netlist
// has the corner's technology (Netlist.WithTech), sharing everything else
// (its Source too, so a trace's content hash is the file's). "" and
// Nominal are the design itself, unless the design names a corner
// "nominal".
func AtCorner(d *netfile.Design, name string) (*netfile.Design, error) {
	if name == "" {
		return d, nil
	}
	for _, c := range d.Corners {
		if c.Name == name {
			nl, err := d.Netlist.WithTech(c.Tech)
			if err != nil {
				return nil, fmt.Errorf("%s: corner %s: %w", c.Pos, name, err)
			}
			cp := *d
			cp.Netlist = nl
			return &cp, nil
		}
	}
	if name == Nominal {
		return d, nil
	}
	e := &CornerError{Name: name, Design: d.Name}
	for _, c := range d.Corners {
		e.Corners = append(e.Corners, c.Name)
	}
	return nil, e
}

// CornerNames are the design's corners in the order written.
func CornerNames(d *netfile.Design) []string {
	out := make([]string, len(d.Corners))
	for i, c := range d.Corners {
		out[i] = c.Name
	}
	return out
}

// Recorner returns a session on s's design (with its sizes tried) at
// corner (a name of the design's corners, "" or Nominal for its own
// technology), with the actions in force replayed on it, so that it stands
// where s stands as the other technology sees it. attach, if not nil, is
// called on the new session before the replay (to attach a trace). s is
// left as it was.
func Recorner(s *Session, corner string, attach Attach) (*Session, error) {
	if corner == Nominal {
		corner = ""
	}
	if _, err := AtCorner(s.nominal(), corner); err != nil {
		return nil, err
	}
	opt := s.opts
	opt.Corner = corner
	return s.rebuild(s.nominal(), s.edits, opt, attach)
}

// WalkStates is Walk with a Reader of the state just after each event:
// its nodes, margins and device biases.
func (s *Session) WalkStates(fn func(e *Event, rd Reader) error) error {
	return s.walk(fn)
}
