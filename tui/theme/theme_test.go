package theme

import (
	"strings"
	"testing"

	"github.com/charmbracelet/x/ansi"

	"railyard/switchsim"
)

// Each of the six states has its own waveform glyph, so a waveform reads
// without colour; the ASCII set stays within ASCII (the rules).
func TestWaveGlyphsDistinct(t *testing.T) {
	for _, ascii := range []bool{false, true} {
		th := New(nil, true, ascii)
		seen := map[string]switchsim.State{}
		for s := switchsim.State0; s <= switchsim.StateX; s++ {
			g := th.G.Wave[s]
			if ansi.StringWidth(g) != 1 {
				t.Errorf("ascii=%v: glyph of %s is %d cells wide", ascii, s, ansi.StringWidth(g))
			}
			if o, dup := seen[g]; dup {
				t.Errorf("ascii=%v: %s and %s share the glyph %q", ascii, o, s, g)
			}
			seen[g] = s
			if ascii && g[0] >= 0x80 {
				t.Errorf("ASCII glyph of %s is %q", s, g)
			}
		}
		legend := ansi.Strip(th.Legend())
		for s := switchsim.State0; s <= switchsim.StateX; s++ {
			if !strings.Contains(legend, th.G.Wave[s]+s.String()) {
				t.Errorf("ascii=%v: legend %q does not name %s", ascii, legend, s)
			}
		}
	}
}

func TestFitAndWrap(t *testing.T) {
	if got := Fit("abcdef", 4); got != "abcd" {
		t.Errorf("Fit cut: %q", got)
	}
	if got := Fit("ab", 4); got != "ab  " {
		t.Errorf("Fit pad: %q", got)
	}
	lines := Wrap("  one two three four five six", 12)
	for _, l := range lines {
		if ansi.StringWidth(l) > 12 {
			t.Errorf("wrapped line %q is wider than 12", l)
		}
	}
	if len(lines) < 3 || !strings.HasPrefix(lines[1], "    ") {
		t.Errorf("continuation lines are not indented past the first: %q", lines)
	}
}

// One glyph, one meaning: the marks a screen shows side by side (cursor,
// changed, watched, group, pass, fail, warning, set, differs, and the
// ellipsis of a cut name) are all different in
// both sets, and none is a state letter or a waveform glyph (issue 18 item
// 13: ASCII drew failed checks and warnings both as !, passes and sets
// both as +).
func TestMarkGlyphsHaveOneMeaning(t *testing.T) {
	for _, ascii := range []bool{false, true} {
		g := New(nil, true, ascii).G
		marks := map[string]string{"cursor": g.Cursor, "changed": g.Changed, "watched": g.Watched,
			"group": g.Group, "pass": g.Pass, "fail": g.Fail, "warn": g.Warn, "set": g.Set, "differs": g.Differs,
			"ellipsis": g.Ellipsis}
		seen := map[string]string{}
		for s := switchsim.State0; s <= switchsim.StateX; s++ {
			seen[s.String()] = "state " + s.String()
			seen[g.Wave[s]] = "waveform " + s.String()
		}
		for what, glyph := range marks {
			if ansi.StringWidth(glyph) != 1 {
				t.Errorf("ascii=%v: %s glyph %q is not one cell", ascii, what, glyph)
			}
			if o, dup := seen[glyph]; dup {
				t.Errorf("ascii=%v: %s and %s share the glyph %q", ascii, o, what, glyph)
			}
			seen[glyph] = what
		}
	}
}
