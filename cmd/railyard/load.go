package main

import (
	"fmt"
	"io"
	"strings"

	"railyard/switchsim/diag"
	"railyard/switchsim/load"
	"railyard/switchsim/netfile"
)

// loadFlags are the flags that choose how a design is read: its format and
// the options of netlists from elsewhere. Every command that reads a
// design takes them and reads through the loader they make.
type loadFlags struct {
	format, top, power, ground, inputs, nmos, pmos string
}

func addLoadFlags(fs *flags) *loadFlags {
	var f loadFlags
	fs.StringVar(&f.format, "format", "", "read DESIGN as `FORMAT`: "+strings.Join(load.FormatNames(), ", ")+" (default: by its extension)")
	f.addReader(fs)
	return &f
}

// addReaderFlags are the netlist flags without --format, for a command
// that reads many designs of their own extensions (serve).
func addReaderFlags(fs *flags) *loadFlags {
	var f loadFlags
	f.addReader(fs)
	return &f
}

func (f *loadFlags) addReader(fs *flags) {
	fs.StringVar(&f.top, "top", "", "netlists: the subcircuit or module `NAME` to read (default: the only one)")
	fs.StringVar(&f.power, "power", "", "netlists: the power rails' `NAMES`, comma-separated")
	fs.StringVar(&f.ground, "ground", "", "netlists: the ground rails' `NAMES`, comma-separated")
	fs.StringVar(&f.inputs, "inputs", "", "netlists: the input ports' `NAMES`, comma-separated (default: the steps' apply columns)")
	fs.StringVar(&f.nmos, "nmos-models", "", "netlists: nMOS model `NAMES` or * patterns, comma-separated")
	fs.StringVar(&f.pmos, "pmos-models", "", "netlists: pMOS model `NAMES` or * patterns, comma-separated")
}

// readOptions are the netlist readers' options the flags give.
func (f *loadFlags) readOptions() netfile.ReadOptions {
	return netfile.ReadOptions{Top: f.top, Power: commaList(f.power), Ground: commaList(f.ground), Inputs: commaList(f.inputs),
		NMOSModels: commaList(f.nmos), PMOSModels: commaList(f.pmos)}
}

// loader makes the command line's loader from the flags; an unknown
// --format is refused before anything is read.
func (f *loadFlags) loader() (*load.Loader, error) {
	if f.format != "" {
		if err := load.CheckFormat(f.format); err != nil {
			return nil, fmt.Errorf("--format: %v", err)
		}
	}
	return load.Host(load.Options{Format: f.format, ReadOptions: f.readOptions()}), nil
}

// commaList splits a flag's comma-separated names; nil when it is empty.
func commaList(s string) []string {
	var out []string
	for _, p := range strings.Split(s, ",") {
		if p = strings.TrimSpace(p); p != "" {
			out = append(out, p)
		}
	}
	return out
}

// printNotes writes what the reader noticed without refusing the design
// (implausible sizes, skipped elements), one FILE:LINE:COL: note: line
// each, to stderr: they are not errors and do not change the exit status.
func printNotes(stderr io.Writer, d *netfile.Design) {
	for _, n := range d.Notes {
		fmt.Fprintln(stderr, diag.Printable(n.Pos.String()+": note: "+n.Msg))
	}
}
