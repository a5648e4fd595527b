package main

import (
	"fmt"
	"io"

	"railyard/designs"
	"railyard/switchsim/load"
	"railyard/switchsim/session"
)

const replayUsage = `
usage: railyard replay TRACE

Re-run every action of a saved trace (railyard run --trace, or the
explorer's) on the design the trace names, and compare each recorded
result: rounds, node changes round by round, checks and warnings. A design
whose content changed since the trace was made is reported.

Exit status: 0 when everything matches, 1 when anything differs (the first
differences are printed as TRACE:LINE: ...), 2 when the trace or its design
cannot be read.

examples:
  railyard run demo:` + designs.Default + ` --trace session.trace
  railyard replay session.trace
`

// maxTraceBytes bounds the trace replay reads (a long session's trace is
// far larger than a design).
const maxTraceBytes = 1 << 30

func cmdReplay(args []string, stdout, stderr io.Writer) int {
	fs := newFlags("replay", replayUsage)
	pos, code := parseArgs(fs, args, stdout, stderr)
	if code >= 0 {
		return code
	}
	if len(pos) != 1 {
		return usageError(stderr, "replay", "want one TRACE, got %d arguments", len(pos))
	}
	path := pos[0]
	// Opened through the loader: a missing file or a folder is reported as
	// PATH: cannot read: why, and the stream is bounded in size.
	f, err := load.Host(load.Options{}).Reader(path, maxTraceBytes)
	if err != nil {
		return loadError(stderr, err)
	}
	t, err := session.ReadTrace(path, f)
	f.Close()
	if err != nil {
		return loadError(stderr, err)
	}
	rep, err := session.Replay(t)
	if err != nil {
		return loadError(stderr, err)
	}
	fmt.Fprintf(stdout, "replay %s: design %s, mode %s, %d actions\n", path, t.Design, t.Mode, rep.Actions)
	if rep.Match() {
		fmt.Fprintln(stdout, "everything matches")
		return exitOK
	}
	for _, d := range rep.Differences {
		fmt.Fprintln(stdout, d)
	}
	n := len(rep.Differences)
	switch {
	case n == 1:
		fmt.Fprintln(stdout, "the replay differs from the trace: 1 difference")
	case n >= session.MaxDifferences:
		fmt.Fprintf(stdout, "the replay differs from the trace: the first %d differences are listed\n", n)
	default:
		fmt.Fprintf(stdout, "the replay differs from the trace: %d differences\n", n)
	}
	return exitFail
}
