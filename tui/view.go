package tui

// Layout and drawing.

import (
	"fmt"
	"strings"

	"github.com/charmbracelet/bubbles/key"
	"github.com/charmbracelet/lipgloss"
	"github.com/charmbracelet/x/ansi"

	"railyard/switchsim/diag"
	"railyard/tui/prompt"
	"railyard/tui/theme"
)

// layout sizes the panels for the terminal.
func (m *Model) layout() {
	if m.tooSmall() {
		return
	}
	bodyH := m.h - 3 // header, status, key hints
	lw := m.leftWidth()
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
	m.audit.SetSize(rw, dh)
	m.prompt.SetSize(m.w, 1)
	m.help.Width = m.w
}

// leftWidth is the inputs and nodes column: what their names need, at
// least 32 cells and at most two fifths of the screen; the rest goes to the
// detail view.
func (m *Model) leftWidth() int {
	need := max(m.nodes.Want(), m.inputs.Want(), 32)
	return min(need, max(m.w*2/5, 32), 56)
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
	return trimLines(out)
}

// trimLines drops the spaces that end each line: the renderer erases the
// rest of a short line itself, so they would only cost bytes on the wire.
func trimLines(s string) string {
	var b strings.Builder
	b.Grow(len(s))
	for i, l := range strings.Split(s, "\n") {
		if i > 0 {
			b.WriteByte('\n')
		}
		b.WriteString(strings.TrimRight(l, " "))
	}
	return b.String()
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
	left := t.Header.Render("railyard") + " " + t.Dim.Render(t.G.Bar) + " " + t.Bold.Render(m.designName)
	if d := m.designDesc; d != "" {
		left += " " + t.Dim.Render(d)
	}
	var right []string
	if m.sess.Edited() {
		right = append(right, t.Accent.Render(fmt.Sprintf("edited (%s)", diag.Count(len(m.sess.Edits()), "size"))))
	}
	mode := m.sess.Options().Mode.String()
	if c := m.sess.Corner(); c != "" {
		mode += " @" + diag.Printable(c) // a technology corner, not the design's own
	}
	right = append(right, t.Dim.Render(mode))
	if m.numSteps > 0 {
		right = append(right, fmt.Sprintf("step %d/%d", m.nextStep, m.numSteps))
	}
	if m.lastFail != "" {
		right = append(right, t.FailBadge.Render(fmt.Sprintf(" %s FAIL %s ", t.G.Fail, m.lastFail)))
	} else if m.failed > 0 {
		right = append(right, t.Fail.Render(fmt.Sprintf("%s %d failed", t.G.Fail, m.failed)))
	}
	if m.mark != "" {
		right = append(right, t.Warn.Render(m.mark))
	}
	if m.opt.Banner != "" {
		right = append(right, t.Accent.Render(m.opt.Banner))
	}
	r := strings.Join(right, "  ")
	room := m.w - lipgloss.Width(r) - 1
	return theme.Fit(theme.Fit(left, max(room, 0))+" "+r, m.w)
}

// viewBar names the detail views, the one shown in brackets, with the
// marks that call for a look: Vectors a failed check, Log the warnings of
// the last settle, Audit the findings (failing or not) or a search under
// way. Where the names do not fit (80 columns), the views not shown take
// their short names.
func (m *Model) viewBar() string {
	t := m.th
	rw := m.w - m.leftWidth() - 1
	bar := func(names *[numViews]string, sep string) (string, int) {
		labels := make([]string, numViews)
		width := 0
		for v := View(0); v < numViews; v++ {
			name := names[v]
			if v == m.view {
				name = viewNames[v]
			}
			name += m.viewMark(v)
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
		return " " + strings.Join(labels, sep), width + len(sep)*int(numViews-1) + 1
	}
	if b, w := bar(&viewNames, "  "); w <= rw {
		return theme.Fit(b, rw)
	}
	// one space apart, then the longest names not shown cut short one by one
	names := viewNames
	b, w := bar(&names, " ")
	for _, v := range []View{ViewTimeline, ViewDevices, ViewVectors, ViewRounds} {
		if w <= rw {
			break
		}
		names[v] = shortNames[v]
		b, w = bar(&names, " ")
	}
	return theme.Fit(b, rw)
}

// viewMark is what a view's name carries in the bar.
func (m *Model) viewMark(v View) string {
	t := m.th
	switch v {
	case ViewLog:
		if n := m.log.Last(); n > 0 {
			return fmt.Sprintf("%s%d", t.G.Warn, n)
		}
	case ViewVectors:
		if m.failed > 0 {
			return t.G.Fail
		}
	case ViewAudit:
		all, failing := m.audit.Findings()
		switch {
		case m.search != nil:
			return t.G.Ellipsis
		case failing > 0:
			return fmt.Sprintf("%s%d", t.G.Fail, failing)
		case all > 0:
			return fmt.Sprintf("%s%d", t.G.Warn, all)
		}
	}
	return ""
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
	case ViewAudit:
		return m.audit.View()
	}
	return m.rounds.View()
}

func (m *Model) statusLine() string {
	switch {
	case m.prompt.Active():
		return m.prompt.View()
	case m.statusAs == statusFail:
		return theme.Fit(m.th.Error.Render(m.th.G.Fail+" "+m.status), m.w)
	case m.statusAs == statusNote:
		return theme.Fit(m.th.Accent.Render(m.status), m.w)
	}
	return theme.Fit(m.th.Status.Render(m.status), m.w)
}

// hints is the one line of keys for the focused panel, worded shorter than
// in the help view so that it fits 80 columns.
func (m *Model) hints() string {
	var bs []key.Binding
	h := func(k, desc string) { bs = append(bs, key.NewBinding(key.WithKeys(k), key.WithHelp(k, desc))) }
	switch {
	case m.prompt.Active():
		pk := m.prompt.KeyMap
		switch m.prompt.Kind() {
		case prompt.Jump:
			bs = []key.Binding{pk.Accept, pk.Cancel}
		case prompt.Confirm:
			bs = []key.Binding{pk.Yes, pk.No}
		case prompt.Size:
			h("enter", "try it")
			h("tab", "W or L")
			h("esc", "cancel")
		default:
			bs = pk.ShortHelp()
		}
	case m.showHelp:
		h("esc", "close")
		if m.helpPages() > 1 {
			h("← →", "pages")
		}
		h("q", "quit")
	case m.inputs.Filtering() || m.nodes.Filtering() || m.devices.Filtering():
		h("enter", "keep filter")
		h("esc", "clear filter")
	default:
		switch m.focus {
		case focusInputs:
			h("space", "toggle")
			h("0 1 x z", "set")
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
				h("← →", "scroll")
			case ViewWhy, ViewLog:
				h("↑↓", "scroll")
			case ViewDevices:
				h("enter", "why gate")
				h("W", "size")
				h("/", "filter")
				h("o", "group")
			case ViewAudit:
				h("↑↓", "select")
				h("enter", "walk it")
				if m.search != nil {
					h("x", "stop")
				}
			case ViewTimeline:
				h("← →", "scroll")
				h("m", "unwatch")
			}
			h("esc", "back")
		}
		if m.focus != focusDetail && m.view == ViewRounds {
			h("← →", "replay")
		}
		h("n", "next")
		h("p", "back")
		h("tab", "panel")
		h("?", "keys")
		h("q", "quit")
	}
	// where the line does not fit, the keys that work everywhere and are
	// in the help go first, so that "? keys" and "q quit" stay in sight
	whole := m.help
	whole.Width = 0 // measured uncut
	for _, drop := range []string{"esc", "tab", "p", "n"} {
		if lipgloss.Width(whole.ShortHelpView(bs)) <= m.w || len(bs) < 4 {
			break
		}
		for i, b := range bs {
			if b.Help().Key == drop && i < len(bs)-2 {
				bs = append(bs[:i:i], bs[i+1:]...)
				break
			}
		}
	}
	return theme.Fit(m.help.ShortHelpView(bs), m.w)
}

// helpPages is the number of pages the help takes on this screen.
func (m *Model) helpPages() int {
	cols, perPage, _ := m.helpColumns(m.h - 3)
	return (len(cols) + perPage - 1) / perPage
}

// helpView lists every key, section by section, each drawn by bubbles
// help as one column; the columns flow across the screen and page with the
// arrows when they do not all fit.
func (m *Model) helpView(h int) string {
	t := m.th
	cols, perPage, colW := m.helpColumns(h)
	pages := (len(cols) + perPage - 1) / perPage
	m.helpPage = min(max(m.helpPage, 0), pages-1)
	first := m.helpPage * perPage
	ch := h - 1
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

// helpColumns flows the help's lines into columns of h-1 lines, and says
// how many fit side by side and how wide each is.
func (m *Model) helpColumns(h int) (cols [][]string, perPage, colW int) {
	t := m.th
	nav := m.nodes.KeyMap.Nav
	sections := []struct {
		title string
		keys  []key.Binding
	}{
		{"Steps and actions", []key.Binding{m.keys.Next, m.keys.Prev, m.keys.Jump, m.keys.RunToFail, m.keys.RunToEnd, m.keys.Save}},
		{"Views on the right", []key.Binding{m.keys.Rounds, m.keys.Vectors, m.keys.Why, m.keys.Devices, m.keys.Timeline, m.keys.Log, m.keys.Audit}},
		{"Design", []key.Binding{m.keys.Mode, m.keys.Corner, m.devices.KeyMap.Size}},
		{"Inputs (left, top)", []key.Binding{m.inputs.KeyMap.Toggle, m.inputs.KeyMap.Set0, m.inputs.KeyMap.Set1, m.inputs.KeyMap.SetX, m.inputs.KeyMap.SetZ, m.inputs.KeyMap.Watch, m.inputs.KeyMap.Filter}},
		{"Nodes (left)", []key.Binding{m.nodes.KeyMap.Inspect, m.nodes.KeyMap.Filter, m.nodes.KeyMap.Watch}},
		{"Rounds: replay the settle", []key.Binding{m.rounds.KeyMap.Prev, m.rounds.KeyMap.Next, m.rounds.KeyMap.First, m.rounds.KeyMap.Last}},
		{"Vectors", []key.Binding{m.vectors.KeyMap.Jump, pair(m.vectors.KeyMap.Left, m.vectors.KeyMap.Right, "scroll the values")}},
		{"Devices", []key.Binding{m.devices.KeyMap.Inspect, m.devices.KeyMap.Size, m.devices.KeyMap.Filter, m.devices.KeyMap.GroupOnly}},
		{"Audit", []key.Binding{m.audit.KeyMap.Open, m.audit.KeyMap.Stop}},
		{"Timeline", []key.Binding{pair(m.timeline.KeyMap.Left, m.timeline.KeyMap.Right, "earlier / later"), m.timeline.KeyMap.Unwatch}},
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
		" 0 1  driven strong at full level",
		" L H  weak, degraded or contested",
		" Z    floating: keeps its stored value",
		" X    unknown, or a fight of equals",
		" "+t.G.Changed+" changed by the last settle",
		" "+t.G.Watched+" on the timeline  "+t.G.Group+" of the group",
		" "+t.G.Fail+" failed check  "+t.G.Pass+" passed",
		" "+t.G.Warn+" warning  "+t.G.Set+" input set by hand",
		" "+t.G.Differs+"1 differs after i or W: was 1",
		" Waveforms: "+t.Legend())
	// flow into columns of ch lines, as many side by side as fit
	ch := h - 1
	colW = 40
	if m.w >= 120 {
		colW = m.w / 3
	}
	perPage = max(m.w/colW, 1)
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
	return cols, perPage, colW
}

// pair is one help line for two keys that go together (left and right).
func pair(a, b key.Binding, desc string) key.Binding {
	return key.NewBinding(key.WithKeys(append(a.Keys(), b.Keys()...)...), key.WithHelp(a.Help().Key+" "+b.Help().Key, desc))
}

// asciiReplacer maps every glyph the explorer or its libraries may draw to
// ASCII; toASCII then replaces whatever else is left (a design's
// description in UTF-8) with '?'.
func asciiReplacer() *strings.Replacer {
	// one cell for one cell, so that the widths the layout computed still hold
	return strings.NewReplacer(
		"↑", "^", "↓", "v", "←", "<", "→", ">", "…", "~", "•", "*", "·", ".",
		"─", "-", "│", "|", "▸", ">", "▶", ">", "✓", "+", "✗", "F", "◆", "@", "◇", "&", "▏", "_", "≠", "%",
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
