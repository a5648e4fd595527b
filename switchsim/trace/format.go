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
// still read.
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

// checkKey is a check line's content: "NODE WANT STATE VALUE pass|FAIL".
func checkKey(node string, c session.CheckResult) string {
	return node + " " + c.Want.String() + " " + c.Got.State.String() + " " + c.Got.Value.String() + " " + passFail(c.Pass)
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
