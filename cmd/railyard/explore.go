package main

import (
	"fmt"
	"io"
	"path/filepath"

	"railyard/designs"
	"railyard/switchsim"
	"railyard/switchsim/load"
	"railyard/switchsim/outfile"
	"railyard/switchsim/session"
	"railyard/switchsim/trace"
	"railyard/tui"
)

const exploreUsage = `
usage: railyard explore [DESIGN] [--steps FILE] [--trace FILE] [--ideal] [--full-swing] [--ascii]
                        [--corner NAME] [--glitches]

The interactive explorer: toggle inputs, step through the steps file, watch
values settle round by round, ask why a node holds its value, search every
reachable state (a), switch ideal and physical mode on the live session
(i), try another size on a transistor (W in Devices), move to the design's
next technology corner (c: nominal, then each corner, the history
re-simulated). DESIGN defaults to the embedded demo. With --trace the
session's trace is saved to FILE when the explorer quits. --ideal,
--full-swing and --glitches are those of run; --corner NAME starts at one
of the design's corners.

examples:
  railyard explore
  railyard explore cells/opsel.sw --steps cells/opsel.steps --trace opsel.trace
  railyard explore demo:strong_keeper --ideal
  railyard explore demo:` + designs.Default + ` --ascii
  railyard explore demo:opsel_latch
  railyard explore lib/oplatch.cdl --top oplatch --inputs d,clk
`

// exploreOptions are the flags of `explore`.
type exploreOptions struct {
	steps, trace            string
	corner                  string
	ascii, ideal, fullSwing bool
	glitches                bool
	load                    *loadFlags
}

func cmdExplore(args []string, stdout, stderr io.Writer) int {
	fs := newFlags("explore", exploreUsage)
	var o exploreOptions
	fs.StringVar(&o.steps, "steps", "", "the steps `FILE` (default: DESIGN's same-named .steps file)")
	fs.StringVar(&o.trace, "trace", "", "save the session trace to `FILE` on quitting")
	fs.BoolVar(&o.ascii, "ascii", false, "draw with ASCII only")
	fs.BoolVar(&o.ideal, "ideal", false, "start in ideal mode: strengths only, no voltage estimates (i switches)")
	fs.BoolVar(&o.fullSwing, "full-swing", false, "0 and 1 checks also require the strong full-level states")
	fs.BoolVar(&o.glitches, "glitches", false, "warn of pulses a one-input step may cause, as check --exhaustive does")
	fs.StringVar(&o.corner, "corner", "", "start at the design's technology corner `NAME` (nominal: its own technology)")
	o.load = addLoadFlags(fs)
	pos, code := parseArgs(fs, args, stdout, stderr)
	if code >= 0 {
		return code
	}
	design := load.DemoPrefix + designs.Default
	switch len(pos) {
	case 0:
	case 1:
		design = pos[0]
	default:
		return usageError(stderr, "explore", "want at most one DESIGN, got %d arguments", len(pos))
	}
	files, err := o.load.loader()
	if err != nil {
		return usageError(stderr, "explore", "%v", err)
	}
	if o.trace != "" {
		keep := []outfile.Keep{{Path: design, What: "the design"}, {Path: o.steps, What: "the steps file"}}
		if st, ok := files.DefaultSteps(design); ok && o.steps == "" {
			keep[1].Path = st
		}
		if err := outfile.Check(o.trace, keep...); err != nil {
			fmt.Fprintf(stderr, "railyard explore: --trace: %v\n", err)
			return exitUsage
		}
	}
	s, err := session.OpenFrom(files, design, o.steps, o.sessionOptions())
	if err != nil {
		return loadError(stderr, err)
	}
	printNotes(stderr, s.Design())
	// The session always records its trace, so that the save key works;
	// it streams beside --trace when given.
	dir := ""
	if o.trace != "" {
		dir = filepath.Dir(o.trace)
	}
	w, err := trace.Start(s, dir, trace.Options{})
	if err != nil {
		fmt.Fprintf(stderr, "railyard explore: %v\n", err)
		return exitUsage
	}
	defer w.Close()
	return startExplorer(s, o, stderr)
}

// sessionOptions are the session's options from the flags: physical mode
// unless --ideal, as run.
func (o exploreOptions) sessionOptions() session.Options {
	opt := session.Options{Mode: switchsim.Physical, FullSwing: o.fullSwing, Corner: o.corner, Glitches: o.glitches}
	if o.ideal {
		opt.Mode = switchsim.Ideal
	}
	return opt
}

// startExplorer hands the session to the explorer, which saves the trace
// on quitting when --trace was given.
func startExplorer(s *session.Session, o exploreOptions, stderr io.Writer) int {
	if err := tui.Run(s, tui.Options{TracePath: o.trace, ASCII: o.ascii}); err != nil {
		fmt.Fprintf(stderr, "railyard explore: %v\n", err)
		return exitUsage
	}
	return exitOK
}
