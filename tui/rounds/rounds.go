// Package rounds is the explorer's settle view: what the last change did,
// round by round. Each node the settle touched is a row and each round a
// column, so the spread of a change reads left to right; the replay cursor
// walks the rounds one at a time, showing the settle as it stood after that
// round with the nodes it changed marked.
package rounds

import (
	"fmt"
	"sort"
	"strings"

	"github.com/charmbracelet/bubbles/key"
	tea "github.com/charmbracelet/bubbletea"
	"github.com/charmbracelet/lipgloss"

	"railyard/switchsim"
	"railyard/tui/listing"
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
}

// Settle is what one action did, as the view needs it.
type Settle struct {
	Title      string // the action, worded
	Rounds     int
	Changes    []Change              // round after round
	Before     []switchsim.NodeState // every node before the action (nil: unknown)
	Oscillated bool
}

// nodeRow is one node of the grid.
type nodeRow struct {
	node   int
	first  int                     // first round it changed in
	at     map[int]switchsim.State // round -> state it took
	before switchsim.State
	known  bool // before is known
}

// Model is the settle view.
type Model struct {
	KeyMap KeyMap
	Styles Styles

	nl      *switchsim.Netlist
	s       Settle
	rows    []nodeRow
	perRnd  []int // changes per round
	replay  int   // 0: before round 1; s.Rounds: settled
	scroll  listing.Cursor
	focused bool
	w, h    int
}

// New makes an empty view.
func New(nl *switchsim.Netlist, st Styles) *Model {
	return &Model{KeyMap: DefaultKeyMap(), Styles: st, nl: nl}
}

// SetSize gives the view its cells.
func (m *Model) SetSize(w, h int) {
	m.w, m.h = w, h
	m.scroll.SetHeight(h - 4)
}

// Focus and Blur tell the view whether keys go to it.
func (m *Model) Focus()        { m.focused = true }
func (m *Model) Blur()         { m.focused = false }
func (m *Model) Focused() bool { return m.focused }

// Set shows a new settle, replayed to its end.
func (m *Model) Set(s Settle) {
	m.s = s
	m.perRnd = make([]int, s.Rounds+1)
	idx := map[int]int{}
	m.rows = m.rows[:0]
	for _, c := range s.Changes {
		if c.Round >= 0 && c.Round < len(m.perRnd) {
			m.perRnd[c.Round]++
		}
		i, ok := idx[c.Node]
		if !ok {
			r := nodeRow{node: c.Node, first: c.Round, at: map[int]switchsim.State{}}
			if c.Node < len(s.Before) {
				r.before, r.known = s.Before[c.Node].State, true
			}
			i = len(m.rows)
			idx[c.Node] = i
			m.rows = append(m.rows, r)
		}
		m.rows[i].at[c.Round] = c.State
	}
	sort.SliceStable(m.rows, func(i, j int) bool {
		if m.rows[i].first != m.rows[j].first {
			return m.rows[i].first < m.rows[j].first
		}
		return m.rows[i].node < m.rows[j].node
	})
	m.replay = s.Rounds
	m.scroll.Offset = 0
	m.scroll.SetLen(len(m.rows))
}

// Replay is the round the view shows (0: before the first round).
func (m *Model) Replay() int { return m.replay }

// ChangedIn lists the nodes changed in round r.
func (m *Model) ChangedIn(r int) []int {
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
func (m *Model) Update(msg tea.Msg) bool {
	k, ok := msg.(tea.KeyMsg)
	if !ok {
		return false
	}
	km := m.KeyMap
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
	case key.Matches(k, km.Down):
		m.scroll.Offset = min(m.scroll.Offset+1, max(len(m.rows)-m.scroll.Height, 0))
	default:
		return false
	}
	m.follow()
	return true
}

// follow scrolls so that a node changed in the replayed round is shown.
func (m *Model) follow() {
	for i, r := range m.rows {
		if _, ok := r.at[m.replay]; ok {
			if i < m.scroll.Offset || i >= m.scroll.Offset+m.scroll.Height {
				m.scroll.Offset = min(i, max(len(m.rows)-m.scroll.Height, 0))
			}
			return
		}
	}
}

// View draws the view in its w x h cells.
func (m *Model) View() string {
	st, t := m.Styles, m.Styles.Theme
	g := t.G
	s := m.s
	var lines []string
	lines = append(lines, st.Heading.Render(t.Clip(s.Title, m.w)))
	if s.Oscillated {
		lines = append(lines, st.Warn.Render(t.Clip(g.Warn+" oscillated: past the round limit the nodes still changing were set to X", m.w)))
	}
	if s.Rounds == 0 || len(m.rows) == 0 {
		lines = append(lines, st.Dim.Render("No node changed in this settle."))
		return theme.Block(lines, m.w, m.h)
	}
	// rounds, changes, and the changes per round
	var pr strings.Builder
	fmt.Fprintf(&pr, "%s, %s; per round:", plural(s.Rounds, "round"), plural(len(s.Changes), "change"))
	for r := 1; r <= s.Rounds; r++ {
		item := fmt.Sprintf(" %d", m.perRnd[r])
		if pr.Len()+len(item) > m.w-2 {
			pr.WriteString(" " + g.Ellipsis)
			break
		}
		pr.WriteString(item)
	}
	lines = append(lines, st.Dim.Render(pr.String()))

	nameW := min(max(m.maxName(), 4), max(m.w/3, 8))
	// round columns shown: a window of rounds around the replay cursor
	cols := max((m.w-nameW-2-4-5)/2, 1)
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
			hd.WriteString(t.Mark(&m.Styles.Current, label))
		} else {
			hd.WriteString(label)
		}
	}
	hd.WriteString(" now")
	lines = append(lines, hd.String())

	m.scroll.SetHeight(m.h - len(lines) - 1)
	lo, hi := m.scroll.Offset, min(m.scroll.Offset+m.scroll.Height, len(m.rows))
	for _, r := range m.rows[lo:hi] {
		var b strings.Builder
		_, hit := r.at[m.replay]
		if hit && m.replay > 0 {
			b.WriteString(t.Mark(&m.Styles.Changed, g.Changed))
		} else {
			b.WriteByte(' ')
		}
		b.WriteByte(' ')
		name := t.Clip(m.nl.NodeName(r.node), nameW)
		name += strings.Repeat(" ", nameW-lipgloss.Width(name))
		if hit && m.replay > 0 {
			name = st.Changed.Render(name)
		}
		b.WriteString(name)
		b.WriteByte(' ')
		now := r.before
		if r.known {
			b.WriteString(r.before.String() + "   ")
		} else {
			b.WriteString("?   ")
		}
		for rd := 1; rd <= s.Rounds; rd++ {
			stt, ok := r.at[rd]
			if ok && rd <= m.replay {
				now = stt
			}
			if rd < first || rd > last {
				continue
			}
			switch {
			case rd > m.replay:
				b.WriteString("  ")
			case ok && rd == m.replay:
				b.WriteString(t.StateLetter(stt) + " ")
			case ok:
				b.WriteString(stt.String() + " ")
			default:
				b.WriteString(g.Cell + " ")
			}
		}
		if !r.known && now == r.before && m.replay < r.first {
			b.WriteString(" ?")
		} else {
			b.WriteString(" " + t.StateLetter(now))
		}
		lines = append(lines, b.String())
	}
	foot := fmt.Sprintf("replay round %d/%d", m.replay, s.Rounds)
	switch {
	case m.replay == 0:
		foot += ": before round 1"
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
	lines = append(lines, st.Dim.Render(foot))
	return theme.Block(lines, m.w, m.h)
}

func (m *Model) maxName() int {
	w := 0
	for _, r := range m.rows {
		w = max(w, lipgloss.Width(m.nl.NodeName(r.node)))
	}
	return w
}

func plural(n int, w string) string {
	if n == 1 {
		return "1 " + w
	}
	return fmt.Sprintf("%d %ss", n, w)
}
