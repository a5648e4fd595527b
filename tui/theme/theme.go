// Package theme holds every colour and glyph of the explorer: one file to
// change for a new palette, for NO_COLOR, or for terminals that only show
// ASCII. Panels take their Styles from a Theme and never name a colour.
package theme

import (
	"strings"

	"github.com/charmbracelet/lipgloss"
	"github.com/charmbracelet/x/ansi"

	"railyard/switchsim"
)

// Glyphs are the symbols the panels draw. Every meaning carried by colour is
// also carried by one of these, so a screen without colour reads the same.
type Glyphs struct {
	Cursor   string // the selected row
	Changed  string // changed in the last settle
	Watched  string // on the timeline
	Group    string // a device of the inspected node's group
	Pass     string // a check that passed
	Fail     string // a check that failed (never plain information)
	Warn     string // a warning of the simulator
	Set      string // on the timeline: an action that set an input by hand
	Differs  string // a node whose logic value the other mode (or the size tried) gives otherwise
	Next     string // the step that n applies
	Arrow    string
	Rule     string // horizontal rule
	Bar      string // vertical divider between columns
	Ellipsis string
	Cell     string // an unchanged cell of the propagation grid
	Wave     [6]string
}

// Unicode glyphs: block heights for the six states, so a waveform reads as
// levels (0 at the floor, 1 at the top, the weak states between, Z at mid).
func unicodeGlyphs() Glyphs {
	return Glyphs{
		Cursor: "▸", Changed: "•", Watched: "◆", Group: "◇", Pass: "✓", Fail: "✗", Warn: "!", Set: "+", Differs: "≠",
		Next: "▶", Arrow: "→", Rule: "─", Bar: "│", Ellipsis: "…", Cell: "·",
		Wave: [6]string{"▁", "█", "▃", "▆", "─", "▒"},
	}
}

// ASCII glyphs for terminals and fonts that cannot show anything else:
// one glyph, one meaning, as in Unicode. F is a failed check and ! a
// warning; + a pass and s an input set by hand; & a device of the group,
// since # is the waveform's 1; % a node that differs from the session
// before the mode switch or the size tried.
func asciiGlyphs() Glyphs {
	return Glyphs{
		Cursor: ">", Changed: "*", Watched: "@", Group: "&", Pass: "+", Fail: "F", Warn: "!", Set: "s", Differs: "%",
		Next: ">", Arrow: "->", Rule: "-", Bar: "|", Ellipsis: "~", Cell: ".",
		Wave: [6]string{"_", "#", ".", "^", "-", "x"},
	}
}

// Palette: the project's own, chosen to read on dark and light backgrounds.
// ANSI 256 numbers; lipgloss degrades them on 16-colour terminals.
var (
	colLow     = lipgloss.AdaptiveColor{Light: "25", Dark: "75"}   // 0: blue
	colHigh    = lipgloss.AdaptiveColor{Light: "130", Dark: "214"} // 1: amber
	colWeakLow = lipgloss.AdaptiveColor{Light: "67", Dark: "110"}  // L: pale blue
	colWeakHi  = lipgloss.AdaptiveColor{Light: "136", Dark: "180"} // H: pale amber
	colFloat   = lipgloss.AdaptiveColor{Light: "97", Dark: "140"}  // Z: lilac
	colUnknown = lipgloss.AdaptiveColor{Light: "160", Dark: "203"} // X: red
	colAccent  = lipgloss.AdaptiveColor{Light: "30", Dark: "43"}   // focus: teal
	colDim     = lipgloss.AdaptiveColor{Light: "245", Dark: "243"}
	colPass    = lipgloss.AdaptiveColor{Light: "28", Dark: "71"}
	colFail    = lipgloss.AdaptiveColor{Light: "160", Dark: "196"}
	colWarn    = lipgloss.AdaptiveColor{Light: "166", Dark: "215"}
	colMark    = lipgloss.AdaptiveColor{Light: "127", Dark: "177"} // changed, group: magenta
	colSelBg   = lipgloss.AdaptiveColor{Light: "254", Dark: "237"}
	colBadgeFg = lipgloss.AdaptiveColor{Light: "231", Dark: "231"}
)

// Theme is the resolved look for one terminal: its renderer (so each SSH
// connection gets its own colour profile), its glyphs and the base styles.
type Theme struct {
	R       *lipgloss.Renderer
	ASCII   bool
	NoColor bool
	G       Glyphs

	Text, Dim, Bold       lipgloss.Style
	Title, TitleFocus     lipgloss.Style
	Selected              lipgloss.Style // the cursor row
	Changed, Marked       lipgloss.Style
	Pass, Fail, Warn      lipgloss.Style
	FailBadge, PassBadge  lipgloss.Style
	Key, KeyDesc          lipgloss.Style
	Accent                lipgloss.Style
	State                 [6]lipgloss.Style // by switchsim.State
	Header, Status, Error lipgloss.Style

	// rendered once: drawing the same few glyphs thousands of times a
	// frame through lipgloss costs more than the rest of a frame
	letters [6]string
	waves   map[waveKey]string
	marks   map[markKey]string
}

type waveKey struct {
	s switchsim.State
	n int
}

type markKey struct{ name, text string }

// New builds a theme on a renderer (nil: lipgloss's default renderer).
// noColor keeps bold and reverse video but drops every colour (NO_COLOR);
// ascii swaps in the ASCII glyphs.
func New(r *lipgloss.Renderer, noColor, ascii bool) *Theme {
	if r == nil {
		r = lipgloss.DefaultRenderer()
	}
	t := &Theme{R: r, ASCII: ascii, NoColor: noColor, G: unicodeGlyphs()}
	if ascii {
		t.G = asciiGlyphs()
	}
	st := r.NewStyle
	fg := func(c lipgloss.TerminalColor) lipgloss.Style {
		if noColor {
			return st()
		}
		return st().Foreground(c)
	}
	t.Text = st()
	t.Dim = fg(colDim)
	if noColor {
		t.Dim = st().Faint(true)
	}
	t.Bold = st().Bold(true)
	t.Title = fg(colDim).Bold(true)
	t.TitleFocus = fg(colAccent).Bold(true).Underline(noColor)
	t.Accent = fg(colAccent)
	t.Selected = st().Bold(true)
	if !noColor {
		t.Selected = t.Selected.Background(colSelBg)
	} else {
		t.Selected = t.Selected.Reverse(true)
	}
	t.Changed = fg(colMark).Bold(true)
	t.Marked = fg(colMark)
	t.Pass = fg(colPass)
	t.Fail = fg(colFail).Bold(true)
	t.Warn = fg(colWarn).Bold(true)
	t.FailBadge = st().Bold(true).Reverse(noColor)
	t.PassBadge = fg(colPass).Bold(true)
	if !noColor {
		t.FailBadge = t.FailBadge.Foreground(colBadgeFg).Background(colFail)
	}
	t.Key = fg(colAccent).Bold(true)
	t.KeyDesc = fg(colDim)
	t.Header = st().Bold(true)
	t.Status = st()
	t.Error = fg(colFail).Bold(true)
	for i, c := range []lipgloss.TerminalColor{colLow, colHigh, colWeakLow, colWeakHi, colFloat, colUnknown} {
		t.State[i] = fg(c)
	}
	t.State[switchsim.StateX] = t.State[switchsim.StateX].Bold(true)
	for s := range t.letters {
		t.letters[s] = t.State[s].Render(switchsim.State(s).String())
	}
	t.waves = map[waveKey]string{}
	t.marks = map[markKey]string{}
	return t
}

// Mark renders a short, often repeated text (a glyph) in a style, once.
// name says which style it is ("nodes.changed"): the first rendering under
// a name is kept for the theme's life, so a panel's Styles are fixed once
// it has drawn. (Panels are values, so the style's address cannot be the key.)
func (t *Theme) Mark(name string, style lipgloss.Style, text string) string {
	k := markKey{name, text}
	if s, ok := t.marks[k]; ok {
		return s
	}
	s := style.Render(text)
	if len(t.marks) < 4096 {
		t.marks[k] = s
	}
	return s
}

// StateLetter draws a state's IEEE 1164 letter in its colour.
func (t *Theme) StateLetter(s switchsim.State) string {
	return t.letters[s]
}

// Wave draws n cells of a state's waveform glyph.
func (t *Theme) Wave(s switchsim.State, n int) string {
	k := waveKey{s, n}
	if w, ok := t.waves[k]; ok {
		return w
	}
	w := t.State[s].Render(strings.Repeat(t.G.Wave[s], n))
	if len(t.waves) < 4096 {
		t.waves[k] = w
	}
	return w
}

// Legend explains the waveform glyphs, one pair per state.
func (t *Theme) Legend() string {
	var b strings.Builder
	for s := switchsim.State0; s <= switchsim.StateX; s++ {
		if s > 0 {
			b.WriteString("  ")
		}
		b.WriteString(t.Wave(s, 1))
		b.WriteString(t.Dim.Render(s.String()))
	}
	return b.String()
}

// Fit cuts or pads a rendered line to exactly w cells.
func Fit(s string, w int) string {
	if w <= 0 {
		return ""
	}
	n := ansi.StringWidth(s)
	if n > w {
		return ansi.Truncate(s, w, "")
	}
	return s + strings.Repeat(" ", w-n)
}

// Clip shortens plain text to w cells, marking the cut with the ellipsis.
func (t *Theme) Clip(s string, w int) string {
	if w <= 0 {
		return ""
	}
	if ansi.StringWidth(s) <= w {
		return s
	}
	return ansi.Truncate(s, w, t.G.Ellipsis)
}

// Pad pads plain or rendered text on the right to w cells (never cuts).
func Pad(s string, w int) string {
	if n := ansi.StringWidth(s); n < w {
		return s + strings.Repeat(" ", w-n)
	}
	return s
}

// Block fits lines into a w x h block: each line fitted, missing lines blank.
func Block(lines []string, w, h int) string {
	var b strings.Builder
	blank := strings.Repeat(" ", max(w, 0))
	for i := 0; i < h; i++ {
		if i > 0 {
			b.WriteByte('\n')
		}
		if i < len(lines) {
			b.WriteString(Fit(lines[i], w))
		} else {
			b.WriteString(blank)
		}
	}
	return b.String()
}

// TitleBar draws a panel title followed by a rule to the full width, with
// a focus mark so the focused panel is visible without colour.
func (t *Theme) TitleBar(title, info string, focused bool, w int) string {
	mark := "  "
	style := t.Title
	if focused {
		mark = t.G.Cursor + " "
		style = t.TitleFocus
	}
	head := style.Render(mark + title)
	if info != "" {
		head += " " + t.Dim.Render(info)
	}
	n := w - ansi.StringWidth(head) - 1
	if n > 0 {
		head += " " + t.Dim.Render(strings.Repeat(t.G.Rule, n))
	}
	return Fit(head, w)
}

// Wrap breaks a rendered line to lines of w cells; the continuation lines
// are indented two cells past the line's own indentation.
func Wrap(line string, w int) []string {
	if w <= 0 || ansi.StringWidth(line) <= w {
		return []string{line}
	}
	plain := ansi.Strip(line)
	indent := len(plain) - len(strings.TrimLeft(plain, " ")) + 2
	if indent > w/2 {
		indent = 2
	}
	first := strings.Split(ansi.Wrap(line, w, ""), "\n")
	out := []string{first[0]}
	rest := strings.Join(first[1:], " ")
	pad := strings.Repeat(" ", indent)
	for _, l := range strings.Split(ansi.Wrap(rest, w-indent, ""), "\n") {
		out = append(out, pad+l)
	}
	return out
}
