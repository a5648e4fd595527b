package main

import (
	"fmt"
	"io"

	"railyard/designs"
	"railyard/switchsim/diag"
	"railyard/switchsim/load"
	"railyard/switchsim/trace"
)

const replayUsage = `
usage: railyard replay TRACE [--designs DIR] [netlist flags]

Re-run every action of a saved trace (railyard run --trace, or the
explorer's) on the design the trace names, and compare each recorded
result: rounds, node changes round by round, checks and warnings, and each
step's row and label against the steps file when it is at hand. A design
whose content changed since the trace was made is reported. The design is
looked for where the trace says (relative to the trace's folder); with
--designs also in DIR, by name and then by content hash, so a design that
moved or a trace saved on a server replays. A netlist is read as the
session read it: the trace records its format, the netlist flags given and
its inputs; a flag given here replaces what the trace records (for traces
written before railyard recorded them).

Exit status: 0 when everything matches, 1 when anything differs (the first
differences are printed as TRACE:LINE:COL: action N: ...), 2 when the
trace or its design cannot be read (a trace cut short or with lines
missing is an error, not a match).

examples:
  railyard run demo:` + designs.Default + ` --trace session.trace
  railyard replay session.trace
  railyard replay alice/opsel-20260304-050607-k3m9qa.trace --designs cells
  railyard run lib.sp --top opsel_latch --power vpwr --trace opsel.trace
  railyard replay opsel.trace
`

func cmdReplay(args []string, stdout, stderr io.Writer) int {
	fs := newFlags("replay", replayUsage)
	var opt trace.ReplayOptions
	fs.StringVar(&opt.Designs, "designs", "", "also look for the design in `DIR`, by name and by content hash")
	lf := addLoadFlags(fs)
	pos, code := parseArgs(fs, args, stdout, stderr)
	if code >= 0 {
		return code
	}
	if len(pos) != 1 {
		return usageError(stderr, "replay", "want one TRACE, got %d arguments", len(pos))
	}
	path := pos[0]
	files, err := lf.loader()
	if err != nil {
		return usageError(stderr, "replay", "%v", err)
	}
	opt.Files = files
	// Opened through the loader: a missing file or a folder is reported as
	// PATH: cannot read: why, and the stream is bounded in size (the trace
	// reader's own bound, with its position, comes first).
	f, err := load.Host(load.Options{}).Reader(path, trace.MaxReadBytes+trace.MaxLine+2)
	if err != nil {
		return loadError(stderr, err)
	}
	rep, err := trace.Replay(path, f, opt)
	f.Close()
	if err != nil {
		return loadError(stderr, err)
	}
	fmt.Fprintf(stdout, "replay %s: design %s, mode %s, %d actions\n", path, diag.Printable(rep.Design), rep.Header.Mode, rep.Actions)
	if rep.Capped > 0 {
		fmt.Fprintf(stdout, "the trace was capped: the %d actions the session took after these were not written\n", rep.Capped)
	}
	for _, n := range rep.Notes {
		fmt.Fprintln(stdout, "note: "+n)
	}
	if rep.Match() {
		fmt.Fprintln(stdout, "everything matches")
		return exitOK
	}
	for _, d := range rep.Differences {
		fmt.Fprintln(stdout, d)
	}
	n := rep.Count
	switch {
	case n == 1:
		fmt.Fprintln(stdout, "the replay differs from the trace: 1 difference")
	case n > len(rep.Differences):
		fmt.Fprintf(stdout, "the replay differs from the trace: %d differences, the first %d listed\n", n, len(rep.Differences))
	default:
		fmt.Fprintf(stdout, "the replay differs from the trace: %d differences\n", n)
	}
	return exitFail
}
