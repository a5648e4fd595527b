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
	"path/filepath"
	"strings"
	"sync"

	"github.com/charmbracelet/bubbles/help"
	"github.com/charmbracelet/bubbles/key"
	tea "github.com/charmbracelet/bubbletea"
	"github.com/charmbracelet/lipgloss"
	"github.com/charmbracelet/x/ansi"

	"railyard/switchsim"
	"railyard/switchsim/session"
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
	// OnChange is called after the model changed the session (with Lock
	// held), for a server to tell the viewers: send them Refresh{}.
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
	ascii    *strings.Replacer
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

// change runs an action that changes the session, unless read-only.
func (m *Model) change(fn func()) {
	if m.opt.ReadOnly {
		m.fail("read-only viewer: only the session's owner can change it")
		return
	}
	m.lock()
	fn()
	m.sync()
	if m.opt.OnChange != nil {
		m.opt.OnChange()
	}
	m.unlock()
	m.layout()
}

// setInput drives an input (d < 0: toggle) and reports the settle.
func (m *Model) setInput(n, d int) {
	var e *session.Event
	var err error
	if d < 0 {
		e, err = m.sess.Toggle(n)
	} else {
		e, err = m.sess.SetInput(n, switchsim.Drive(d))
	}
	if err != nil {
		m.fail(err.Error())
		return
	}
	m.report(e)
}

func (m *Model) next() {
	if m.sess.NumSteps() == 0 {
		m.fail("this design has no steps file: set the inputs by hand")
		return
	}
	e, ok := m.sess.Next()
	if !ok {
		m.fail(fmt.Sprintf("no more steps: all %d applied (p goes back)", m.sess.NumSteps()))
		return
	}
	m.report(e)
}

func (m *Model) back() {
	last := m.sess.Last()
	if !m.sess.GoBack() {
		m.fail("already at the start: nothing to undo")
		return
	}
	m.say("back: undid " + m.title(last))
}

func (m *Model) run(stopOnFail bool) {
	if m.sess.NumSteps() == 0 {
		m.fail("this design has no steps file")
		return
	}
	if m.sess.NextStep() >= m.sess.NumSteps() {
		m.fail("no more steps to run (p goes back, g goes to a step)")
		return
	}
	evs := m.sess.RunToEnd(stopOnFail)
	last := evs[len(evs)-1]
	if last.Failed() {
		m.report(last)
		m.status += fmt.Sprintf("; stopped there after %s", plural(len(evs), "step"))
		return
	}
	failed := 0
	for _, e := range evs {
		if e.Failed() {
			failed++
		}
	}
	if failed > 0 {
		m.fail(fmt.Sprintf("ran %s to the end: %d failed (v lists them)", plural(len(evs), "step"), failed))
		return
	}
	m.say(fmt.Sprintf("ran %s to the end: every check passed", plural(len(evs), "step")))
}

func (m *Model) jump(row int) {
	m.sess.JumpTo(row)
	e := m.sess.Last()
	if e.Action.Kind == session.Step && e.Action.Step == row {
		m.report(e)
		m.status = "went to " + m.status
		return
	}
	m.say(fmt.Sprintf("went to step %d", row+1))
}

// report words what an event did on the status line.
func (m *Model) report(e *session.Event) {
	counts := fmt.Sprintf("%s, %s", plural(e.Rounds, "round"), plural(len(e.Changes), "change"))
	msg := m.title(e) + ": " + counts
	if n := len(e.Warnings); n > 0 {
		msg += ", " + plural(n, "warning") + " (l)"
	}
	if e.Oscillated {
		msg += ", OSCILLATED"
	}
	if e.Failed() {
		nl := m.sess.Netlist()
		var bad []string
		for _, c := range e.Checks {
			if !c.Pass {
				bad = append(bad, fmt.Sprintf("%s want %s got %s", nl.NodeName(c.Node), c.Want, c.Got.State))
			}
		}
		// the failure first: a long label must not push it off the line
		where := "CHECK FAILED"
		if e.Action.Kind == session.Step {
			where = fmt.Sprintf("CHECK FAILED at step %d", e.Action.Step+1)
		}
		m.fail(where + ": " + strings.Join(bad, ", ") + " (" + counts + ")")
		return
	}
	if len(e.Checks) > 0 {
		if n := countChecks(e); n == 1 {
			msg += "; the check passes"
		} else {
			msg += fmt.Sprintf("; %d checks pass", n)
		}
	}
	m.say(msg)
}

func countChecks(e *session.Event) int {
	n := 0
	for _, c := range e.Checks {
		if session.IsCheck(c) {
			n++
		}
	}
	return n
}

func (m *Model) say(s string)  { m.status, m.statusBad = s, false }
func (m *Model) fail(s string) { m.status, m.statusBad = s, true }

// title words an action briefly.
func (m *Model) title(e *session.Event) string {
	a := e.Action
	switch a.Kind {
	case session.Start:
		return "start"
	case session.Set:
		return "set " + m.sess.Netlist().NodeName(a.Node) + "=" + a.Drive.String()
	case session.Step:
		t := fmt.Sprintf("step %d", a.Step+1)
		if a.Label != "" {
			t += " " + a.Label
		}
		return t
	}
	return a.Kind.String()
}

func (m *Model) openSave() {
	if m.opt.ReadOnly {
		m.fail("read-only viewer: saving is the owner's")
		return
	}
	base := m.sess.Design.Name
	if base == "" {
		base = strings.TrimSuffix(filepath.Base(strings.TrimPrefix(m.sess.DesignPath, "demo:")), ".sw")
	}
	tr, vcd := base+".trace", base+".vcd"
	if m.opt.TracePath != "" {
		tr = m.opt.TracePath
	}
	m.prompt = prompt.NewSave(prompt.DefaultStyles(m.th), tr, vcd)
}

func (m *Model) openJump() {
	if m.opt.ReadOnly {
		m.fail("read-only viewer: only the session's owner can change it")
		return
	}
	if m.sess.NumSteps() == 0 {
		m.fail("this design has no steps file")
		return
	}
	m.prompt = prompt.NewJump(prompt.DefaultStyles(m.th), m.sess.NumSteps(), min(m.sess.NextStep()+1, m.sess.NumSteps()))
}

func (m *Model) answer(a *prompt.Answer) {
	if a.Canceled {
		m.say("canceled")
		return
	}
	switch a.Kind {
	case prompt.Jump:
		m.change(func() { m.jump(a.Step) })
	case prompt.SaveTrace:
		m.lock()
		err := m.sess.SaveTrace(a.Text)
		m.unlock()
		if err != nil {
			m.fail("could not save the trace: " + err.Error())
			return
		}
		m.say(fmt.Sprintf("saved the trace (%s) to %s; railyard replay %s repeats it", plural(len(m.sess.Trace()), "action"), a.Text, a.Text))
	case prompt.SaveVCD:
		m.lock()
		err := m.sess.SaveVCD(a.Text, session.VCDOptions{})
		m.unlock()
		if err != nil {
			m.fail("could not export the VCD: " + err.Error())
			return
		}
		m.say(fmt.Sprintf("exported a VCD of %s to %s", plural(len(m.sess.History()), "action"), a.Text))
	}
}

// sync copies what the panels draw from the session (under the lock), so
// that View never touches the session.
func (m *Model) sync() {
	s := m.sess
	nl := s.Netlist()
	hist := s.History()
	last := hist[len(hist)-1]
	nn := nl.NumNodes()
	states := last.States
	if states == nil {
		states = make([]switchsim.NodeState, nn)
		for n := range states {
			states[n] = s.Sim.Node(n)
		}
	}
	changed := make([]bool, nn)
	for _, c := range last.Changes {
		changed[c.Node] = true
	}
	failing := make([]bool, nn)
	m.lastFail = ""
	for _, c := range last.Checks {
		if !c.Pass {
			failing[c.Node] = true
			if m.lastFail == "" {
				m.lastFail = nl.NodeName(c.Node)
			}
		}
	}
	ins := nl.Inputs()
	drives := make([]switchsim.Drive, len(ins))
	for i, n := range ins {
		drives[i] = s.Sim.InputDrive(n)
	}
	m.inputs.SetStates(drives, states, changed)
	m.inputs.SetWatched(m.watchSet)
	m.nodes.SetStates(states, changed, failing)
	m.nodes.SetWatched(m.watchSet)

	cond := make([]switchsim.Conduction, nl.NumDevices())
	for d := range cond {
		cond[d] = s.Sim.Conduction(d)
	}
	vals := make([]switchsim.Value, nn)
	for n := range vals {
		vals[n] = states[n].Value
	}
	m.devices.SetStates(cond, vals)

	var before []switchsim.NodeState
	if len(hist) > 1 {
		before = hist[len(hist)-2].States
	}
	st := rounds.Settle{Title: m.title(last), Rounds: last.Rounds, Before: before, Oscillated: last.Oscillated}
	if len(hist) == 1 {
		st.Title = "start: the first settle, every node from X"
		st.Before = nil
	}
	for _, c := range last.Changes {
		st.Changes = append(st.Changes, rounds.Change{Round: c.Round, Node: c.Node, State: c.State})
	}
	m.rounds.Set(st)

	outcomes := make([]stepper.Outcome, s.NumSteps())
	var cols []timeline.Column
	var entries []logpanel.Entry
	for _, e := range hist {
		col := timeline.Column{Mark: "+", States: e.States, Failed: e.Failed()}
		switch e.Action.Kind {
		case session.Start:
			col.Mark = "0"
		case session.Step:
			col.Mark = fmt.Sprint((e.Action.Step + 1) % 10)
			if i := e.Action.Step; i >= 0 && i < len(outcomes) {
				o := stepper.Outcome{Taken: true}
				for _, c := range e.Checks {
					if session.IsCheck(c) {
						o.Checks = append(o.Checks, stepper.Check{Node: nl.NodeName(c.Node), Want: c.Want.String(), Got: c.Got, Pass: c.Pass})
					}
				}
				outcomes[i] = o
			}
		}
		cols = append(cols, col)
		en := logpanel.Entry{Title: m.title(e)}
		for _, w := range e.Warnings {
			en.Warnings = append(en.Warnings, logpanel.Warning{Kind: w.Kind, Message: w.Message})
		}
		entries = append(entries, en)
	}
	m.vectors.SetProgress(outcomes, s.NextStep())
	m.timeline.SetColumns(cols)
	m.timeline.SetWatched(m.watched)
	m.log.SetEntries(entries)
	m.explain()
}

// explain re-reads the inspected node's explanation and group (lock held).
func (m *Model) explain() {
	if m.inspect < 0 {
		return
	}
	s := m.sess
	nl := s.Netlist()
	e := s.Sim.Explain(m.inspect)
	m.why.Set(nl, e, m.nodeWarnings(m.inspect))
	group := make([]bool, nl.NumDevices())
	for _, d := range groupDevices(s, m.inspect) {
		group[d] = true
	}
	m.devices.SetGroup(nl.NodeName(m.inspect), group)
}

// nodeWarnings words the warnings that still stand for node n: those of the
// latest action that solved it (changed it or warned about it), since its
// state has not moved after that.
func (m *Model) nodeWarnings(n int) []string {
	hist := m.sess.History()
	for i := len(hist) - 1; i >= 0; i-- {
		e := hist[i]
		var ws []string
		for _, w := range e.Warnings {
			if w.Node == n {
				ws = append(ws, m.th.Warn.Render(m.th.G.Warn+" "+w.Kind)+" "+w.Message)
			}
		}
		touched := len(ws) > 0
		for _, c := range e.Changes {
			if c.Node == n {
				touched = true
				break
			}
		}
		if touched {
			if len(ws) == 0 {
				return nil
			}
			head := m.th.Bold.Render("Warnings since " + m.title(e) + ":")
			return append([]string{"", head}, ws...)
		}
	}
	return nil
}

// groupDevices lists the devices that are not off and join the node's group
// (the node and the non-source nodes reached through them), for marking.
func groupDevices(s *session.Session, n int) []int {
	nl := s.Netlist()
	isSource := func(x int) bool {
		switch nl.NodeKind(x) {
		case switchsim.Power, switchsim.Ground:
			return true
		case switchsim.Input:
			return s.Sim.InputDrive(x) != switchsim.DriveZ
		}
		return false
	}
	seen := map[int]bool{n: true}
	devSeen := map[int]bool{}
	var devs []int
	queue := []int{n}
	if isSource(n) {
		// an input or rail: its group is what it drives directly
		for _, d := range nl.ChannelDevices(n) {
			if s.Sim.Conduction(d) != switchsim.Off && !devSeen[d] {
				devSeen[d] = true
				devs = append(devs, d)
			}
		}
		return devs
	}
	for i := 0; i < len(queue); i++ {
		x := queue[i]
		for _, d := range nl.ChannelDevices(x) {
			if s.Sim.Conduction(d) == switchsim.Off {
				continue
			}
			if !devSeen[d] {
				devSeen[d] = true
				devs = append(devs, d)
			}
			o := nl.Other(d, x)
			if !seen[o] && !isSource(o) {
				seen[o] = true
				queue = append(queue, o)
			}
		}
	}
	return devs
}

// layout sizes the panels for the terminal.
func (m *Model) layout() {
	if m.tooSmall() {
		return
	}
	bodyH := m.h - 3 // header, status, key hints
	lw := min(max(m.w*2/5, 32), 56)
	rw := m.w - lw - 1
	inH := min(m.inputs.Rows(), max(bodyH/3, 3))
	m.inputs.SetSize(lw, inH)
	m.nodes.SetSize(lw, bodyH-inH)
	dh := bodyH - 1 // the view bar
	m.rounds.SetSize(rw, dh)
	m.vectors.SetSize(rw, dh)
	m.why.SetSize(rw, dh)
	m.devices.SetSize(rw, dh)
	m.timeline.SetSize(rw, dh)
	m.log.SetSize(rw, dh)
	m.help.Width = m.w
}

// View draws the screen.
func (m *Model) View() string {
	if m.w <= 0 || m.h <= 0 {
		return ""
	}
	var out string
	if m.tooSmall() {
		out = m.smallView()
	} else {
		out = m.fullView()
	}
	if m.ascii != nil {
		out = toASCII(m.ascii, out)
	}
	return out
}

func (m *Model) smallView() string {
	lines := []string{
		m.th.Bold.Render("railyard"),
		fmt.Sprintf("The terminal is %dx%d;", m.w, m.h),
		fmt.Sprintf("the explorer needs %dx%d.", m.opt.MinWidth, m.opt.MinHeight),
		"Enlarge the window, or press q to quit.",
	}
	for i, l := range lines {
		lines[i] = ansi.Truncate(l, m.w, "")
	}
	return theme.Block(lines, m.w, m.h)
}

func (m *Model) fullView() string {
	var b strings.Builder
	b.Grow(m.w * m.h * 2)
	b.WriteString(m.header())
	b.WriteByte('\n')
	bodyH := m.h - 3
	if m.showHelp {
		b.WriteString(m.helpView(bodyH))
	} else {
		left := strings.Split(m.inputs.View()+"\n"+m.nodes.View(), "\n")
		right := strings.Split(m.viewBar()+"\n"+m.detailView(), "\n")
		bar := m.th.Dim.Render(m.th.G.Bar)
		for i := 0; i < bodyH; i++ {
			if i > 0 {
				b.WriteByte('\n')
			}
			if i < len(left) {
				b.WriteString(left[i])
			}
			b.WriteString(bar)
			if i < len(right) {
				b.WriteString(right[i])
			}
		}
	}
	b.WriteByte('\n')
	b.WriteString(m.statusLine())
	b.WriteByte('\n')
	b.WriteString(m.hints())
	return b.String()
}

func (m *Model) header() string {
	t := m.th
	s := m.sess
	name := s.Design.Name
	if name == "" {
		name = s.DesignPath
	}
	left := t.Header.Render("railyard") + " " + t.Dim.Render(t.G.Bar) + " " + t.Bold.Render(name)
	if d := s.Design.Netlist.Desc; d != "" {
		left += " " + t.Dim.Render(d)
	}
	var right []string
	right = append(right, t.Dim.Render(s.Opts.Mode.String()))
	if n := s.NumSteps(); n > 0 {
		right = append(right, fmt.Sprintf("step %d/%d", s.NextStep(), n))
	}
	if m.lastFail != "" {
		right = append(right, t.FailBadge.Render(fmt.Sprintf(" %s FAIL %s ", t.G.Fail, m.lastFail)))
	} else if failed := m.failedSteps(); failed > 0 {
		right = append(right, t.Fail.Render(fmt.Sprintf("%s %d failed", t.G.Fail, failed)))
	}
	if m.opt.ReadOnly {
		right = append(right, t.Warn.Render("read-only"))
	}
	if m.opt.Banner != "" {
		right = append(right, t.Accent.Render(m.opt.Banner))
	}
	r := strings.Join(right, "  ")
	room := m.w - lipgloss.Width(r) - 1
	return theme.Fit(theme.Fit(left, max(room, 0))+" "+r, m.w)
}

// failedSteps counts the applied steps whose checks failed.
func (m *Model) failedSteps() int {
	n := 0
	for _, e := range m.sess.History() {
		if e.Action.Kind == session.Step && e.Failed() {
			n++
		}
	}
	return n
}

func (m *Model) viewBar() string {
	t := m.th
	labels := make([]string, numViews)
	width := 0
	for v := View(0); v < numViews; v++ {
		name := viewNames[v]
		if v == ViewLog {
			if n := m.log.Last(); n > 0 {
				name += fmt.Sprintf("%s%d", t.G.Warn, n)
			}
		}
		if v == ViewVectors && m.failedSteps() > 0 {
			name += t.G.Fail
		}
		if v == m.view {
			mark := " "
			if m.focus == focusDetail {
				mark = t.G.Cursor
			}
			name = mark + "[" + name + "]"
			labels[v] = t.TitleFocus.Render(name)
		} else {
			labels[v] = t.Dim.Render(name)
		}
		width += lipgloss.Width(name)
	}
	rw := m.w - min(max(m.w*2/5, 32), 56) - 1
	sep := "  "
	if width+2*int(numViews-1)+1 > rw {
		sep = " " // narrow terminals
	}
	return theme.Fit(" "+strings.Join(labels, sep), rw)
}

func (m *Model) detailView() string {
	switch m.view {
	case ViewVectors:
		return m.vectors.View()
	case ViewWhy:
		return m.why.View()
	case ViewDevices:
		return m.devices.View()
	case ViewTimeline:
		return m.timeline.View()
	case ViewLog:
		return m.log.View()
	}
	return m.rounds.View()
}

func (m *Model) statusLine() string {
	if m.prompt != nil {
		return m.prompt.View(m.w)
	}
	if m.statusBad {
		return theme.Fit(m.th.Error.Render(m.th.G.Fail+" "+m.status), m.w)
	}
	return theme.Fit(m.th.Status.Render(m.status), m.w)
}

// hints is the one line of keys for the focused panel, worded shorter than
// in the help view so that it fits 80 columns.
func (m *Model) hints() string {
	var bs []key.Binding
	h := func(k, desc string) { bs = append(bs, key.NewBinding(key.WithKeys(k), key.WithHelp(k, desc))) }
	switch {
	case m.prompt != nil:
		bs = m.prompt.KeyMap.ShortHelp()
		if m.prompt.Kind() == prompt.Jump {
			bs = bs[:2]
		}
	case m.showHelp:
		h("esc", "close")
		h("← →", "pages")
		h("q", "quit")
	case m.nodes.Filtering() || m.devices.Filtering():
		h("enter", "keep filter")
		h("esc", "clear filter")
	default:
		switch m.focus {
		case focusInputs:
			if !m.opt.ReadOnly {
				h("space", "toggle")
				h("0 1 x z", "set")
			}
		case focusNodes:
			h("enter", "why")
			h("/", "filter")
			h("m", "watch")
		case focusDetail:
			switch m.view {
			case ViewRounds:
				h("← →", "replay rounds")
			case ViewVectors:
				h("↑↓", "select")
				h("enter", "go to step")
			case ViewWhy, ViewLog:
				h("↑↓", "scroll")
			case ViewDevices:
				h("/", "filter")
				h("o", "group only")
			case ViewTimeline:
				h("← →", "scroll")
				h("m", "unwatch")
			}
			h("esc", "back")
		}
		if m.focus != focusDetail && m.view == ViewRounds {
			h("← →", "replay")
		}
		if !m.opt.ReadOnly {
			h("n", "next")
			h("p", "back")
		}
		h("tab", "panel")
		h("?", "keys")
		h("q", "quit")
	}
	return theme.Fit(m.help.ShortHelpView(bs), m.w)
}

// helpView lists every key, section by section, each drawn by bubbles
// help as one column; the columns flow across the screen and page with the
// arrows when they do not all fit.
func (m *Model) helpView(h int) string {
	t := m.th
	nav := m.nodes.KeyMap.Nav
	sections := []struct {
		title string
		keys  []key.Binding
	}{
		{"Steps and actions", []key.Binding{m.keys.Next, m.keys.Prev, m.keys.Jump, m.keys.RunToFail, m.keys.RunToEnd, m.keys.Save}},
		{"Views on the right", []key.Binding{m.keys.Rounds, m.keys.Vectors, m.keys.Why, m.keys.Devices, m.keys.Timeline, m.keys.Log}},
		{"Inputs (left, top)", []key.Binding{m.inputs.KeyMap.Toggle, m.inputs.KeyMap.Set0, m.inputs.KeyMap.Set1, m.inputs.KeyMap.SetX, m.inputs.KeyMap.SetZ, m.inputs.KeyMap.Watch}},
		{"Nodes (left)", []key.Binding{m.nodes.KeyMap.Inspect, m.nodes.KeyMap.Filter, m.nodes.KeyMap.Watch}},
		{"Rounds: replay the settle", []key.Binding{m.rounds.KeyMap.Prev, m.rounds.KeyMap.Next, m.rounds.KeyMap.First, m.rounds.KeyMap.Last}},
		{"Vectors", []key.Binding{m.vectors.KeyMap.Jump}},
		{"Devices", []key.Binding{m.devices.KeyMap.Filter, m.devices.KeyMap.GroupOnly}},
		{"Timeline", []key.Binding{m.timeline.KeyMap.Left, m.timeline.KeyMap.Right, m.timeline.KeyMap.Unwatch}},
		{"Save prompt", prompt.DefaultKeyMap().ShortHelp()},
		{"Lists", []key.Binding{nav.Up, nav.Down, nav.PageUp, nav.PageDown, nav.Home, nav.End}},
		{"Everywhere", []key.Binding{m.keys.FocusNext, m.keys.FocusPrev, m.keys.Filter, m.keys.Help, m.keys.Close, m.keys.Quit}},
	}
	var lines []string
	for i, s := range sections {
		if i > 0 {
			lines = append(lines, "")
		}
		lines = append(lines, t.TitleFocus.Render(s.title))
		for _, l := range strings.Split(m.help.FullHelpView([][]key.Binding{s.keys}), "\n") {
			lines = append(lines, " "+l)
		}
	}
	lines = append(lines, "", t.TitleFocus.Render("Reading the screen"),
		" States: 0 1 strong, L H weak or degraded,",
		"         Z floating (keeps its value), X unknown",
		" "+t.G.Changed+" changed by the last settle",
		" "+t.G.Watched+" on the timeline",
		" "+t.G.Fail+" failed check  "+t.G.Pass+" passed",
		" "+t.G.Group+" device in the inspected node's group",
		" Waveforms: "+t.Legend())
	// flow into columns of ch lines, as many side by side as fit
	ch := h - 1
	colW := 40
	if m.w >= 120 {
		colW = m.w / 3
	}
	perPage := max(m.w/colW, 1)
	var cols [][]string
	for len(lines) > 0 {
		n := min(ch, len(lines))
		// do not leave a section title alone at the foot of a column
		if n < len(lines) && n > 1 && lines[n-1] != "" && !strings.HasPrefix(lines[n-1], " ") {
			n--
		}
		cols = append(cols, lines[:n])
		lines = lines[n:]
		for len(lines) > 0 && lines[0] == "" {
			lines = lines[1:]
		}
	}
	pages := (len(cols) + perPage - 1) / perPage
	m.helpPage = min(max(m.helpPage, 0), pages-1)
	first := m.helpPage * perPage
	out := make([]string, h)
	for i := 0; i < ch; i++ {
		var b strings.Builder
		for c := first; c < first+perPage && c < len(cols); c++ {
			cell := ""
			if i < len(cols[c]) {
				cell = cols[c][i]
			}
			b.WriteString(theme.Fit(cell, colW))
		}
		out[i] = b.String()
	}
	foot := "Keys (esc or ? closes)"
	if pages > 1 {
		foot += fmt.Sprintf("  page %d of %d: %s %s turn pages", m.helpPage+1, pages, m.rounds.KeyMap.Prev.Help().Key, m.rounds.KeyMap.Next.Help().Key)
	}
	out[h-1] = t.Dim.Render(foot)
	return theme.Block(out, m.w, h)
}

func plural(n int, w string) string {
	if n == 1 {
		return "1 " + w
	}
	return fmt.Sprintf("%d %ss", n, w)
}

// stepRows words the steps file's rows for the vectors view.
func stepRows(s *session.Session) []stepper.Step {
	if s.Steps == nil {
		return nil
	}
	nl := s.Netlist()
	out := make([]stepper.Step, len(s.Steps.Rows))
	for i, r := range s.Steps.Rows {
		var ap, wa []string
		for c, n := range s.Steps.Apply {
			if c < len(r.Drives) {
				ap = append(ap, nl.NodeName(n)+"="+r.Drives[c].String())
			}
		}
		for c, n := range s.Steps.Check {
			if c < len(r.Wants) && r.Wants[c].String() != "-" {
				wa = append(wa, nl.NodeName(n)+"="+r.Wants[c].String())
			}
		}
		out[i] = stepper.Step{Label: r.Label, Apply: strings.Join(ap, " "), Want: strings.Join(wa, " ")}
	}
	return out
}

func stepsFile(s *session.Session) string {
	if s.StepsPath == "" {
		return ""
	}
	return filepath.Base(s.StepsPath)
}

// asciiReplacer maps every glyph the explorer or its libraries may draw to
// ASCII; toASCII then replaces whatever else is left (a design's
// description in UTF-8) with '?'.
func asciiReplacer() *strings.Replacer {
	// one cell for one cell, so that the widths the layout computed still hold
	return strings.NewReplacer(
		"↑", "^", "↓", "v", "←", "<", "→", ">", "…", "~", "•", "*", "·", ".",
		"─", "-", "│", "|", "▸", ">", "▶", ">", "✓", "+", "✗", "!", "◆", "@", "◇", "#", "▏", "_",
	)
}

func toASCII(r *strings.Replacer, s string) string {
	s = r.Replace(s)
	for i := 0; i < len(s); i++ {
		if s[i] >= 0x80 {
			var b strings.Builder
			for _, c := range s {
				if c < 0x80 {
					b.WriteRune(c)
				} else {
					b.WriteByte('?')
				}
			}
			return b.String()
		}
	}
	return s
}

// Run runs the explorer on the process's terminal (alternate screen) until
// the user quits. With opt.TracePath set, the trace of the whole session is
// written there on quit, atomically.
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
		terr := s.SaveTrace(opt.TracePath)
		m.unlock()
		if terr != nil {
			return errors.Join(err, fmt.Errorf("writing the trace: %w", terr))
		}
	}
	return err
}
