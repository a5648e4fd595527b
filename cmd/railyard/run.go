package main

import (
	"fmt"
	"io"
	"path/filepath"
	"slices"

	"railyard/designs"
	"railyard/switchsim"
	"railyard/switchsim/load"
	"railyard/switchsim/outfile"
	"railyard/switchsim/session"
	"railyard/switchsim/trace"
	"railyard/switchsim/wave"
)

const runUsage = `
usage: railyard run DESIGN [--steps FILE] [--json] [--ideal] [--full-swing] [--trace FILE] [--vcd FILE]
                    [--glitches] [--min-margin V] [--corner NAME | --corners]

Settle the design, apply each row of its steps file (FILE, or DESIGN's
same-named .steps file), check the nodes the steps name, and print a report.
Without steps the report shows the design's initial settle. DESIGN may be
a .sw design or a netlist (cards, an IEEE 1364 module); the netlist flags
say how to read one.

Exit status: 0 when every check passes, 1 when one fails, 2 on bad input
(nothing is written to --trace or --vcd then). --trace and --vcd never
replace the design, its steps, each other, or anything that is not a
regular file; they are checked before anything runs and written whole at
the end (a temporary file renamed into place, removed on an interrupt).
In physical mode the VCD also holds each node's estimated voltage.

--glitches looks at every step that changes one input for pulses it may
cause (a node the step may take through X and back), as check --exhaustive
does, and warns of each: the steps file check --save-steps writes for a
glitch or hazard shows it with this flag. The trace records it.

In physical mode each node line and check shows its margin: V - VIH for a
1, VIL - V for a 0 (a check's for the value it wants, so a failing check
says by how much). --min-margin V fails a check whose margin is below V
volts. --corner NAME runs at one of the design's technology corners
(corner statements); --corners runs the design's own technology and every
corner and prints one table of the checks by corner with their margins and
the worst corner of each (exit 1 if any corner fails; --json: each
corner's report, every line naming its corner). The figures are
first-order estimates, not sign-off.

examples:
  railyard run demo:` + designs.Default + `
  railyard run cells/opsel.sw --steps cells/opsel.steps
  railyard run cells/opsel.sw --json > run.jsonl
  railyard run cells/opsel.sw --trace opsel.trace --vcd opsel.vcd
  railyard run cells/opsel.sw --ideal --full-swing
  railyard run demo:opsel_latch
  railyard run lib/oplatch.cdl --top oplatch --power vpwr --ground vgnd --steps oplatch.steps
  railyard run demo:keeper_corner --corners
  railyard run cells/opsel.sw --corner slow --min-margin 0.1
`

// runOptions are the flags of `run`.
type runOptions struct {
	steps, trace, vcd      string
	json, ideal, fullSwing bool
	glitches               bool
	corner                 string
	corners                bool
	minMargin              voltsFlag
	load                   *loadFlags // nil: the defaults
}

func cmdRun(args []string, stdout, stderr io.Writer) int {
	fs := newFlags("run", runUsage)
	var o runOptions
	fs.StringVar(&o.steps, "steps", "", "the steps `FILE` (default: DESIGN's same-named .steps file)")
	fs.BoolVar(&o.json, "json", false, "print JSON lines (switchsim/FORMATS.md) instead of the text report")
	fs.BoolVar(&o.ideal, "ideal", false, "ideal mode: strengths only, no voltage estimates")
	fs.BoolVar(&o.fullSwing, "full-swing", false, "0 and 1 checks also require the strong full-level states")
	fs.StringVar(&o.trace, "trace", "", "save the session trace to `FILE` (for railyard replay)")
	fs.StringVar(&o.vcd, "vcd", "", "write a VCD waveform of every node to `FILE` (with voltages in physical mode)")
	fs.BoolVar(&o.glitches, "glitches", false, "warn of pulses a one-input step may cause, as check --exhaustive does")
	fs.Var(&o.minMargin, "min-margin", "fail a check whose margin is below `V` volts (physical mode)")
	fs.StringVar(&o.corner, "corner", "", "run at the design's technology corner `NAME` (nominal: its own technology)")
	fs.BoolVar(&o.corners, "corners", false, "run the nominal technology and every corner; print one table of checks by corner")
	o.load = addLoadFlags(fs)
	pos, code := parseArgs(fs, args, stdout, stderr)
	if code >= 0 {
		return code
	}
	if len(pos) != 1 {
		return usageError(stderr, "run", "want one DESIGN, got %d arguments", len(pos))
	}
	switch {
	case o.ideal && o.minMargin.set:
		return usageError(stderr, "run", "--min-margin needs physical mode: ideal mode has no voltages")
	case o.ideal && (o.corners || o.corner != ""):
		return usageError(stderr, "run", "--corner and --corners need physical mode: ideal mode reads no technology")
	case o.corners && o.corner != "":
		return usageError(stderr, "run", "--corners runs every corner; give it or --corner NAME, not both")
	case o.corners && (o.trace != "" || o.vcd != ""):
		return usageError(stderr, "run", "--trace and --vcd record one run; with --corners give --corner NAME instead")
	}
	if o.corners {
		return runCorners(pos[0], o, stdout, stderr)
	}
	return runDesign(pos[0], o, stdout, stderr)
}

// runDesign runs a design's steps and reports. Every output path is
// checked before anything is simulated; the report streams as the steps
// run; the files are put in place only once the run has succeeded.
func runDesign(design string, o runOptions, stdout, stderr io.Writer) int {
	if o.load == nil {
		o.load = &loadFlags{}
	}
	files, err := o.load.loader()
	if err != nil {
		return usageError(stderr, "run", "%v", err)
	}
	keep, err := checkOutputs(files, design, o)
	if err != nil {
		fmt.Fprintf(stderr, "railyard run: %v\n", err)
		return exitUsage
	}
	if o.trace != "" || o.vcd != "" {
		defer outfile.HandleSignals()()
	}
	s, err := session.OpenFrom(files, design, o.steps, o.sessionOptions())
	if err != nil {
		return loadError(stderr, err)
	}
	printNotes(stderr, s.Design())
	var tw *trace.Writer
	if o.trace != "" {
		if tw, err = trace.Start(s, filepath.Dir(o.trace), trace.Options{}); err != nil {
			fmt.Fprintf(stderr, "railyard run: --trace %s: %v\n", o.trace, err)
			return exitUsage
		}
		defer tw.Close()
	}
	var vf *outfile.File
	var vw *wave.Writer
	if o.vcd != "" {
		if vf, err = outfile.Create(o.vcd, keep.vcd...); err != nil {
			fmt.Fprintf(stderr, "railyard run: --vcd: %v\n", err)
			return exitUsage
		}
		defer vf.Abort() // harmless after Commit
		vw = wave.NewWriter(vf, s, wave.Options{Version: version})
		vw.Add(s.Last(), s.Node)
	}
	format := session.Text
	if o.json {
		format = session.JSON
	}
	rep := session.NewReport(stdout, s, format)
	if s.NumSteps() == 0 {
		rep.Add(s.Last(), s) // a design without steps: its resting state
	}
	for {
		e, ok := s.Next()
		if !ok {
			break
		}
		rep.Add(e, s)
		if vw != nil {
			vw.Add(e, s.Node)
		}
	}
	sum, err := rep.Close()
	if err != nil {
		fmt.Fprintf(stderr, "railyard run: %v\n", err)
		return exitUsage
	}
	if tw != nil {
		saved, err := tw.Save(o.trace, keep.trace...)
		if err != nil {
			fmt.Fprintf(stderr, "railyard run: writing the trace: %v\n", err)
			return exitUsage
		}
		if saved.Skipped > 0 {
			fmt.Fprintf(stderr, "railyard run: %s: %s; it holds the first %d actions, the last %d were not written\n",
				o.trace, saved.Why, saved.Actions, saved.Skipped)
		}
	}
	if vw != nil {
		vw.Close()
		if err := vf.Commit(); err != nil {
			fmt.Fprintf(stderr, "railyard run: writing the waveform: %v\n", err)
			return exitUsage
		}
	}
	if !sum.Pass() {
		return exitFail
	}
	return exitOK
}

// sessionOptions are the session's options from the flags.
func (o runOptions) sessionOptions() session.Options {
	opt := session.Options{Mode: switchsim.Physical, FullSwing: o.fullSwing, Corner: o.corner,
		MarginCheck: o.minMargin.set, MinMargin: o.minMargin.v, Glitches: o.glitches}
	if o.ideal {
		opt.Mode = switchsim.Ideal
	}
	return opt
}

// outputKeep are the files each output must keep clear of.
type outputKeep struct{ trace, vcd []outfile.Keep }

// checkOutputs refuses --trace and --vcd paths that would replace the
// run's own inputs (the design, its steps), each other, or anything that is
// not a regular file, before anything is simulated.
func checkOutputs(files *load.Loader, design string, o runOptions) (outputKeep, error) {
	inputs := []outfile.Keep{{Path: design, What: "the design"}}
	st := o.steps
	if st == "" {
		st, _ = files.DefaultSteps(design)
	}
	if st != "" {
		inputs = append(inputs, outfile.Keep{Path: st, What: "the steps file"})
	}
	k := outputKeep{trace: inputs, vcd: inputs}
	if o.trace != "" && o.vcd != "" {
		k.trace = append(slices.Clip(inputs), outfile.Keep{Path: o.vcd, What: "the --vcd output"})
		k.vcd = append(slices.Clip(inputs), outfile.Keep{Path: o.trace, What: "the --trace output"})
	}
	if o.trace != "" {
		if err := outfile.Check(o.trace, inputs...); err != nil {
			return k, fmt.Errorf("--trace: %w", err)
		}
	}
	if o.vcd != "" {
		if err := outfile.Check(o.vcd, k.vcd...); err != nil {
			return k, fmt.Errorf("--vcd: %w", err)
		}
	}
	return k, nil
}

// batchDefault is bare `railyard` off a terminal: the demo's batch report,
// exit 0 whatever its checks say (switchsim/FORMATS.md).
func batchDefault(stdout, stderr io.Writer) int {
	if code := runDesign(load.DemoPrefix+designs.Default, runOptions{}, stdout, stderr); code == exitUsage {
		return code
	}
	return exitOK
}

// version names the program in VCD headers.
const version = "railyard (switch-level simulator)"
