// Package trace writes, reads and replays railyard's session traces: plain
// text a person can read, one fact a line, complete enough to repeat a
// session and compare every result.
//
//	# railyard session trace; replay with: railyard replay FILE
//	railyard-trace 2
//	design PATH            relative to the trace's folder when it can be (or demo:NAME)
//	design-sha256 HEX      the design's content hash: a moved design is found by it
//	steps PATH | -
//	steps-sha256 HEX       when there are steps
//	mode physical | ideal
//	full-swing no | yes
//	tech KEY=VALUE ...     the values in force (vil and vih as computed)
//	format netlist|verilog  a design read from a netlist: the reader that read it,
//	read KEY=VALUE ...      the reader options given (top power ground nmos-models pmos-models),
//	inputs NAME ...         and the design's inputs as the netlist spells them
//	corner NAME            when the session ran at a technology corner
//	min-margin VOLTS       when checks failed below a margin (run --min-margin)
//	glitches yes           when single-input steps were looked at for glitches (run --glitches)
//	watch NODE ...         the nodes whose levels were checked besides the outputs
//	created TIME
//
//	action SEQ KIND [details]
//	  rounds N
//	  r ROUND NODE STATE VALUE STRENGTH VOLTS DELAY
//	  check NODE WANT STATE VALUE pass|FAIL
//	  warn KIND NODE MESSAGE
//
//	capped N               N later actions were not written: the size cap was reached
//	end N                  the number of actions written
//
// Lines starting with # are comments. Actions are numbered from 0 and
// every one is written, undone ones and their backs included, so "N
// actions" means the same thing wherever it is said. Step actions carry
// their drives and wanted values, so a trace replays without its steps
// file. Version 1 traces (design paths as given, tech vil/vih as set) are
// still read. The format, read and inputs lines are optional (a .sw
// design has none): they make a replay read a netlist as the session did.
// A word of them that is not plain printable ASCII is a Go-quoted string
// with its spaces written \x20, so that it stays one word. So are the
// corner, min-margin, glitches and watch lines, and the check lines' margin (MARGIN
// in volts, - where unknown), which later version 2 traces added: the
// replay compares a margin only where the trace has one.
//
// The session streams its trace as actions happen (Writer, a
// session.Recorder) to a spool file, and Save writes the whole trace
// atomically wherever it is asked to; Read checks a trace line by line
// (errors as FILE:LINE:COL, never more than a few, never quoting more than
// a short excerpt); Replay repeats it on the design it names.
package trace

import (
	"math"
	"strconv"
	"strings"

	"railyard/switchsim"
	"railyard/switchsim/netfile"
	"railyard/switchsim/session"
)

// Magic lines of the versions read; Write writes the last.
const (
	magicPrefix = "railyard-trace "
	version     = 2
)

// Limits of what is read and written.
const (
	// MaxLine is the longest line read, in bytes.
	MaxLine = 4 << 20
	// MaxReadBytes is the largest trace read.
	MaxReadBytes = 1 << 30
	// DefaultMaxBytes is a trace's size cap unless the caller sets one.
	DefaultMaxBytes = 256 << 20
	// maxCount bounds the numbers a trace holds (step rows, rounds,
	// actions): more than any steps file or settle reaches.
	maxCount = 1 << 24
	// maxErrors is how many errors a read reports before it stops.
	maxErrors = 10
)

// changeKey is what a change line says about a node, without its delay
// (which is an estimate, not compared): "ROUND NODE STATE VALUE STRENGTH
// VOLTS". The writer and the replay both use it, so the two cannot drift.
func changeKey(round int, node string, st switchsim.NodeState) string {
	return strconv.Itoa(round) + " " + node + " " + st.State.String() + " " + st.Value.String() + " " +
		st.Strength.String() + " " + session.FormatVolts(st.Volts)
}

// checkKey is a check line's content: "NODE WANT STATE VALUE pass|FAIL
// MARGIN" (the margin to the millivolt, as FormatVolts prints it).
func checkKey(node string, c session.CheckResult) string {
	return node + " " + c.Want.String() + " " + c.Got.State.String() + " " + c.Got.Value.String() + " " + passFail(c.Pass) +
		" " + session.FormatVolts(c.Margin)
}

// withoutMargin is a check key without its margin, to compare with a
// trace written before check lines had one.
func withoutMargin(key string) string {
	if i := strings.LastIndexByte(key, ' '); i >= 0 {
		return key[:i]
	}
	return key
}

// warnKey is what a warn line says that is compared: "KIND NODE" (the
// message is wording).
func warnKey(kind, node string) string { return kind + " " + node }

func passFail(b bool) string {
	if b {
		return "pass"
	}
	return "FAIL"
}

// word writes s as one word of a header line: as it is when it is plain
// printable ASCII, else Go-quoted with its spaces escaped.
func word(s string) string {
	plain := s != ""
	for i := 0; i < len(s); i++ {
		plain = plain && s[i] > ' ' && s[i] < 0x7f && s[i] != '"'
	}
	if plain {
		return s
	}
	return strings.ReplaceAll(strconv.QuoteToASCII(s), " ", `\x20`)
}

// unword reads a word that word wrote.
func unword(w string) (string, bool) {
	if !strings.HasPrefix(w, `"`) {
		return w, true
	}
	s, err := strconv.Unquote(w)
	return s, err == nil
}

// readKeys are the reader options a read line holds, in the order written.
var readKeys = []string{"top", "power", "ground", "nmos-models", "pmos-models"}

// readWords words the reader options of a read line ("" for none).
func readWords(o netfile.ReadOptions) string {
	var parts []string
	for _, k := range readKeys {
		v := ""
		switch k {
		case "top":
			v = o.Top
		case "power":
			v = strings.Join(o.Power, ",")
		case "ground":
			v = strings.Join(o.Ground, ",")
		case "nmos-models":
			v = strings.Join(o.NMOSModels, ",")
		case "pmos-models":
			v = strings.Join(o.PMOSModels, ",")
		}
		if v != "" {
			parts = append(parts, k+"="+word(v))
		}
	}
	return strings.Join(parts, " ")
}

// setRead sets one reader option of a read line; false for an unknown key.
func setRead(o *netfile.ReadOptions, key, v string) bool {
	list := func() []string { return strings.Split(v, ",") }
	switch key {
	case "top":
		o.Top = v
	case "power":
		o.Power = list()
	case "ground":
		o.Ground = list()
	case "nmos-models":
		o.NMOSModels = list()
	case "pmos-models":
		o.PMOSModels = list()
	default:
		return false
	}
	return true
}

func yesNo(b bool) string {
	if b {
		return "yes"
	}
	return "no"
}

func formatDelay(d float64) string {
	if math.IsNaN(d) {
		return "-"
	}
	return strconv.FormatFloat(d, 'g', 4, 64)
}

// techString prints a technology's keys in a stable order with the values
// in force: vil and vih are the thresholds physical mode decides by (the
// reference inverter's unless the design sets them).
func techString(t switchsim.Tech) string {
	vil, vih, _ := t.Thresholds()
	var parts []string
	for _, k := range switchsim.TechKeys() {
		v, _ := t.Get(k)
		switch k {
		case "vil":
			v = vil
		case "vih":
			v = vih
		}
		parts = append(parts, k+"="+strconv.FormatFloat(v, 'g', -1, 64))
	}
	return strings.Join(parts, " ")
}
