// Package tui is railyard's explorer: an interactive terminal interface over
// a session. The root model here only routes messages and lays out the
// panels, each of which is its own small model in a package below: the input
// bank and the node board on the left, and on the right one detail view at a
// time (rounds, vectors, why, devices, timeline, log, audit).
//
// A Model is built from a session and a terminal size alone, with no globals
// and no direct use of the process's terminal, so a server can run one per
// connection; Run is the entry point for a real terminal.
package tui

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"

	"github.com/charmbracelet/bubbles/help"
	"github.com/charmbracelet/bubbles/key"
	tea "github.com/charmbracelet/bubbletea"
	"github.com/charmbracelet/lipgloss"

	"railyard/switchsim"
	"railyard/switchsim/diag"
	"railyard/switchsim/outfile"
	"railyard/switchsim/reach"
	"railyard/switchsim/session"
	"railyard/switchsim/trace"
	"railyard/tui/audit"
	"railyard/tui/devices"
	"railyard/tui/inputs"
	"railyard/tui/logpanel"
	"railyard/tui/nodes"
	"railyard/tui/panel"
	"railyard/tui/prompt"
	"railyard/tui/rounds"
	"railyard/tui/stepper"
	"railyard/tui/theme"
	"railyard/tui/timeline"
	"railyard/tui/why"
)

// SaveKind is what the save key writes: the trace or a VCD.
type SaveKind = panel.SaveKind

const (
	SaveTrace  = panel.SaveTrace
	SaveVCD    = panel.SaveVCD
	SaveDesign = panel.SaveDesign
)

// SaveFunc keeps a file for the explorer's owner: it is given what to save
// and a function that writes the file's content, puts it where the owner
// chooses under a name the owner chooses, and returns that name as the
// user should read it (never a path of the owner's own that the user must
// not see), or an error to show.
type SaveFunc func(kind SaveKind, write func(io.Writer) error) (shown string, err error)

// Notice is a message the explorer's owner sends to tell the user what the
// explorer cannot see for itself (a server: the session's trace reached
// the server's cap). Text goes on the status line as a note; Mark, when
// set, stays in the header from then on, so that it is seen after the
// status line has moved on.
type Notice struct{ Text, Mark string }

// Options configure the explorer.
type Options struct {
	// TracePath, when set, is where Run writes the trace on quit (the
	// session records from the start) and the save prompt's default.
	TracePath string
	ASCII     bool // no glyph outside ASCII, for poor remote terminals
	NoColor   bool // no colour (NO_COLOR); glyphs and letters carry every meaning
	Banner    string
	// Renderer is the terminal's lipgloss renderer (a server passes one per
	// connection so that each gets its own colour profile); nil: the default.
	Renderer *lipgloss.Renderer
	// Save, when set, is where the save key's files go (a server's folder:
	// see SaveInDir). The key then offers the trace or a VCD, with no path
	// prompt: the user chooses what to save, never where.
	Save SaveFunc
	// MinWidth and MinHeight are the smallest size drawn (0: 80 x 24).
	MinWidth, MinHeight int
	// Context is the explorer's life (nil: until it quits): work it runs in
	// the background (the reachable-state search) stops when it is done, as
	// it does when the user quits. A server passes the connection's.
	Context context.Context
}

// SaveInDir is a SaveFunc that writes into the folder dir, atomically,
// under the file name name gives for the kind (a plain name: no path
// separator, not . or ..), and shows the user that name.
func SaveInDir(dir string, name func(SaveKind) string) SaveFunc {
	return func(kind SaveKind, write func(io.Writer) error) (string, error) {
		n := name(kind)
		if n == "" || n == "." || n == ".." || strings.ContainsAny(n, `/\`) || filepath.Base(n) != n {
			return "", fmt.Errorf("%q is not a plain file name", n)
		}
		if err := outfile.Write(filepath.Join(dir, n), nil, write); err != nil {
			return "", fmt.Errorf("could not write %s", n) // the folder is the owner's, not the user's
		}
		return n, nil
	}
}

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
	ViewAudit
	numViews
)

var viewNames = [numViews]string{"Rounds", "Vectors", "Why", "Devices", "Timeline", "Log", "Audit"}

// shortNames are the names of the views not shown where the full names
// do not fit (80 columns).
var shortNames = [numViews]string{"Rnds", "Vecs", "Why", "Devs", "Time", "Log", "Audit"}

func (v View) String() string { return viewNames[v] }

// status kinds: what the status line shows the last key did.
const (
	statusOK   = iota // done
	statusNote        // nothing done, and why (information, no failure mark)
	statusFail        // a failed check or an error
)

// Model is the explorer's root model: it routes messages to the panels,
// acts on their intents (package panel) and lays them out.
type Model struct {
	sess *session.Session
	opt  Options
	th   *theme.Theme
	keys KeyMap
	help help.Model

	names    *panel.Names
	inputs   inputs.Model
	nodes    nodes.Model
	rounds   rounds.Model
	vectors  stepper.Model
	why      why.Model
	devices  devices.Model
	timeline timeline.Model
	log      logpanel.Model
	audit    audit.Model
	prompt   prompt.Model

	w, h     int
	focus    int
	view     View
	showHelp bool
	helpPage int
	status   string
	statusAs int
	mark     string // the owner's mark in the header (Notice)

	watched  []int // timeline order
	watchSet []bool
	inspect  int // the node the why view and the device marks follow
	lastFail string
	written  map[string]bool // files this model saved: replacing them needs no question

	ctx     context.Context // the explorer's life: background work stops with it
	cancel  context.CancelFunc
	search  *searchRun    // the reachable-state search under way, or nil
	found   *reach.Report // the last search's report, while it describes the session
	foundOf searchKey     // the netlist and mode it was of
	// auditOrder maps the Audit view's rows to the report's findings
	auditOrder []int
	// findingSteps names the steps when they are a finding's sequence
	findingSteps string
	auditStale   bool // the search shown was dropped: search again when Audit is shown
	quietSearch  bool // a search started on its own: the status line keeps what it says
	designSaved  bool // the design with the sizes tried in force was saved as .sw (SavedAs)
	// copied from the session, printable, for View
	designName, designDesc string
	numSteps, nextStep     int
	failed                 int
	ascii                  *strings.Replacer
}

// searchKey is what a search's report is of: a netlist in a mode.
type searchKey struct {
	nl   *switchsim.Netlist
	mode switchsim.Mode
}

// New builds the explorer on a session for a terminal of width x height.
func New(s *session.Session, width, height int, opt Options) *Model {
	th := theme.New(opt.Renderer, opt.NoColor, opt.ASCII)
	nl := s.Netlist()
	m := &Model{sess: s, opt: opt, th: th, keys: DefaultKeyMap(), w: width, h: height, inspect: -1,
		written: map[string]bool{}}
	if trace.Of(s) == nil && s.Actions() == 1 {
		// The save key needs the session's trace: record it from the start
		// (an unnamed spool in the temporary folder) unless the caller does.
		trace.Start(s, "", trace.Options{})
	}
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
	// every string from a file is made printable here or in sync, once
	m.names = panel.NewNames(nl)
	m.designName = diag.Printable(s.Design().Name)
	if m.designName == "" {
		m.designName = diag.Printable(s.DesignPath())
	}
	m.designDesc = diag.Printable(s.Design().Desc)

	m.inputs = inputs.New(nl.Inputs(), m.names, inputs.DefaultStyles(th))
	m.nodes = nodes.New(nl, m.names, nodes.DefaultStyles(th))
	m.rounds = rounds.New(m.names, rounds.DefaultStyles(th))
	m.vectors = stepper.New(diag.Printable(stepsFile(s)), stepRows(s, m.names), stepper.DefaultStyles(th))
	m.why = why.New(nl, m.names, why.DefaultStyles(th))
	m.devices = devices.New(nl, m.names, devices.DefaultStyles(th))
	m.timeline = timeline.New(m.names, timeline.DefaultStyles(th))
	m.log = logpanel.New(logpanel.DefaultStyles(th))
	m.audit = audit.New(audit.DefaultStyles(th))
	parent := opt.Context
	if parent == nil {
		parent = context.Background()
	}
	m.ctx, m.cancel = context.WithCancel(parent)

	m.watchSet = make([]bool, nl.NumNodes())
	for _, n := range firstWatched(s) {
		m.watchSet[n] = true
		m.watched = append(m.watched, n)
	}
	if len(nl.Inputs()) == 0 {
		m.focus = focusNodes
	}
	m.applyFocus()
	m.sync()
	m.status = m.welcome()
	m.layout()
	return m
}

// firstWatched is what the timeline watches from the start, so that it is
// never empty and shows what matters first: the outputs, the nodes the
// steps file checks, then the inputs, twelve at most.
func firstWatched(s *session.Session) []int {
	nl := s.Netlist()
	var cands []int
	cands = append(cands, nl.Outputs()...)
	if s.Steps() != nil {
		cands = append(cands, s.Steps().Check...)
		cands = append(cands, s.Steps().Apply...)
	}
	cands = append(cands, nl.Inputs()...)
	seen := map[int]bool{}
	var out []int
	for _, n := range cands {
		if len(out) == 12 {
			break
		}
		if !seen[n] {
			seen[n] = true
			out = append(out, n)
		}
	}
	return out
}

// Session returns the session the model explores.
func (m *Model) Session() *session.Session { return m.sess }

// Options returns the options in force.
func (m *Model) Options() Options { return m.opt }

// ShownView is the detail view on the right.
func (m *Model) ShownView() View { return m.view }

// Status is the message on the status line.
func (m *Model) Status() string { return m.status }

func (m *Model) welcome() string {
	msg := "n applies the next step; ? lists every key"
	if len(m.sess.Netlist().Inputs()) > 0 {
		msg = "space toggles the selected input; n applies the next step; ? lists every key"
	}
	if m.opt.TracePath != "" && m.opt.Save == nil {
		msg += "; q saves the trace to " + diag.Printable(m.opt.TracePath)
	}
	return msg
}

// Init starts nothing: the model is ready as built.
func (m *Model) Init() tea.Cmd { return nil }

// Close stops the explorer's background work (a search under way). Run
// calls it when the program ends; an owner running the model itself
// calls it when done with it, or passes Options.Context.
func (m *Model) Close() { m.cancel() }

// Update routes a message: keys to the focused panel (or the prompt, the
// help, a filter being typed), and the panels' intents to the actions.
func (m *Model) Update(msg tea.Msg) (tea.Model, tea.Cmd) {
	switch msg := msg.(type) {
	case tea.WindowSizeMsg:
		m.w, m.h = msg.Width, msg.Height
		m.layout()
	case tea.KeyMsg:
		return m, m.key(msg)
	case panel.SetInput:
		d := int(msg.Drive)
		if msg.Toggle {
			d = -1
		}
		m.change(func() { m.setInput(msg.Node, d) })
	case panel.Watch:
		m.toggleWatch(msg.Node)
	case panel.Inspect:
		m.inspectNode(msg.Node)
	case panel.JumpTo:
		m.change(func() { m.jump(msg.Row) })
	case panel.Save:
		m.save(msg)
	case Notice:
		m.note(msg.Text)
		if msg.Mark != "" {
			m.mark = diag.Printable(msg.Mark)
		}
	case panel.Canceled:
		m.say(msg.What)
	case panel.Note:
		m.note(msg.Text)
	case panel.AskSize:
		m.openSize(msg.Device)
	case panel.Resize:
		m.resize(msg.Device, msg.W, msg.L)
		return m, m.resumeAudit()
	case panel.Search:
		if msg.Stop {
			m.stopSearch()
			return m, nil
		}
		return m, m.startSearch()
	case panel.OpenFinding:
		m.openFinding(msg.Index)
	case searchMsg:
		return m, m.searchNews(msg.run)
	}
	return m, nil
}

// filtering reports whether a list's filter is being typed (it takes every key).
func (m *Model) filtering() bool {
	return m.inputs.Filtering() || m.nodes.Filtering() || m.devices.Filtering()
}

func (m *Model) tooSmall() bool { return m.w < m.opt.MinWidth || m.h < m.opt.MinHeight }

func (m *Model) key(k tea.KeyMsg) tea.Cmd {
	km := m.keys
	if k.Type == tea.KeyCtrlC {
		return m.quit()
	}
	if m.tooSmall() {
		if key.Matches(k, km.Quit) {
			return m.quit()
		}
		return nil
	}
	var cmd tea.Cmd
	if m.prompt.Active() {
		m.prompt, cmd = m.prompt.Update(k)
		return cmd
	}
	// Keys typed faster than the terminal is read (a burst over SSH, a key
	// held down) arrive as one message of several runes. Outside a text
	// field each is a command of its own, taken in order: a rune that opens
	// a prompt or a filter hands the rest to it.
	if k.Type == tea.KeyRunes && len(k.Runes) > 1 && !k.Paste && !m.filtering() {
		for i, r := range k.Runes {
			cmd := m.key(tea.KeyMsg{Type: tea.KeyRunes, Runes: []rune{r}, Alt: k.Alt})
			if cmd != nil && i+1 < len(k.Runes) {
				// The key sent an intent: the rest waits until it is taken.
				rest := tea.KeyMsg{Type: tea.KeyRunes, Runes: k.Runes[i+1:], Alt: k.Alt}
				return tea.Sequence(cmd, func() tea.Msg { return rest })
			}
			if cmd != nil {
				return cmd
			}
		}
		return nil
	}
	if m.showHelp {
		switch {
		case key.Matches(k, km.Quit):
			return m.quit()
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
	switch {
	case m.inputs.Filtering():
		m.inputs, cmd = m.inputs.Update(k)
		m.followSelection()
		return cmd
	case m.nodes.Filtering():
		m.nodes, cmd = m.nodes.Update(k)
		m.followSelection()
		return cmd
	case m.devices.Filtering():
		m.devices, cmd = m.devices.Update(k)
		return cmd
	}

	switch {
	case key.Matches(k, km.Quit):
		return m.quit()
	case key.Matches(k, km.Help):
		m.showHelp, m.helpPage = true, 0
	case key.Matches(k, km.Close):
		m.escape()
	case key.Matches(k, km.FocusNext):
		m.focus = (m.focus + 1) % numFocus
		m.applyFocus()
	case key.Matches(k, km.FocusPrev):
		m.focus = (m.focus + numFocus - 1) % numFocus
		m.applyFocus()
	case key.Matches(k, km.Next):
		m.change(m.next)
	case key.Matches(k, km.Prev):
		m.change(m.back)
	case key.Matches(k, km.Jump):
		m.openJump()
	case key.Matches(k, km.RunToFail):
		m.change(func() { m.run(true) })
	case key.Matches(k, km.RunToEnd):
		m.change(func() { m.run(false) })
	case key.Matches(k, km.Save):
		m.openSave()
	case key.Matches(k, km.Filter):
		m.startFilter()
	case key.Matches(k, km.Rounds):
		m.show(ViewRounds)
	case key.Matches(k, km.Vectors):
		m.show(ViewVectors)
	case key.Matches(k, km.Why) && m.focus != focusNodes:
		m.inspectSelected()
	case key.Matches(k, km.Devices):
		m.show(ViewDevices)
	case key.Matches(k, km.Timeline):
		m.show(ViewTimeline)
	case key.Matches(k, km.Log):
		m.show(ViewLog)
	case key.Matches(k, km.Corner):
		m.change(m.nextCorner)
	case key.Matches(k, km.Audit):
		return m.showAudit()
	case key.Matches(k, km.Mode):
		m.switchMode()
		return m.resumeAudit()
	case key.Matches(k, m.devices.KeyMap.Size) && (m.view != ViewDevices || m.focus != focusDetail):
		m.note("W tries a size on a transistor's row of Devices: d shows them, tab moves there")
	case m.focus != focusDetail && m.sideways(k):
		// left and right replay the rounds (or scroll the timeline) from
		// the lists too, which have no use for them
		return m.detailKey(k)
	default:
		return m.panelKey(k)
	}
	return nil
}

// sideways reports whether k is a left or right key of the shown view.
func (m *Model) sideways(k tea.KeyMsg) bool {
	switch m.view {
	case ViewRounds:
		return key.Matches(k, m.rounds.KeyMap.Prev, m.rounds.KeyMap.Next)
	case ViewTimeline:
		return key.Matches(k, m.timeline.KeyMap.Left, m.timeline.KeyMap.Right)
	}
	return false
}

// panelKey gives a key to the focused panel.
func (m *Model) panelKey(k tea.KeyMsg) tea.Cmd {
	var cmd tea.Cmd
	switch m.focus {
	case focusInputs:
		m.inputs, cmd = m.inputs.Update(k)
		m.followSelection()
	case focusNodes:
		m.nodes, cmd = m.nodes.Update(k)
		m.followSelection()
	default:
		cmd = m.detailKey(k)
	}
	return cmd
}

// detailKey gives a key to the shown detail view.
func (m *Model) detailKey(k tea.KeyMsg) tea.Cmd {
	var cmd tea.Cmd
	switch m.view {
	case ViewRounds:
		m.rounds, cmd = m.rounds.Update(k)
	case ViewVectors:
		m.vectors, cmd = m.vectors.Update(k)
	case ViewWhy:
		m.why, cmd = m.why.Update(k)
	case ViewDevices:
		m.devices, cmd = m.devices.Update(k)
	case ViewTimeline:
		m.timeline, cmd = m.timeline.Update(k)
	case ViewLog:
		m.log, cmd = m.log.Update(k)
	case ViewAudit:
		m.audit, cmd = m.audit.Update(k)
	}
	return cmd
}

// quit stops the background work and ends the program.
func (m *Model) quit() tea.Cmd {
	m.cancel()
	return tea.Quit
}

// showAudit shows the Audit view with the focus on its list, starting the
// search when it has not run on the design and mode in force; pressed
// again there, it runs the search again.
func (m *Model) showAudit() tea.Cmd {
	again := m.view == ViewAudit
	m.show(ViewAudit)
	// the list is what the view is for: enter must open a finding, not
	// toggle the input under the cursor
	m.focus = focusDetail
	m.applyFocus()
	if m.search != nil {
		return nil
	}
	if m.found == nil || again || m.foundOf != (searchKey{m.sess.Netlist(), m.sess.Options().Mode}) {
		return m.startSearch()
	}
	return nil
}

// escape closes the innermost thing open: a filter, then the detail focus.
func (m *Model) escape() {
	switch {
	case m.view == ViewDevices && m.devices.ClearFilter():
		m.say("device filter cleared")
	case m.focus == focusInputs && m.inputs.ClearFilter():
		m.say("input filter cleared")
		m.followSelection()
	case m.nodes.ClearFilter():
		m.say("node filter cleared")
		m.followSelection()
	case m.focus == focusDetail:
		m.focus = focusNodes
		m.applyFocus()
	}
}

// startFilter filters the focused list: the inputs, the devices (when
// their view has the focus), else the nodes.
func (m *Model) startFilter() {
	switch {
	case m.focus == focusInputs:
		m.inputs, _ = m.inputs.Update(tea.KeyMsg{Type: tea.KeyRunes, Runes: []rune{'/'}})
		return
	case m.view == ViewDevices && m.focus == focusDetail:
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

// panels lists every panel by its focus part, the lists first.
func (m *Model) panels() []panel.Focuser {
	return []panel.Focuser{&m.inputs, &m.nodes, &m.rounds, &m.vectors, &m.why, &m.devices, &m.timeline, &m.log, &m.audit}
}

func (m *Model) applyFocus() {
	for i, p := range m.panels() {
		if i == m.focus || (i >= focusDetail && m.focus == focusDetail) {
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
		m.note("no node selected: move to one on the board first")
		return
	}
	m.inspectNode(n)
}

func (m *Model) inspectNode(n int) {
	if n < 0 || n >= m.sess.Netlist().NumNodes() {
		return
	}
	m.inspect = n
	m.view = ViewWhy
	m.explain()
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
	m.explain()
}

func (m *Model) toggleWatch(n int) {
	if n < 0 || n >= len(m.watchSet) {
		return
	}
	name := m.names.Node[n]
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
// written there on quit, atomically, and a line on the terminal says where.
func Run(s *session.Session, opt Options) error {
	if os.Getenv("NO_COLOR") != "" {
		opt.NoColor = true
	}
	return runProgram(s, opt, 0, 0, os.Stdout, tea.WithAltScreen()) // the terminal reports its size at start
}

// runProgram is Run on any input and output (tests give it pipes and a size);
// note is where the line about the trace goes.
func runProgram(s *session.Session, opt Options, w, h int, note io.Writer, popts ...tea.ProgramOption) error {
	m := New(s, w, h, opt)
	p := tea.NewProgram(m, popts...)
	_, err := p.Run()
	m.Close()
	s = m.Session() // another mode, a size tried, a corner or a finding's steps make a new one
	if opt.TracePath != "" {
		saved, terr := trace.Save(s, opt.TracePath)
		if terr != nil {
			return errors.Join(err, fmt.Errorf("writing the trace: %w", terr))
		}
		shown := diag.Printable(opt.TracePath)
		fmt.Fprintf(note, "railyard: trace of %s saved to %s; railyard replay %s repeats it\n",
			diag.Count(saved.Actions, "action"), shown, shown)
		if saved.Skipped > 0 {
			fmt.Fprintf(note, "railyard: %s: the last %d actions were not written\n", saved.Why, saved.Skipped)
		}
	}
	return err
}
