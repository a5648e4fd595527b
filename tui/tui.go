// Package tui is railyard's explorer: an interactive terminal interface over
// a session. The root model here only routes messages and lays out the
// panels, each of which is its own small model in a package below: the input
// bank and the node board on the left, and on the right one detail view at a
// time (rounds, vectors, why, devices, timeline, log).
//
// A Model is built from a session and a terminal size alone, with no globals
// and no direct use of the process's terminal, so a server can run one per
// connection; Run is the entry point for a real terminal.
package tui

import (
	"errors"
	"fmt"
	"os"
	"strings"
	"sync"

	"github.com/charmbracelet/bubbles/help"
	"github.com/charmbracelet/bubbles/key"
	tea "github.com/charmbracelet/bubbletea"
	"github.com/charmbracelet/lipgloss"

	"railyard/switchsim/session"
	"railyard/switchsim/trace"
	"railyard/tui/devices"
	"railyard/tui/inputs"
	"railyard/tui/logpanel"
	"railyard/tui/nodes"
	"railyard/tui/prompt"
	"railyard/tui/rounds"
	"railyard/tui/stepper"
	"railyard/tui/theme"
	"railyard/tui/timeline"
	"railyard/tui/why"
)

// Options configure the explorer.
type Options struct {
	// TracePath, when set, is where Run writes the trace on quit (the
	// session records from the start) and the save prompt's default.
	TracePath string
	ASCII     bool // no glyph outside ASCII, for poor remote terminals
	NoColor   bool // no colour (NO_COLOR); glyphs and letters carry every meaning
	// ReadOnly makes a viewer: every key that would change the session
	// (inputs, steps, back) or write a file is refused.
	ReadOnly bool
	Banner   string // shown at the right of the header (a server's name, a viewer's note)
	// Renderer is the terminal's lipgloss renderer (a server passes one per
	// connection so that each gets its own colour profile); nil: the default.
	Renderer *lipgloss.Renderer
	// Lock, when set, is held while the model reads or changes the session,
	// so several models (an owner and its viewers) may share one session.
	Lock sync.Locker
	// OnChange is called after the model changed the session (Lock
	// released), for a server to tell the viewers: send them Refresh{}.
	OnChange func()
	// MinWidth and MinHeight are the smallest size drawn (0: 80 x 24).
	MinWidth, MinHeight int
}

// Refresh tells a model that its session changed under it (a viewer of a
// shared session): it re-reads the session and redraws.
type Refresh struct{}

// Focus areas, in tab order.
const (
	focusInputs = iota
	focusNodes
	focusDetail
	numFocus
)

// View is one of the detail views on the right.
type View uint8

const (
	ViewRounds View = iota
	ViewVectors
	ViewWhy
	ViewDevices
	ViewTimeline
	ViewLog
	numViews
)

var viewNames = [numViews]string{"Rounds", "Vectors", "Why", "Devices", "Timeline", "Log"}

func (v View) String() string { return viewNames[v] }

// Model is the explorer's root model.
type Model struct {
	sess *session.Session
	opt  Options
	th   *theme.Theme
	keys KeyMap
	help help.Model

	inputs   *inputs.Model
	nodes    *nodes.Model
	rounds   *rounds.Model
	vectors  *stepper.Model
	why      *why.Model
	devices  *devices.Model
	timeline *timeline.Model
	log      *logpanel.Model
	prompt   *prompt.Model

	w, h      int
	focus     int
	view      View
	showHelp  bool
	helpPage  int
	status    string
	statusBad bool

	watched  []int // timeline order
	watchSet []bool
	inspect  int // the node the why view and the device marks follow
	lastFail string
	// copied from the session by sync, for View
	numSteps, nextStep, failed int
	ascii                      *strings.Replacer
}

// New builds the explorer on a session for a terminal of width x height.
func New(s *session.Session, width, height int, opt Options) *Model {
	th := theme.New(opt.Renderer, opt.NoColor, opt.ASCII)
	nl := s.Netlist()
	m := &Model{sess: s, opt: opt, th: th, keys: DefaultKeyMap(), w: width, h: height, inspect: -1}
	if opt.MinWidth == 0 {
		m.opt.MinWidth = 80
	}
	if opt.MinHeight == 0 {
		m.opt.MinHeight = 24
	}
	m.help = help.New()
	m.help.Styles.ShortKey = th.Key
	m.help.Styles.ShortDesc = th.KeyDesc
	m.help.Styles.FullKey = th.Key
	m.help.Styles.FullDesc = th.KeyDesc
	m.help.Styles.ShortSeparator = th.Dim
	m.help.Styles.FullSeparator = th.Dim
	m.help.Styles.Ellipsis = th.Dim
	m.help.ShortSeparator = "  "
	if opt.ASCII {
		m.help.Ellipsis = "~"
		m.ascii = asciiReplacer()
	}

	m.inputs = inputs.New(nl, inputs.DefaultStyles(th))
	m.nodes = nodes.New(nl, nodes.DefaultStyles(th))
	m.rounds = rounds.New(nl, rounds.DefaultStyles(th))
	m.vectors = stepper.New(stepsFile(s), stepRows(s), stepper.DefaultStyles(th))
	m.why = why.New(why.DefaultStyles(th))
	m.devices = devices.New(nl, devices.DefaultStyles(th))
	m.timeline = timeline.New(nl, timeline.DefaultStyles(th))
	m.log = logpanel.New(logpanel.DefaultStyles(th))

	// watch the inputs and outputs from the start: the timeline is never empty
	m.watchSet = make([]bool, nl.NumNodes())
	for _, n := range append(nl.Inputs(), nl.Outputs()...) {
		if len(m.watched) < 12 && !m.watchSet[n] {
			m.watchSet[n] = true
			m.watched = append(m.watched, n)
		}
	}
	if len(nl.Inputs()) == 0 {
		m.focus = focusNodes
	}
	m.applyFocus()
	m.lock()
	m.sync()
	m.unlock()
	m.status = m.welcome()
	m.layout()
	return m
}

// Session returns the session the model explores.
func (m *Model) Session() *session.Session { return m.sess }

// Options returns the options in force.
func (m *Model) Options() Options { return m.opt }

// ShownView is the detail view on the right.
func (m *Model) ShownView() View { return m.view }

// Status is the message on the status line.
func (m *Model) Status() string { return m.status }

func (m *Model) lock() {
	if m.opt.Lock != nil {
		m.opt.Lock.Lock()
	}
}

func (m *Model) unlock() {
	if m.opt.Lock != nil {
		m.opt.Lock.Unlock()
	}
}

func (m *Model) welcome() string {
	if m.opt.ReadOnly {
		return "read-only viewer: you see the session as it changes; ? lists the keys, q leaves"
	}
	if len(m.sess.Netlist().Inputs()) > 0 {
		return "space toggles the selected input; n applies the next step; ? lists every key"
	}
	return "n applies the next step; ? lists every key"
}

// Init starts nothing: the model is ready as built.
func (m *Model) Init() tea.Cmd { return nil }

// Update routes a message.
func (m *Model) Update(msg tea.Msg) (tea.Model, tea.Cmd) {
	switch msg := msg.(type) {
	case tea.WindowSizeMsg:
		m.w, m.h = msg.Width, msg.Height
		m.layout()
		return m, nil
	case Refresh:
		m.lock()
		m.sync()
		m.unlock()
		return m, nil
	case tea.KeyMsg:
		return m, m.key(msg)
	}
	return m, nil
}

func (m *Model) tooSmall() bool { return m.w < m.opt.MinWidth || m.h < m.opt.MinHeight }

func (m *Model) key(k tea.KeyMsg) tea.Cmd {
	km := m.keys
	if k.Type == tea.KeyCtrlC {
		return tea.Quit
	}
	if m.tooSmall() {
		if key.Matches(k, km.Quit) {
			return tea.Quit
		}
		return nil
	}
	if m.prompt != nil {
		if a := m.prompt.Update(k); a != nil {
			m.prompt = nil
			m.answer(a)
		}
		return nil
	}
	if m.showHelp {
		switch {
		case key.Matches(k, km.Quit):
			return tea.Quit
		case key.Matches(k, km.Help), key.Matches(k, km.Close):
			m.showHelp = false
		case k.Type == tea.KeyRight || k.Type == tea.KeyDown || k.Type == tea.KeyPgDown || k.Type == tea.KeySpace:
			m.helpPage++
		case k.Type == tea.KeyLeft || k.Type == tea.KeyUp || k.Type == tea.KeyPgUp:
			m.helpPage--
		}
		return nil
	}
	// a filter being typed takes every key
	if m.nodes.Filtering() {
		m.nodes.Update(k)
		m.followSelection()
		return nil
	}
	if m.devices.Filtering() {
		m.devices.Update(k)
		return nil
	}

	switch {
	case key.Matches(k, km.Quit):
		return tea.Quit
	case key.Matches(k, km.Help):
		m.showHelp, m.helpPage = true, 0
		return nil
	case key.Matches(k, km.Close):
		m.escape()
		return nil
	case key.Matches(k, km.FocusNext):
		m.focus = (m.focus + 1) % numFocus
		m.applyFocus()
		return nil
	case key.Matches(k, km.FocusPrev):
		m.focus = (m.focus + numFocus - 1) % numFocus
		m.applyFocus()
		return nil
	case key.Matches(k, km.Next):
		m.change(m.next)
		return nil
	case key.Matches(k, km.Prev):
		m.change(m.back)
		return nil
	case key.Matches(k, km.Jump):
		m.openJump()
		return nil
	case key.Matches(k, km.RunToFail):
		m.change(func() { m.run(true) })
		return nil
	case key.Matches(k, km.RunToEnd):
		m.change(func() { m.run(false) })
		return nil
	case key.Matches(k, km.Save):
		m.openSave()
		return nil
	case key.Matches(k, km.Filter):
		m.startFilter()
		return nil
	case key.Matches(k, km.Rounds):
		m.show(ViewRounds)
		return nil
	case key.Matches(k, km.Vectors):
		m.show(ViewVectors)
		return nil
	case key.Matches(k, km.Why) && m.focus != focusNodes:
		m.inspectSelected()
		return nil
	case key.Matches(k, km.Devices):
		m.show(ViewDevices)
		return nil
	case key.Matches(k, km.Timeline):
		m.show(ViewTimeline)
		return nil
	case key.Matches(k, km.Log):
		m.show(ViewLog)
		return nil
	}

	switch m.focus {
	case focusInputs:
		if m.inputKey(k) {
			return nil
		}
	case focusNodes:
		req, _ := m.nodes.Update(k)
		switch req {
		case nodes.Inspect:
			m.inspectSelected()
		case nodes.Watch:
			m.toggleWatch(m.nodes.Selected())
		}
		m.followSelection()
		return nil
	case focusDetail:
		m.detailKey(k)
		return nil
	}
	// left and right replay the rounds (or scroll the timeline) from anywhere
	switch m.view {
	case ViewRounds:
		m.rounds.Update(k)
	case ViewTimeline:
		if n := m.timeline.Update(k); n >= 0 {
			m.toggleWatch(n)
		}
	}
	return nil
}

func (m *Model) inputKey(k tea.KeyMsg) bool {
	before := m.inputs.Selected()
	req := m.inputs.Update(k)
	switch req.Kind {
	case inputs.None:
		if m.inputs.Selected() != before {
			m.followSelection()
			return true
		}
		return false
	case inputs.Toggle:
		m.change(func() { m.setInput(req.Node, -1) })
	case inputs.Set:
		m.change(func() { m.setInput(req.Node, int(req.Drive)) })
	case inputs.Watch:
		m.toggleWatch(req.Node)
	}
	return true
}

func (m *Model) detailKey(k tea.KeyMsg) {
	switch m.view {
	case ViewRounds:
		m.rounds.Update(k)
	case ViewVectors:
		if row := m.vectors.Update(k); row >= 0 {
			m.change(func() { m.jump(row) })
		}
	case ViewWhy:
		m.why.Update(k)
	case ViewDevices:
		m.devices.Update(k)
	case ViewTimeline:
		if n := m.timeline.Update(k); n >= 0 {
			m.toggleWatch(n)
		}
	case ViewLog:
		m.log.Update(k)
	}
}

// escape closes the innermost thing open: a filter, then the detail focus.
func (m *Model) escape() {
	switch {
	case m.view == ViewDevices && m.devices.ClearFilter():
		m.say("device filter cleared")
	case m.nodes.ClearFilter():
		m.say("node filter cleared")
		m.followSelection()
	case m.focus == focusDetail:
		m.focus = focusNodes
		m.applyFocus()
	}
}

func (m *Model) startFilter() {
	if m.view == ViewDevices && m.focus == focusDetail {
		m.devices.StartFilter()
		return
	}
	m.focus = focusNodes
	m.applyFocus()
	m.nodes.StartFilter()
}

func (m *Model) show(v View) {
	m.view = v
	if v == ViewWhy || v == ViewDevices {
		m.followSelection()
	}
	m.layout()
}

func (m *Model) applyFocus() {
	for i, p := range []interface {
		Focus()
		Blur()
	}{m.inputs, m.nodes} {
		if i == m.focus {
			p.Focus()
		} else {
			p.Blur()
		}
	}
	for _, p := range []interface {
		Focus()
		Blur()
	}{m.rounds, m.vectors, m.why, m.devices, m.timeline, m.log} {
		if m.focus == focusDetail {
			p.Focus()
		} else {
			p.Blur()
		}
	}
}

// selectedNode is the node the focused list points at.
func (m *Model) selectedNode() int {
	if m.focus == focusInputs {
		return m.inputs.Selected()
	}
	if n := m.nodes.Selected(); n >= 0 {
		return n
	}
	return m.inputs.Selected()
}

func (m *Model) inspectSelected() {
	n := m.selectedNode()
	if n < 0 {
		m.fail("no node selected")
		return
	}
	m.inspect = n
	m.view = ViewWhy
	m.lock()
	m.explain()
	m.unlock()
	m.layout()
}

// followSelection makes the why view and the device marks follow the cursor.
func (m *Model) followSelection() {
	if m.view != ViewWhy && m.view != ViewDevices {
		return
	}
	n := m.selectedNode()
	if n < 0 || n == m.inspect {
		return
	}
	m.inspect = n
	m.lock()
	m.explain()
	m.unlock()
}

func (m *Model) toggleWatch(n int) {
	if n < 0 {
		return
	}
	name := m.sess.Netlist().NodeName(n)
	if m.watchSet[n] {
		m.watchSet[n] = false
		for i, w := range m.watched {
			if w == n {
				m.watched = append(m.watched[:i], m.watched[i+1:]...)
				break
			}
		}
		m.say(name + " left the timeline")
	} else {
		m.watchSet[n] = true
		m.watched = append(m.watched, n)
		m.say(name + " is on the timeline (t shows it)")
	}
	m.timeline.SetWatched(m.watched)
	m.nodes.SetWatched(m.watchSet)
	m.inputs.SetWatched(m.watchSet)
}

// Run runs the explorer on the process's terminal (alternate screen) until
// the user quits. With opt.TracePath set, the trace of the whole session is
// written there on quit, atomically; the session must record one
// (trace.Start).
func Run(s *session.Session, opt Options) error {
	if os.Getenv("NO_COLOR") != "" {
		opt.NoColor = true
	}
	return run(s, opt, 0, 0, tea.WithAltScreen()) // the terminal reports its size at start
}

// run is Run on any input and output (tests give it pipes and a size).
func run(s *session.Session, opt Options, w, h int, popts ...tea.ProgramOption) error {
	m := New(s, w, h, opt)
	p := tea.NewProgram(m, popts...)
	_, err := p.Run()
	if opt.TracePath != "" {
		m.lock()
		_, terr := trace.Save(s, opt.TracePath)
		m.unlock()
		if terr != nil {
			return errors.Join(err, fmt.Errorf("writing the trace: %w", terr))
		}
	}
	return err
}
