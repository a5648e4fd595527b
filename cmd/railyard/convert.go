package main

import (
	"bytes"
	"fmt"
	"io"

	"railyard/switchsim/load"
	"railyard/switchsim/netfile"
	"railyard/switchsim/outfile"
	"railyard/switchsim/steps"
)

const convertUsage = `
usage: railyard convert DESIGN [--steps FILE] [-o FILE] [netlist flags]

Write DESIGN as a flat .sw design: every instance expanded, every device
with its sizes, the node capacitances and the technology its models set,
the inputs and outputs, and an alias line for each name that the .sw
format spells otherwise (net<3> is net[3], shown as net<3>). Reading the
result gives the same netlist, so a netlist can be annotated (strengths,
charge classes, corners) and kept. What the reader noticed (skipped
elements, guessed inputs) heads the file as comments and goes to stderr.

A netlist's inputs are the ports its steps apply (--steps FILE, else
DESIGN's same-named .steps file), or --inputs. Without -o the design goes
to stdout. -o never replaces the design, its steps or a file it includes,
nor anything that is not a regular file, and is written whole or not at
all. Exit status: 0 written, 2 bad input (nothing written).

examples:
  railyard convert opsel_latch.sp -o opsel_latch.sw
  railyard convert demo:imm_select
  railyard convert lib.sp --top opsel_latch --inputs sel,reg,imm,clk -o opsel.sw
  railyard convert cell.cdl --power vpwr --ground vgnd --nmos-models 'nfet*' --pmos-models 'pfet*' -o cell.sw
`

func cmdConvert(args []string, stdout, stderr io.Writer) int {
	fs := newFlags("convert", convertUsage)
	var stepsName, out string
	fs.StringVar(&stepsName, "steps", "", "the steps `FILE` whose apply line names a netlist's inputs (default: DESIGN's same-named .steps file)")
	fs.StringVar(&out, "o", "", "write the .sw design to `FILE` (default: stdout)")
	lf := addLoadFlags(fs)
	pos, code := parseArgs(fs, args, stdout, stderr)
	if code >= 0 {
		return code
	}
	if len(pos) != 1 {
		return usageError(stderr, "convert", "want one DESIGN, got %d arguments", len(pos))
	}
	files, err := lf.loader()
	if err != nil {
		return usageError(stderr, "convert", "%v", err)
	}
	design := pos[0]
	ld, code := openForOutput(files, "convert", design, stepsName, out, stderr)
	if code >= 0 {
		return code
	}
	d := ld.Design
	printNotes(stderr, d)
	var buf bytes.Buffer
	if err := netfile.WriteConverted(&buf, d); err != nil {
		fmt.Fprintf(stderr, "railyard convert: %s: %v\n", files.Path(design), err)
		return exitUsage
	}
	noteExactNames(stderr, files, ld, buf.Bytes())
	return writeOutput("convert", out, inputKeeps(design, ld), buf.Bytes(), stdout, stderr)
}

// openForOutput refuses an output path that cannot be written (before
// anything is read), then reads the design with its steps (stepsName, or
// its default steps; none is fine) and reports a bad one. code is -1 to
// go on, else the exit code.
func openForOutput(files *load.Loader, cmd, design, stepsName, out string, stderr io.Writer) (*load.Loaded, int) {
	if out != "" {
		if err := outfile.Check(out, inputKeeps(design, &load.Loaded{StepsName: stepsName})...); err != nil {
			fmt.Fprintf(stderr, "railyard %s: -o: %v\n", cmd, err)
			return nil, exitUsage
		}
	}
	ld, err := files.Open(design, stepsName)
	if err != nil {
		return nil, loadError(stderr, err)
	}
	return ld, -1
}

// inputKeeps are the files an output must not replace: the design, its
// steps and what it includes.
func inputKeeps(design string, ld *load.Loaded) []outfile.Keep {
	keep := []outfile.Keep{{Path: design, What: "the design"}}
	if ld.StepsName != "" {
		keep = append(keep, outfile.Keep{Path: ld.StepsName, What: "the steps file"})
	}
	if ld.Design != nil {
		for _, inc := range ld.Design.Includes {
			keep = append(keep, outfile.Keep{Path: inc, What: "a file the design includes"})
		}
	}
	return keep
}

// writeOutput puts what a command made on stdout, or in out whole
// (outfile: never over keep, removed on an interrupt).
func writeOutput(cmd, out string, keep []outfile.Keep, b []byte, stdout, stderr io.Writer) int {
	if out == "" {
		if _, err := stdout.Write(b); err != nil {
			fmt.Fprintf(stderr, "railyard %s: %v\n", cmd, err)
			return exitUsage
		}
		return exitOK
	}
	defer outfile.HandleSignals()()
	if err := outfile.Write(out, keep, func(w io.Writer) error { _, err := w.Write(b); return err }); err != nil {
		fmt.Fprintf(stderr, "railyard %s: -o: %v\n", cmd, err)
		return exitUsage
	}
	return exitOK
}

// noteExactNames says when the steps a netlist was read with name nodes
// in a case the conversion does not take: a .sw design's names are exact,
// a netlist's cards match in any case.
func noteExactNames(stderr io.Writer, files *load.Loader, ld *load.Loaded, conv []byte) {
	if ld.Steps == nil || !ld.Design.FoldCase {
		return
	}
	back, err := netfile.Read("converted.sw", conv)
	if err != nil {
		return // WriteConverted's tests keep this from happening
	}
	if _, err := steps.Read(files.Path(ld.StepsName), ld.StepsSource, back.Netlist); err != nil {
		fmt.Fprintf(stderr, "railyard convert: note: %s names nodes in a case the .sw design does not: a .sw design's names are exact (the netlist's match in any case); spell them as the converted file does to use it with the conversion\n", files.Path(ld.StepsName))
	}
}
