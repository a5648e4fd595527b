package main

import (
	"bytes"
	"fmt"
	"io"
	"strings"

	"railyard/switchsim"
	"railyard/switchsim/cardfile"
	"railyard/switchsim/netfile"
)

const exportUsage = `
usage: railyard export DESIGN [--steps FILE] [--period T] [--edge T] [--ideal]
       [--corner NAME] [--nmos-models NAMES] [--pmos-models NAMES] [-o FILE]
       [netlist flags]

Write a testbench in the transistor-netlist card format, to confirm in a
circuit simulator what railyard found: the cell as a subcircuit with its
sizes and node capacitances; level-1 models from the technology, or the
models --nmos-models and --pmos-models name (the first plain name of each
list; the lists also type a netlist's models when DESIGN is one); the
supply; one piecewise-linear source per input from the steps (one period
a step, each change ramping over the edge time; an input released with z
is cut off by a voltage-controlled switch for the steps it floats);
initial conditions for the nodes that float from the start; a transient
analysis over every step; and a measure line per check at the end of its
step, with what railyard expects beside it. The cell's initial conditions
follow physical mode, or ideal mode with --ideal. --corner NAME writes the
deck at one of the design's corners (a .sw design's corner statement).

T is a time in seconds with an SI prefix, a trailing s allowed: 5n, 5ns,
100ps. The steps are FILE, else DESIGN's same-named .steps file; a
testbench needs some. Without -o the deck goes to stdout. -o never
replaces the design, its steps or a file it includes, nor anything that is
not a regular file. Exit status: 0 written, 2 bad input (nothing written).

examples:
  railyard export demo:opsel_latch -o opsel_tb.sp
  railyard export opsel_latch.sp --steps found/level-lost-s.steps --period 5n --edge 50p -o confirm.sp
  railyard export cells/latch.sw --nmos-models nch --pmos-models pch -o latch_tb.sp
  railyard export cells/latch.sw --corner slow -o latch_slow_tb.sp
`

func cmdExport(args []string, stdout, stderr io.Writer) int {
	fs := newFlags("export", exportUsage)
	var stepsName, out, period, edge, corner string
	var ideal bool
	fs.StringVar(&stepsName, "steps", "", "the steps `FILE` the sources follow (default: DESIGN's same-named .steps file)")
	fs.StringVar(&period, "period", "10n", "the time `T` each step lasts")
	fs.StringVar(&edge, "edge", "100p", "the rise and fall time `T` of the inputs")
	fs.BoolVar(&ideal, "ideal", false, "initial conditions from ideal mode (default: physical mode)")
	fs.StringVar(&out, "o", "", "write the deck to `FILE` (default: stdout)")
	fs.StringVar(&corner, "corner", "", "the deck at the design's corner `NAME` (its corner statement): models, supply and sizes from that technology")
	lf := addLoadFlags(fs)
	pos, code := parseArgs(fs, args, stdout, stderr)
	if code >= 0 {
		return code
	}
	if len(pos) != 1 {
		return usageError(stderr, "export", "want one DESIGN, got %d arguments", len(pos))
	}
	opt := cardfile.DeckOptions{Mode: switchsim.Physical}
	if ideal {
		opt.Mode = switchsim.Ideal
	}
	var err error
	if opt.Period, err = seconds(period); err != nil {
		return usageError(stderr, "export", "--period %s: %v", period, err)
	}
	if opt.Edge, err = seconds(edge); err != nil {
		return usageError(stderr, "export", "--edge %s: %v", edge, err)
	}
	if opt.NMOSModel, err = modelName(lf.nmos); err != nil {
		return usageError(stderr, "export", "--nmos-models: %v", err)
	}
	if opt.PMOSModel, err = modelName(lf.pmos); err != nil {
		return usageError(stderr, "export", "--pmos-models: %v", err)
	}
	files, err := lf.loader()
	if err != nil {
		return usageError(stderr, "export", "%v", err)
	}
	design := pos[0]
	ld, code := openForOutput(files, "export", design, stepsName, out, stderr)
	if code >= 0 {
		return code
	}
	if ld.Steps == nil {
		fmt.Fprintf(stderr, "railyard export: %s: a testbench needs steps: give --steps FILE (there is no same-named .steps file beside it)\n", files.Path(design))
		return exitUsage
	}
	printNotes(stderr, ld.Design)
	nl, err := atCorner(ld.Design, corner)
	if err != nil {
		fmt.Fprintf(stderr, "railyard export: %s: --corner: %v\n", files.Path(design), err)
		return exitUsage
	}
	opt.Source = files.Path(design) + " with " + files.Path(ld.StepsName)
	if corner != "" {
		opt.Source += " at corner " + corner
	}
	var buf bytes.Buffer
	if err := cardfile.WriteDeck(&buf, nl, ld.Steps, opt); err != nil {
		fmt.Fprintf(stderr, "railyard export: %s: %v\n", files.Path(design), err)
		return exitUsage
	}
	return writeOutput("export", out, inputKeeps(design, ld), buf.Bytes(), stdout, stderr)
}

// atCorner is the design's netlist at its corner name ("": the nominal
// technology).
func atCorner(d *netfile.Design, name string) (*switchsim.Netlist, error) {
	if name == "" {
		return d.Netlist, nil
	}
	var names []string
	for _, c := range d.Corners {
		if c.Name == name {
			return d.Netlist.WithTech(c.Tech)
		}
		names = append(names, c.Name)
	}
	if len(names) == 0 {
		return nil, fmt.Errorf("the design names no corners (a .sw design's corner statements do)")
	}
	return nil, fmt.Errorf("no corner %q (the design's: %s)", name, strings.Join(names, ", "))
}

// seconds reads a time: a number with an SI prefix (netfile's numbers),
// a trailing s allowed, more than 0.
func seconds(s string) (float64, error) {
	v, err := netfile.ParseNumber(s)
	if err != nil && strings.HasSuffix(s, "s") {
		v, err = netfile.ParseNumber(strings.TrimSuffix(s, "s"))
	}
	switch {
	case err != nil:
		return 0, fmt.Errorf("want a time such as 5n, 5ns or 100ps")
	case !(v > 0) || v > 1:
		return 0, fmt.Errorf("want a time above 0 and at most 1 s")
	}
	return v, nil
}

// modelName is the model a deck's transistor cards name: the first plain
// name of a --nmos-models or --pmos-models list ("" for none given).
func modelName(list string) (string, error) {
	names := commaList(list)
	for _, n := range names {
		if !strings.ContainsAny(n, "*?") {
			return n, nil
		}
	}
	if len(names) > 0 {
		return "", fmt.Errorf("the deck needs a model's name, and %q holds only patterns: put the name first", list)
	}
	return "", nil
}
