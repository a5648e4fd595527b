// Package rounds is the explorer's settle view: what the last change did,
// round by round. Each node the settle touched is a row and each round a
// column, so the spread of a change reads left to right; the replay cursor
// walks the rounds one at a time, showing the settle as it stood after that
// round with the nodes it changed marked, and (physical mode) each node's
// volts as of that round and the delay estimate of its change.
package rounds

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"github.com/charmbracelet/bubbles/key"
	tea "github.com/charmbracelet/bubbletea"
	"github.com/charmbracelet/lipgloss"

	"railyard/switchsim"
	"railyard/switchsim/diag"
	"railyard/tui/listing"
	"railyard/tui/panel"
	"railyard/tui/theme"
)

// KeyMap are the view's keys.
type KeyMap struct {
	Prev, Next, First, Last key.Binding
	Up, Down                key.Binding
}

// DefaultKeyMap: left and right replay the rounds.
func DefaultKeyMap() KeyMap {
	return KeyMap{
		Prev:  key.NewBinding(key.WithKeys("left", ","), key.WithHelp("←", "replay: round back")),
		Next:  key.NewBinding(key.WithKeys("right", "."), key.WithHelp("→", "replay: round on")),
		First: key.NewBinding(key.WithKeys("home"), key.WithHelp("home", "replay: before round 1")),
		Last:  key.NewBinding(key.WithKeys("end"), key.WithHelp("end", "replay: settled")),
		Up:    key.NewBinding(key.WithKeys("up", "k"), key.WithHelp("↑/k", "scroll")),
		Down:  key.NewBinding(key.WithKeys("down", "j"), key.WithHelp("↓/j", "scroll")),
	}
}

// ShortHelp and FullHelp feed the help view.
func (k KeyMap) ShortHelp() []key.Binding { return []key.Binding{k.Prev, k.Next} }
func (k KeyMap) FullHelp() [][]key.Binding {
	return [][]key.Binding{{k.Prev, k.Next, k.First, k.Last}, {k.Up, k.Down}}
}

// Styles draw the view.
type Styles struct {
	Theme   *theme.Theme
	Heading lipgloss.Style
	Header  lipgloss.Style
	Current lipgloss.Style // the replayed round's column head
	Changed lipgloss.Style
	Dim     lipgloss.Style
	Warn    lipgloss.Style
}

// DefaultStyles takes the view's styles from the theme.
func DefaultStyles(t *theme.Theme) Styles {
	return Styles{Theme: t, Heading: t.Bold, Header: t.Dim, Current: t.Accent.Bold(true), Changed: t.Changed, Dim: t.Dim, Warn: t.Warn}
}

// Change is one node change in one round (1-based).
type Change struct {
	Round int
	Node  int
	State switchsim.State
	Volts float64 // the node's volts after the change; NaN in ideal mode
	Delay float64 // Elmore delay estimate of the change, seconds; NaN where none
}

// Settle is what one action did, as the view needs it.
type Settle struct {
	Title      string // the action, worded
	Rounds     int
	Changes    []Change              // round after round
	Before     []switchsim.NodeState // every node before the action (nil: unknown)
	Oscillated bool
	// Unsettled: the unit-delay rounds reached the round limit without
	// settling; Decided: the engine's race analysis then set the last
	// round's states (session.Event's fields of the same names), so the
	// grid shows the propagation and its last column the analysis's verdict.
	Unsettled, Decided bool
	// Slowest is the settle's slowest chain of changes (indices into
	// Changes, the first change first) and Arrival its summed delay
	// estimate; nil and NaN where there are no delays (ideal mode).
	Slowest []int
	Arrival float64
}

// nodeRow is one node of the grid.
type nodeRow struct {
	node   int
	first  int            // first round it changed in
	at     map[int]Change // round -> its change in that round
	before switchsim.NodeState
	known  bool // before is known
}

// Model is the settle view.
type Model struct {
	KeyMap KeyMap
	Styles Styles

	names   *panel.Names
	s       Settle
	phys    bool // the changes carry volts: show the volts and delay columns
	rows    []nodeRow
	perRnd  []int // changes per round
	replay  int   // 0: before round 1; s.Rounds: settled
	scroll  listing.Cursor
	focused bool
	w, h    int
	nameW   int
	labels  []string // the rows' names fitted to nameW
}

// New makes an empty view.
func New(names *panel.Names, st Styles) Model {
	return Model{KeyMap: DefaultKeyMap(), Styles: st, names: names}
}

// SetSize gives the view its cells.
func (m *Model) SetSize(w, h int) {
	m.w, m.h = w, h
	m.fit()
}

// fit sets the scroll window to the lines the rows get: the view's height
// less the heading lines and the foot.
func (m *Model) fit() {
	m.scroll.SetHeight(m.h - len(m.heading()) - 2)
	m.scroll.SetLen(len(m.rows))
	m.nameW = min(max(m.maxName(), 4), max(m.w/3, 8))
	all := make([]string, len(m.rows))
	for i, r := range m.rows {
		all[i] = m.names.Node[r.node]
	}
	m.labels = listing.Shorten(all, m.nameW, m.Styles.Theme.G.Ellipsis)
}

// Focus and Blur tell the view whether keys go to it.
func (m *Model) Focus()       { m.focused = true }
func (m *Model) Blur()        { m.focused = false }
func (m Model) Focused() bool { return m.focused }

// Set shows a new settle, replayed to its end.
func (m *Model) Set(s Settle) {
	m.s = s
	m.phys = false
	m.perRnd = make([]int, s.Rounds+1)
	idx := map[int]int{}
	m.rows = m.rows[:0]
	for _, c := range s.Changes {
		if !math.IsNaN(c.Volts) {
			m.phys = true
		}
		if c.Round >= 0 && c.Round < len(m.perRnd) {
			m.perRnd[c.Round]++
		}
		i, ok := idx[c.Node]
		if !ok {
			r := nodeRow{node: c.Node, first: c.Round, at: map[int]Change{}}
			if c.Node < len(s.Before) {
				r.before, r.known = s.Before[c.Node], true
			}
			i = len(m.rows)
			idx[c.Node] = i
			m.rows = append(m.rows, r)
		}
		m.rows[i].at[c.Round] = c
	}
	sort.SliceStable(m.rows, func(i, j int) bool {
		if m.rows[i].first != m.rows[j].first {
			return m.rows[i].first < m.rows[j].first
		}
		return m.rows[i].node < m.rows[j].node
	})
	m.replay = s.Rounds
	m.scroll.Offset = 0
	m.fit()
}

// Replay is the round the view shows (0: before the first round).
func (m Model) Replay() int { return m.replay }

// ChangedIn lists the nodes changed in round r.
func (m Model) ChangedIn(r int) []int {
	var out []int
	for _, row := range m.rows {
		if _, ok := row.at[r]; ok {
			out = append(out, row.node)
		}
	}
	return out
}

// Update handles the replay keys. They work whether or not the view is
// focused (the root sends them here when the view is shown).
func (m Model) Update(msg tea.Msg) (Model, tea.Cmd) {
	k, ok := msg.(tea.KeyMsg)
	if !ok {
		return m, nil
	}
	km := m.KeyMap
	h := max(m.scroll.Height, 1)
	switch {
	case key.Matches(k, km.Prev):
		m.replay = max(m.replay-1, 0)
	case key.Matches(k, km.Next):
		m.replay = min(m.replay+1, m.s.Rounds)
	case key.Matches(k, km.First):
		m.replay = 0
	case key.Matches(k, km.Last):
		m.replay = m.s.Rounds
	case key.Matches(k, km.Up):
		m.scroll.Offset = max(m.scroll.Offset-1, 0)
		return m, nil
	case key.Matches(k, km.Down):
		m.scroll.Offset = min(m.scroll.Offset+1, max(len(m.rows)-h, 0))
		return m, nil
	default:
		return m, nil
	}
	m.follow()
	return m, nil
}

// follow scrolls so that a node changed in the replayed round is shown.
func (m *Model) follow() {
	h := max(m.scroll.Height, 1)
	for i, r := range m.rows {
		if _, ok := r.at[m.replay]; ok {
			if i < m.scroll.Offset || i >= m.scroll.Offset+h {
				m.scroll.Offset = min(i, max(len(m.rows)-h, 0))
			}
			return
		}
	}
}

// heading is the lines above the grid's column heads.
func (m Model) heading() []string {
	st, t := m.Styles, m.Styles.Theme
	g := t.G
	s := m.s
	lines := []string{st.Heading.Render(t.Clip(s.Title, m.w))}
	switch {
	case s.Oscillated:
		lines = append(lines, st.Warn.Render(t.Clip(g.Warn+" oscillated: past the round limit the nodes still changing were set to X", m.w)))
	case s.Decided:
		lines = append(lines, st.Warn.Render(t.Clip(fmt.Sprintf("%s the rounds did not settle: race analysis decided round %d", g.Warn, s.Rounds), m.w)))
	case s.Unsettled:
		lines = append(lines, st.Warn.Render(t.Clip(g.Warn+" the rounds reached the round limit without settling", m.w)))
	}
	if s.Rounds == 0 || len(m.rows) == 0 {
		return lines
	}
	var pr strings.Builder
	fmt.Fprintf(&pr, "%s, %s; per round:", diag.Count(s.Rounds, "round"), diag.Count(len(s.Changes), "change"))
	for r := 1; r <= s.Rounds; r++ {
		item := fmt.Sprintf(" %d", m.perRnd[r])
		if pr.Len()+len(item) > m.w-2 {
			pr.WriteString(" " + g.Ellipsis)
			break
		}
		pr.WriteString(item)
	}
	lines = append(lines, st.Dim.Render(pr.String()))
	if len(s.Slowest) > 0 {
		path := make([]string, len(s.Slowest))
		for i, c := range s.Slowest {
			path[i] = m.names.Node[s.Changes[c].Node]
		}
		lines = append(lines, st.Dim.Render(t.Clip(fmt.Sprintf("slowest chain %s (Elmore): %s",
			panel.Seconds(s.Arrival), strings.Join(path, " "+g.Arrow+" ")), m.w)))
	}
	return lines
}

// View draws the view in its w x h cells.
func (m Model) View() string {
	st, t := m.Styles, m.Styles.Theme
	g := t.G
	s := m.s
	lines := m.heading()
	if s.Rounds == 0 || len(m.rows) == 0 {
		lines = append(lines, st.Dim.Render("No node changed in this settle."))
		return theme.Block(lines, m.w, m.h)
	}
	nameW := m.nameW
	tail := 0 // the volts and delay columns
	if m.phys {
		tail = 1 + 5 + 1 + 8
	}
	// round columns shown: a window of rounds around the replay cursor
	cols := max((m.w-nameW-2-4-5-tail)/2, 1)
	first := 1
	if s.Rounds > cols {
		first = min(max(m.replay-cols/2, 1), s.Rounds-cols+1)
	}
	last := min(first+cols-1, s.Rounds)

	var hd strings.Builder
	fmt.Fprintf(&hd, "  %-*s %-3s ", nameW, "node", "was")
	for r := first; r <= last; r++ {
		label := fmt.Sprintf("%-2d", r%100)
		if r == m.replay {
			hd.WriteString(st.Current.Render(label))
		} else {
			hd.WriteString(label)
		}
	}
	hd.WriteString(" now")
	if m.phys {
		hd.WriteString(" volts    delay")
	}
	lines = append(lines, hd.String())

	h := max(m.scroll.Height, 1)
	lo, hi := m.scroll.Offset, min(m.scroll.Offset+h, len(m.rows))
	for i, r := range m.rows[lo:hi] {
		var b strings.Builder
		_, hit := r.at[m.replay]
		if hit && m.replay > 0 {
			b.WriteString(t.Mark("rounds.changed", st.Changed, g.Changed))
		} else {
			b.WriteByte(' ')
		}
		b.WriteByte(' ')
		name := theme.Pad(t.Clip(m.label(lo+i), nameW), nameW)
		if hit && m.replay > 0 {
			name = st.Changed.Render(name)
		}
		b.WriteString(name)
		b.WriteByte(' ')
		if r.known {
			b.WriteString(r.before.State.String() + "   ")
		} else {
			b.WriteString("?   ")
		}
		// the latest change up to the replayed round: the state, volts and
		// delay as of that round
		var now *Change
		for rd := 1; rd <= s.Rounds; rd++ {
			c, ok := r.at[rd]
			if ok && rd <= m.replay {
				now = &c
			}
			if rd < first || rd > last {
				continue
			}
			switch {
			case rd > m.replay:
				b.WriteString("  ")
			case ok && rd == m.replay:
				b.WriteString(t.StateLetter(c.State) + " ")
			case ok:
				b.WriteString(c.State.String() + " ")
			default:
				b.WriteString(g.Cell + " ")
			}
		}
		switch {
		case now != nil:
			b.WriteString(" " + t.StateLetter(now.State))
		case r.known:
			b.WriteString(" " + t.StateLetter(r.before.State))
		default:
			b.WriteString(" ?")
		}
		if m.phys {
			v, d := math.NaN(), math.NaN()
			if now != nil {
				v, d = now.Volts, now.Delay
			} else if r.known {
				v = r.before.Volts
			}
			fmt.Fprintf(&b, "   %5s %8s", panel.Volts(v), panel.Seconds(d))
		}
		lines = append(lines, b.String())
	}
	foot := fmt.Sprintf("replay round %d/%d", m.replay, s.Rounds)
	switch {
	case m.replay == 0:
		foot += ": before round 1"
	case m.replay == s.Rounds && s.Decided:
		foot += ": decided by race analysis"
	case m.replay == s.Rounds && (s.Unsettled || s.Oscillated):
		foot += ": at the round limit"
	case m.replay == s.Rounds:
		foot += ": settled"
	}
	if m.replay > 0 {
		foot += fmt.Sprintf(", %s %d changed", g.Changed, m.perRnd[m.replay])
	}
	if hi < len(m.rows) || lo > 0 {
		foot += fmt.Sprintf(", rows %d-%d of %d", lo+1, hi, len(m.rows))
	}
	for len(lines) < m.h-1 {
		lines = append(lines, "")
	}
	lines = append(lines, st.Dim.Render(t.Clip(foot, m.w)))
	return theme.Block(lines, m.w, m.h)
}

func (m Model) label(i int) string {
	if i < len(m.labels) {
		return m.labels[i]
	}
	return m.names.Node[m.rows[i].node]
}

func (m Model) maxName() int {
	w := 0
	for _, r := range m.rows {
		w = max(w, lipgloss.Width(m.names.Node[r.node]))
	}
	return w
}

// SlowestChain finds the settle's slowest chain of changes: a change in
// round r follows a change in round r-1 when the earlier change's node
// gates a device with a channel terminal in the later change's group
// (the nodes joined through devices not off, as conducting at the end of
// the settle; rails and inputs join nothing). A change's arrival is its
// own delay estimate plus the latest arrival it follows, and the chain is
// the one that arrives last. It is a first-order estimate built on
// first-order delays, linear in the changes and the devices they gate.
// It returns nil and NaN when no change has a delay (ideal mode).
func SlowestChain(nl *switchsim.Netlist, cond []switchsim.Conduction, changes []Change) ([]int, float64) {
	anyDelay := false
	for _, c := range changes {
		if !math.IsNaN(c.Delay) {
			anyDelay = true
			break
		}
	}
	if !anyDelay {
		return nil, math.NaN()
	}
	group := groups(nl, cond)
	arrival := make([]float64, len(changes))
	pred := make([]int, len(changes))
	type cand struct {
		arr float64
		at  int
	}
	best := map[int32]cand{} // by group: the latest arrival of the previous round that gates into it
	next := map[int32]cand{}
	round := -1
	end, endArr := -1, math.Inf(-1)
	for i, c := range changes {
		if c.Round != round {
			// a new round: what the previous one gated becomes the candidates
			if c.Round != round+1 {
				clear(next) // a skipped round follows nothing
			}
			best, next = next, best
			clear(next)
			round = c.Round
		}
		d := c.Delay
		if math.IsNaN(d) {
			d = 0
		}
		arrival[i], pred[i] = d, -1
		if b, ok := best[group[c.Node]]; ok {
			arrival[i], pred[i] = d+b.arr, b.at
		}
		if arrival[i] > endArr {
			end, endArr = i, arrival[i]
		}
		for _, dv := range nl.GatedDevices(c.Node) {
			for _, t := range [2]int{nl.Device(dv).A, nl.Device(dv).B} {
				g := group[t]
				if g < 0 {
					continue
				}
				if b, ok := next[g]; !ok || arrival[i] > b.arr {
					next[g] = cand{arrival[i], i}
				}
			}
		}
	}
	var chain []int
	for at := end; at >= 0; at = pred[at] {
		chain = append(chain, at)
	}
	for i, j := 0, len(chain)-1; i < j; i, j = i+1, j-1 {
		chain[i], chain[j] = chain[j], chain[i]
	}
	return chain, endArr
}

// groups numbers the nodes by group (-1 for rails and inputs), joining
// nodes through every device that is not off.
func groups(nl *switchsim.Netlist, cond []switchsim.Conduction) []int32 {
	parent := make([]int32, nl.NumNodes())
	for i := range parent {
		parent[i] = int32(i)
	}
	find := func(x int32) int32 {
		for parent[x] != x {
			parent[x] = parent[parent[x]]
			x = parent[x]
		}
		return x
	}
	inner := func(n int) bool { return nl.NodeKind(n) == switchsim.Internal }
	for d := 0; d < nl.NumDevices(); d++ {
		if d < len(cond) && cond[d] == switchsim.Off {
			continue
		}
		dv := nl.Device(d)
		if inner(dv.A) && inner(dv.B) {
			parent[find(int32(dv.A))] = find(int32(dv.B))
		}
	}
	out := make([]int32, nl.NumNodes())
	for n := range out {
		out[n] = -1
		if inner(n) {
			out[n] = find(int32(n))
		}
	}
	return out
}
