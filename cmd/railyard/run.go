package main

import (
	"fmt"
	"io"
	"math"

	"railyard/designs"
	"railyard/switchsim"
	"railyard/switchsim/load"
	"railyard/switchsim/session"
)

const runUsage = `
usage: railyard run DESIGN [--steps FILE] [--json] [--ideal] [--full-swing] [--trace FILE] [--vcd FILE]

Settle the design, apply each row of its steps file (FILE, or DESIGN's
same-named .steps file), check the nodes the steps name, and print a report.
Without steps the report shows the design's initial settle.

Exit status: 0 when every check passes, 1 when one fails, 2 on bad input
(nothing is written to --trace or --vcd then).

examples:
  railyard run demo:` + designs.Default + `
  railyard run cells/opsel.sw --steps cells/opsel.steps
  railyard run cells/opsel.sw --json > run.jsonl
  railyard run cells/opsel.sw --trace opsel.trace --vcd opsel.vcd
  railyard run cells/opsel.sw --ideal --full-swing
`

// runOptions are the flags of `run`.
type runOptions struct {
	steps, trace, vcd      string
	json, ideal, fullSwing bool
	load                   *loadFlags // nil: the defaults
}

func cmdRun(args []string, stdout, stderr io.Writer) int {
	fs := newFlags("run", runUsage)
	var o runOptions
	fs.StringVar(&o.steps, "steps", "", "the steps `FILE` (default: DESIGN's same-named .steps file)")
	fs.BoolVar(&o.json, "json", false, "print JSON lines (FORMAT.md) instead of the text report")
	fs.BoolVar(&o.ideal, "ideal", false, "ideal mode: strengths only, no voltage estimates")
	fs.BoolVar(&o.fullSwing, "full-swing", false, "0 and 1 checks also require the strong full-level states")
	fs.StringVar(&o.trace, "trace", "", "save the session trace to `FILE` (for railyard replay)")
	fs.StringVar(&o.vcd, "vcd", "", "write a VCD waveform of every node to `FILE`")
	o.load = addLoadFlags(fs)
	pos, code := parseArgs(fs, args, stdout, stderr)
	if code >= 0 {
		return code
	}
	if len(pos) != 1 {
		return usageError(stderr, "run", "want one DESIGN, got %d arguments", len(pos))
	}
	return runDesign(pos[0], o, stdout, stderr)
}

// runDesign runs a design's steps and reports; the files are written only
// once the run has succeeded.
func runDesign(design string, o runOptions, stdout, stderr io.Writer) int {
	opt := session.Options{Mode: switchsim.Physical, FullSwing: o.fullSwing}
	if o.ideal {
		opt.Mode = switchsim.Ideal
	}
	if o.vcd != "" {
		opt.KeepStates = math.MaxInt // a waveform needs every state, whatever the size
	}
	if o.load == nil {
		o.load = &loadFlags{}
	}
	files, err := o.load.loader()
	if err != nil {
		return usageError(stderr, "run", "%v", err)
	}
	s, err := session.OpenFrom(files, design, o.steps, opt)
	if err != nil {
		return loadError(stderr, err)
	}
	printNotes(stderr, s.Design)
	s.RunToEnd(false)
	if o.trace != "" {
		if err := s.SaveTrace(o.trace); err != nil {
			fmt.Fprintf(stderr, "railyard run: writing the trace: %v\n", err)
			return exitUsage
		}
	}
	if o.vcd != "" {
		if err := s.SaveVCD(o.vcd, session.VCDOptions{Version: version}); err != nil {
			fmt.Fprintf(stderr, "railyard run: writing the waveform: %v\n", err)
			return exitUsage
		}
	}
	if o.json {
		err = s.WriteJSON(stdout)
	} else {
		err = s.WriteText(stdout)
	}
	if err != nil {
		fmt.Fprintf(stderr, "railyard run: %v\n", err)
		return exitUsage
	}
	if !session.Summarize(s.ReportEvents()).Pass() {
		return exitFail
	}
	return exitOK
}

// batchDefault is bare `railyard` off a terminal: the demo's batch report,
// exit 0 whatever its checks say (FORMAT.md).
func batchDefault(stdout, stderr io.Writer) int {
	if code := runDesign(load.DemoPrefix+designs.Default, runOptions{}, stdout, stderr); code == exitUsage {
		return code
	}
	return exitOK
}

// version names the program in VCD headers.
const version = "railyard (switch-level simulator)"
