package main

import (
	"errors"
	"fmt"
	"io"

	"railyard/designs"
	"railyard/switchsim"
	"railyard/switchsim/session"
)

const checkUsage = `
usage: railyard check DESIGN [--exhaustive] [--ideal]

Static checks of the design's structure: a node no device can drive, a gate
node with no driver, an input that drives nothing, a device whose channel
terminals are the same node, the rails joined by always-on devices.

With --exhaustive, every combination of 0 and 1 on the inputs is applied
from the design's initial state, in Gray-code order (each vector changes one
input), and each conflict, lost level, floating output, contention and
degraded output is reported with the first vector that causes it and the
number of vectors that do. Designs of up to 20 inputs are accepted.

Exit status: 1 when a conflict, a lost level or a floating output is found,
else 0; 2 on bad input.

examples:
  railyard check demo:` + designs.Default + `
  railyard check cells/opsel.sw --exhaustive
`

func cmdCheck(args []string, stdout, stderr io.Writer) int {
	fs := newFlags("check", checkUsage)
	exhaustive := fs.Bool("exhaustive", false, "apply every input combination (at most 20 inputs)")
	ideal := fs.Bool("ideal", false, "ideal mode: strengths only, no voltage estimates")
	lf := addLoadFlags(fs)
	pos, code := parseArgs(fs, args, stdout, stderr)
	if code >= 0 {
		return code
	}
	if len(pos) != 1 {
		return usageError(stderr, "check", "want one DESIGN, got %d arguments", len(pos))
	}
	opt := session.Options{Mode: switchsim.Physical}
	if *ideal {
		opt.Mode = switchsim.Ideal
	}
	// The design alone: a steps file beside it plays no part in the checks.
	files, err := lf.loader()
	if err != nil {
		return usageError(stderr, "check", "%v", err)
	}
	d, err := files.Design(pos[0])
	if err != nil {
		return loadError(stderr, err)
	}
	printNotes(stderr, d)
	s := session.New(d, files.Path(pos[0]), nil, opt)
	nl := s.Netlist()
	fmt.Fprintf(stdout, "design %s (%s): %d nodes, %d devices, %d inputs\n",
		s.Design.Name, s.DesignPath, nl.NumNodes(), nl.NumDevices(), len(nl.Inputs()))

	static := session.StaticCheck(nl)
	fmt.Fprintf(stdout, "\nstatic checks: %s\n", countFindings(len(static)))
	for _, f := range static {
		fmt.Fprintf(stdout, "  %-16s %s\n", f.Kind, f.Message)
	}
	failing := session.AnyFailing(static)
	others := 0 // exhaustive findings

	if *exhaustive {
		var progress func(done, total int)
		if isTerminal(stderr) {
			progress = func(done, total int) {
				fmt.Fprintf(stderr, "\rrailyard check: %d/%d vectors", done, total)
				if done == total {
					fmt.Fprintln(stderr)
				}
			}
		}
		rep, err := s.Exhaustive(session.ExhaustiveOptions{Progress: progress})
		var tooMany *session.TooManyInputsError
		if errors.As(err, &tooMany) {
			fmt.Fprintf(stderr, "railyard check: %v; run the static checks alone, or drive some inputs from a steps file with railyard run\n", err)
			return exitUsage
		}
		if err != nil {
			fmt.Fprintf(stderr, "railyard check: %v\n", err)
			return exitUsage
		}
		fmt.Fprintf(stdout, "\nexhaustive: %d vectors over %d inputs, %s\n", rep.Vectors, len(rep.Inputs), countFindings(len(rep.Findings)))
		for _, f := range rep.Findings {
			fmt.Fprintf(stdout, "  %-16s %s\n", f.Kind, f.Message)
			fmt.Fprintf(stdout, "  %-16s first at %s; %d of %d vectors\n", "", vectorText(f.Vector), f.Count, rep.Vectors)
		}
		failing = failing || session.AnyFailing(rep.Findings)
		others = len(rep.Findings)
	}
	if failing {
		fmt.Fprintln(stdout, "\nresult: FAIL (a conflict, a lost level or a floating output)")
		return exitFail
	}
	if n := len(static) + others; n > 0 {
		fmt.Fprintf(stdout, "\nresult: PASS (%s, none a conflict, a lost level or a floating output)\n", countFindings(n))
	} else {
		fmt.Fprintln(stdout, "\nresult: PASS")
	}
	return exitOK
}

func countFindings(n int) string {
	switch n {
	case 0:
		return "no findings"
	case 1:
		return "1 finding"
	}
	return fmt.Sprintf("%d findings", n)
}

func vectorText(v string) string {
	if v == "" {
		return "(no inputs)"
	}
	return v
}
