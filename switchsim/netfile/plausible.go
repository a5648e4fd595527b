package netfile

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"railyard/switchsim/diag"
)

// Range is a plausible range of values, with the value a designer most
// often means (Typical), by which a missing or wrong prefix is guessed.
type Range struct {
	Min, Max, Typical float64
	Unit              string // m or F
	What              string // "a transistor's size", for the note
}

// The plausible ranges of a cell's values: common practice for cells of
// the processes in use (drawn sizes from tens of nanometres to a few
// micrometres, node capacitances from a fraction of a femtofarad to a few
// picofarads), widened by a decade or more on each side. They are not a
// rule of any process: a value outside is read as written, with a note.
var (
	SizeRange = Range{Min: 10e-9, Max: 1e-3, Typical: 0.5e-6, Unit: "m", What: "a transistor's width or length in a cell"}
	CapRange  = Range{Min: 1e-18, Max: 100e-12, Typical: 5e-15, Unit: "F", What: "a node capacitance in a cell"}
)

// maxNotes bounds the notes one design gets on its values; the rest are counted.
const maxNotes = 20

// SizeNotes collects the notes on one design's implausible sizes and
// capacitances (README, "Plausible values"). Readers call Size and Cap for
// every value they read, then add Notes to the design's notes.
type SizeNotes struct {
	// Scaled says the sizes come from a netlist whose units may be scaled
	// by a setting made elsewhere (layout extraction writes w=640000u for a
	// 0.64 um device under a scale option): implausible sizes are then said
	// once for the design, not once per device, since only their ratios
	// W/L enter railyard's strengths and estimates.
	Scaled bool

	list        diag.List
	more        int
	sizes, odd  int      // sizes seen, and how many were implausible (Scaled)
	firstOdd    diag.Pos // the first implausible size (Scaled)
	firstText   string   // its key=value (Scaled)
	firstValue  float64  // its value (Scaled)
	lastNotePos diag.Pos // where the "more" line goes
}

// Size notes a width or length outside SizeRange. key and written are the
// value as the file wrote it (w, 0.5), v its value in metres.
func (s *SizeNotes) Size(p diag.Pos, key, written string, v float64) {
	s.sizes++
	if SizeRange.holds(v) {
		return
	}
	if s.Scaled {
		if s.odd == 0 {
			s.firstOdd, s.firstText, s.firstValue = p, key+"="+written, v
		}
		s.odd++
		return
	}
	s.add(p, SizeRange.note(key, written, v))
}

// Cap notes a capacitance outside CapRange (v in farads).
func (s *SizeNotes) Cap(p diag.Pos, key, written string, v float64) {
	if CapRange.holds(v) {
		return
	}
	s.add(p, CapRange.note(key, written, v))
}

func (s *SizeNotes) add(p diag.Pos, msg string) {
	s.lastNotePos = p
	if len(s.list) >= maxNotes {
		s.more++
		return
	}
	s.list = append(s.list, &diag.Error{Pos: p, Msg: msg})
}

// Notes returns the notes, sorted by position.
func (s *SizeNotes) Notes() diag.List {
	out := append(diag.List(nil), s.list...)
	if s.more > 0 {
		out = append(out, &diag.Error{Pos: s.lastNotePos, Msg: fmt.Sprintf("and %s outside the plausible ranges", diag.Count(s.more, "more value"))})
	}
	if s.Scaled && s.odd > 0 {
		out = append(out, &diag.Error{Pos: s.firstOdd, Msg: fmt.Sprintf(
			"sizes look scaled: %s is %s, and %d of %s lie outside %s to %s; they are used as written, and only their ratios W/L matter to railyard's strengths, levels and delays",
			s.firstText, quantity(s.firstValue, "m"), s.odd, diag.Count(s.sizes, "size"),
			quantity(SizeRange.Min, "m"), quantity(SizeRange.Max, "m"))})
	}
	out.Sort()
	return out
}

func (r Range) holds(v float64) bool { return v >= r.Min && v <= r.Max }

// note words why v is implausible and the prefix the writer probably meant.
func (r Range) note(key, written string, v float64) string {
	msg := fmt.Sprintf("%s=%s is %s, outside the plausible range of %s (%s to %s)",
		key, written, quantity(v, r.Unit), r.What, quantity(r.Min, r.Unit), quantity(r.Max, r.Unit))
	if g, ok := r.guess(written, v); ok {
		msg += fmt.Sprintf(": did you mean %s=%s (%s)?", key, g, quantity(mustNumber(g), r.Unit))
	}
	return msg
}

// guess finds the prefix that puts the written number in range, nearest
// the typical value: w=0.5 (0.5 m) becomes 0.5u, cap=5 (5 F) becomes 5f.
func (r Range) guess(written string, v float64) (string, bool) {
	mant, exp := written, 0
	if n := len(mant); n > 0 {
		if e, ok := siPrefix[mant[n-1]]; ok {
			mant, exp = mant[:n-1], e
		}
	}
	base := v / math.Pow(10, float64(exp)) // the number without its prefix
	plain := !strings.ContainsAny(mant, "eE")
	best, bestD := "", math.Inf(1)
	for _, c := range []byte("fpnum") {
		x := base * math.Pow(10, float64(siPrefix[c]))
		if !r.holds(x) {
			continue
		}
		if d := math.Abs(math.Log10(x / r.Typical)); d < bestD {
			best, bestD = string(c), d
			if plain {
				best = mant + best
			} else {
				best = FormatNumber(x)
			}
		}
	}
	return best, best != ""
}

func mustNumber(s string) float64 {
	v, _ := ParseNumber(s)
	return v
}

// quantity prints a value with its unit and an SI prefix, to four
// digits: 500 nm, 5 fF, 1 aF, 2 mm, and 0.5 m rather than 500 mm.
func quantity(v float64, unit string) string {
	if v >= 0.1 || v <= 0 {
		return strconv.FormatFloat(v, 'g', 4, 64) + " " + unit
	}
	for _, p := range []struct {
		exp    int
		prefix string
	}{{-3, "m"}, {-6, "u"}, {-9, "n"}, {-12, "p"}, {-15, "f"}, {-18, "a"}} {
		if m := v / math.Pow10(p.exp); m >= 1 || p.exp == -18 {
			return strconv.FormatFloat(m, 'g', 4, 64) + " " + p.prefix + unit // u for micro, in ASCII as the format writes it
		}
	}
	return ""
}
