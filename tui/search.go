package tui

// The reachable-state search behind the Audit view: run in the background
// so that drawing never waits for it, cancelled with a context, its
// progress handed to the view as messages.

import (
	"context"
	"errors"
	"fmt"
	"strings"
	"sync"
	"time"

	tea "github.com/charmbracelet/bubbletea"

	"railyard/switchsim"
	"railyard/switchsim/diag"
	"railyard/switchsim/reach"
	"railyard/switchsim/steps"
	"railyard/tui/audit"
)

// progressEvery is how often a running search reports: often enough to
// look alive, seldom enough to cost nothing.
const progressEvery = 150 * time.Millisecond

// searchRun is one search under way. The search's goroutine writes its
// progress and its end here and nudges notify (never blocking: a nudge
// already waiting is enough), and the model's command waits on notify and
// reads them.
type searchRun struct {
	nl     *switchsim.Netlist
	mode   switchsim.Mode
	cancel context.CancelFunc
	notify chan struct{}

	quiet bool // started on its own: its end leaves the status line alone

	mu   sync.Mutex
	prog reach.Progress
	rep  *reach.Report // set when the search has ended
	err  error
}

// searchMsg says that run has news: progress, or its end.
type searchMsg struct{ run *searchRun }

func (r *searchRun) nudge() {
	select {
	case r.notify <- struct{}{}:
	default:
	}
}

// wait is the command that delivers the run's next news.
func (r *searchRun) wait() tea.Msg {
	<-r.notify
	return searchMsg{r}
}

// startSearch starts the search on the session's design and mode, unless
// one runs; it says why when reach refuses the design.
func (m *Model) startSearch() tea.Cmd {
	status, as := m.status, m.statusAs
	cmd := m.beginSearch()
	if m.quietSearch {
		m.status, m.statusAs = status, as
	}
	return cmd
}

// resumeAudit searches again, keeping the status line, when the Audit
// view is shown and the search it showed no longer describes the session
// (another mode, a size tried).
func (m *Model) resumeAudit() tea.Cmd {
	if m.view != ViewAudit || !m.auditStale || m.search != nil {
		return nil
	}
	m.auditStale = false
	m.quietSearch = true
	defer func() { m.quietSearch = false }()
	return m.startSearch()
}

func (m *Model) beginSearch() tea.Cmd {
	if m.search != nil {
		m.note("the search is already running (x in Audit stops it)")
		return nil
	}
	nl, mode := m.sess.Netlist(), m.sess.Options().Mode
	opt := reach.Options{Mode: mode, ProgressEvery: progressEvery}
	if _, err := reach.Check(nl, opt); err != nil {
		m.found, m.foundOf = nil, searchKey{nl, mode}
		m.audit.Set([]string{"The search cannot take this design:", err.Error()}, false, nil, "nothing searched")
		m.note("the reachable-state search cannot take this design: " + err.Error())
		return nil
	}
	ctx, cancel := context.WithCancel(m.ctx)
	r := &searchRun{nl: nl, mode: mode, cancel: cancel, notify: make(chan struct{}, 1), quiet: m.quietSearch}
	opt.Progress = func(p reach.Progress) {
		r.mu.Lock()
		r.prog = p
		r.mu.Unlock()
		r.nudge()
	}
	go func() {
		rep, err := reach.Search(ctx, nl, opt)
		r.mu.Lock()
		r.rep, r.err = rep, err
		if rep == nil && err == nil {
			r.err = errors.New("the search returned nothing")
		}
		r.mu.Unlock()
		cancel()
		r.nudge()
	}()
	m.search = r
	m.found = nil
	m.auditStale = false
	m.audit.Set(m.searchHead(reach.Progress{}, nil), true, nil, "searching...")
	m.say(fmt.Sprintf("searching every reachable state in %s mode (x in Audit stops it)", mode))
	return r.wait
}

// stopSearch cancels the search under way; its findings so far come with
// its end.
func (m *Model) stopSearch() {
	if m.search == nil {
		m.note("no search is running")
		return
	}
	m.search.cancel()
}

// dropSearch forgets the search and its report: the design or the mode
// changed, so they no longer describe the session.
func (m *Model) dropSearch() {
	if m.search != nil {
		m.search.cancel()
		m.search = nil
	}
	m.found = nil
	m.foundOf = searchKey{}
	m.auditStale = true
	m.audit.Set([]string{"The design or the mode changed since the last search."}, false, nil, "a searches again")
}

// searchNews reads what the run has to say; while it runs, the command
// waits for more.
func (m *Model) searchNews(r *searchRun) tea.Cmd {
	if r != m.search {
		return nil // a search that was dropped: its news is stale
	}
	r.mu.Lock()
	prog, rep, err := r.prog, r.rep, r.err
	r.mu.Unlock()
	if rep == nil && err == nil {
		m.audit.Set(m.searchHead(prog, nil), true, nil, "searching...")
		return r.wait
	}
	m.search = nil
	if err != nil {
		m.audit.Set([]string{"The search stopped:", err.Error()}, false, nil, "nothing found")
		m.fail("the search stopped: " + err.Error())
		return nil
	}
	m.found, m.foundOf = rep, searchKey{r.nl, r.mode}
	fs := m.auditFindings(rep)
	empty := "no finding: every reachable state passes"
	if rep.Stopped != reach.Done {
		empty = "no finding in the states explored"
	}
	m.audit.Set(m.searchHead(prog, rep), false, fs, empty)
	if r.quiet {
		return nil // the view's head says it; the status line keeps what it said
	}
	all, failing := m.audit.Findings()
	msg := fmt.Sprintf("search %s: %s", stopWords(rep.Stopped), diag.Count(rep.States, "state"))
	if all > 0 {
		msg += ", " + diag.Count(all, "finding")
	} else {
		msg += ", no finding"
	}
	switch {
	case failing > 0:
		m.fail(msg + fmt.Sprintf(", %d failing check", failing))
	case rep.Stopped != reach.Done:
		m.note(msg + ": not every state was seen")
	default:
		m.say(msg)
	}
	return nil
}

func stopWords(s reach.Stop) string {
	switch s {
	case reach.AtCap:
		return "stopped at the state cap"
	case reach.Canceled:
		return "stopped"
	case reach.AtTimeLimit:
		return "stopped at its time limit"
	}
	return "done"
}

// searchHead words the search for the view's head: how far it got, in
// which mode, and what it found.
func (m *Model) searchHead(p reach.Progress, rep *reach.Report) []string {
	mode := m.sess.Options().Mode
	if rep == nil {
		return []string{
			fmt.Sprintf("%s: searching, %s, %s, %s", mode, diag.Count(p.States, "state"), diag.Count(p.Transitions, "transition"), p.Elapsed.Round(time.Millisecond)),
			"x stops it; what it found so far comes then",
		}
	}
	all, failing := 0, 0
	for _, f := range rep.Findings {
		all++
		if f.Failing() {
			failing++
		}
	}
	head := fmt.Sprintf("%s: %s, %s, %s", mode, diag.Count(rep.States, "state"), diag.Count(rep.Transitions, "transition"),
		stopWords(rep.Stopped))
	found := diag.Count(all, "finding")
	switch {
	case all == 0:
		found = "no finding"
	case failing == 0:
		found += ", none fails check"
	case failing == all && all == 1:
		found += ", which fails check"
	default:
		found += fmt.Sprintf(", %d failing check", failing)
	}
	if rep.Stopped == reach.AtCap {
		found += fmt.Sprintf("; stopped at the cap of %d states: not every state was seen", reach.DefaultMaxStates)
	} else if rep.Stopped != reach.Done {
		found += "; not every state was seen"
	}
	return []string{head, found}
}

// auditFindings words a report's findings for the view (names
// printable), those that fail check first, each part in the order the
// search first met them; m.auditOrder maps the view's rows to the report.
func (m *Model) auditFindings(rep *reach.Report) []audit.Finding {
	out := make([]audit.Finding, 0, len(rep.Findings))
	m.auditOrder = m.auditOrder[:0]
	for i, f := range rep.Findings {
		if f.Failing() {
			m.auditOrder = append(m.auditOrder, i)
		}
	}
	for i, f := range rep.Findings {
		if !f.Failing() {
			m.auditOrder = append(m.auditOrder, i)
		}
	}
	for _, i := range m.auditOrder {
		f := rep.Findings[i]
		where := ""
		switch {
		case f.Node >= 0 && f.Node < len(m.names.Node):
			where = m.names.Node[f.Node]
		case f.Device >= 0 && f.Device < len(m.names.Device):
			where = m.names.Device[f.Device]
		}
		out = append(out, audit.Finding{Failing: f.Failing(), Kind: string(f.Kind), Where: where,
			Message: diag.Printable(f.Message), States: f.States, Transitions: f.Transitions, Moves: f.Moves, Rows: len(f.Steps)})
	}
	return out
}

// findingSteps makes a finding's shortest sequence a steps file: every
// input in every row (the first sets them all 0), and, where the finding
// names a node that is not a rail, a check column for it that wants, on
// the last row, the state the search saw there (as `check --save-steps`
// writes it), so that the last step shows whether the finding is
// reproduced.
func findingSteps(nl *switchsim.Netlist, f reach.Finding) *steps.Steps {
	st := &steps.Steps{Apply: nl.Inputs()}
	col := map[int]int{}
	for c, n := range st.Apply {
		col[n] = c
	}
	var want steps.Want
	if f.Node >= 0 && nl.NodeKind(f.Node) != switchsim.Power && nl.NodeKind(f.Node) != switchsim.Ground {
		if w, ok := steps.ParseWant(f.Got.State.String()); ok {
			st.Check, want = []int{f.Node}, w
		}
	}
	drives := make([]switchsim.Drive, len(st.Apply))
	for i := range drives {
		drives[i] = switchsim.DriveX // what a fresh session starts with; the first row sets every input
	}
	what := string(f.Kind)
	if f.Node >= 0 {
		what += " on " + nl.DisplayName(f.Node)
	} else if f.Device >= 0 {
		what += " on " + nl.DeviceDisplayName(f.Device)
	}
	for i, row := range f.Steps {
		var label []string
		for _, s := range row {
			if c, ok := col[s.Input]; ok {
				drives[c] = s.Drive
				label = append(label, nl.DisplayName(s.Input)+"="+s.Drive.String())
			}
		}
		r := steps.Row{Drives: append([]switchsim.Drive(nil), drives...)}
		switch {
		case i == 0:
			r.Label = "every input 0"
		default:
			r.Label = strings.Join(label, " ")
		}
		if i == len(f.Steps)-1 {
			r.Label += ": " + what
		}
		if len(st.Check) > 0 {
			r.Wants = []steps.Want{steps.WantAny}
			if i == len(f.Steps)-1 {
				r.Wants[0] = want
			}
		}
		st.Rows = append(st.Rows, r)
	}
	return st
}
