// Package cardfile reads transistor netlists: the card format that cell
// libraries, schematic and layout extraction and circuit simulators
// exchange ("netlist cards"). A deck becomes a *netfile.Design that the
// engine runs like a .sw design: M cards and transistor-model X instances
// are nMOS and pMOS devices, R cards resistive devices (IEEE 1364-2005
// §7.12 in ideal mode, their resistance in physical mode), C cards node
// capacitance, nmos/pmos .model cards the technology. Everything the
// switch-level model has no place for is listed in Design.Notes.
//
// Reading goes in stages: the scanner joins + continuations into cards
// with the positions of their physical lines and reads includes in place;
// the parser groups cards into subcircuits, models and parameters; the
// flattener expands the chosen top into a netbuild.Design with
// hierarchical names (x1.mn3), which names everything and compiles it.
// Every error carries FILE:LINE:COL and all of them are reported.
// The README beside this file describes what is accepted.
package cardfile

import (
	"railyard/switchsim/diag"
	"railyard/switchsim/internal/netbuild"
	"railyard/switchsim/netfile"
)

// Options say how to read a deck (the command line's flags).
type Options struct {
	// Top names the subcircuit that is the design (--top); "" takes the
	// only subcircuit no other one instantiates, or the top level when it
	// holds devices of its own.
	Top string
	// Power and Ground are the rail names (--power, --ground), any case;
	// nil takes the defaults vdd vcc vpwr vdd! and gnd vss vgnd gnd! 0.
	Power, Ground []string
	// Inputs are the ports driven from outside: the columns a steps file
	// applies, or --inputs. Ports marked :I by *.pininfo are inputs too.
	// When none is known, ports that only reach gates are inputs, ports
	// with a channel path to a rail outputs, and the rest inputs (a note
	// says so).
	Inputs []string
	// NMOSModels and PMOSModels type model names that no .model card
	// defines (--nmos-models, --pmos-models): names or * patterns, any case.
	NMOSModels, PMOSModels []string
	// Open reads an included file (the loader's ReadOptions.Include); nil
	// refuses includes. The reader never opens a file itself.
	Open Opener
	// Limits bound what is read; zero fields take DefaultLimits.
	Limits Limits
}

// Opener reads the file a deck includes: from is the path of the
// including file (as an earlier Opener call or the caller named it), name
// the file name as written. It returns the path to show in positions and
// to give as from for the file's own includes, and the file's bytes. The
// Opener confines includes to where they may come from: the loader's
// (switchsim/load) never leaves the folder the deck was loaded from.
type Opener func(from, name string) (path string, src []byte, err error)

// Limits bound what the reader accepts, so that memory and time stay
// bounded on any input.
type Limits struct {
	FileSize     int // bytes in one file
	TotalSize    int // bytes in the deck and every include together
	LineLen      int // bytes in one physical line
	CardWords    int // words in one card with its continuations
	IncludeDepth int // includes nested inside includes
	Includes     int // include cards read
	Depth        int // subcircuit instances nested inside instances
	Devices      int // devices once every instance is expanded
	Elements     int // element cards expanded (devices and capacitors)
	NameBytes    int // bytes in one name as written
	Errors       int // errors kept before the rest are only counted
	Notes        int // notes kept before the rest are only counted
}

// DefaultLimits are the limits used where Options.Limits leaves a zero.
func DefaultLimits() Limits {
	return Limits{FileSize: 16 << 20, TotalSize: 64 << 20, LineLen: 64 << 10, CardWords: 1 << 16, IncludeDepth: 16,
		Includes: 256, Depth: 64, Devices: 2_000_000, Elements: 8_000_000, NameBytes: 1024, Errors: 100, Notes: 100}
}

func (l Limits) orDefault() Limits {
	d := DefaultLimits()
	for _, f := range []struct{ v, d *int }{{&l.FileSize, &d.FileSize}, {&l.TotalSize, &d.TotalSize}, {&l.LineLen, &d.LineLen},
		{&l.CardWords, &d.CardWords}, {&l.IncludeDepth, &d.IncludeDepth}, {&l.Includes, &d.Includes}, {&l.Depth, &d.Depth},
		{&l.Devices, &d.Devices}, {&l.Elements, &d.Elements}, {&l.NameBytes, &d.NameBytes}, {&l.Errors, &d.Errors}, {&l.Notes, &d.Notes}} {
		if *f.v <= 0 {
			*f.v = *f.d
		}
	}
	return l
}

// Read reads a deck from src; file names it in positions and is the from
// of its includes. Errors come back as a diag.List, every one with its
// position; notes (skipped elements, typed models, scaled sizes) are in
// the Design's Notes.
func Read(file string, src []byte, opt Options) (*netfile.Design, error) {
	lim := opt.Limits.orDefault()
	errs, notes := netbuild.NewSink(lim.Errors), netbuild.NewSink(lim.Notes)
	s := &scanner{lim: lim, open: opt.Open, errs: errs, notes: notes, seen: map[string]bool{file: true}}
	s.file(file, src, true)
	if s.skipUntil != "" {
		errs.Add(s.skipPos, "block has no %s", s.skipUntil)
	}
	if errs.Any() {
		return nil, errs.Err()
	}
	d := parse(s.cards, errs, notes)
	d.title = s.title
	if errs.Any() {
		return nil, errs.Err()
	}
	f := newFlattener(file, d, opt, lim, errs, notes)
	nl := f.run()
	if errs.Any() || nl == nil {
		if !errs.Any() {
			errs.Add(diag.Pos{File: file}, "the netlist could not be built")
		}
		return nil, errs.Err()
	}
	return &netfile.Design{Name: nl.Name, Desc: nl.Desc, Netlist: nl, Source: src, File: file, Notes: notes.List(), FoldCase: true}, nil
}

// ReadWith is Read with the options the loader fills (the Reader of
// switchsim/load's registry): the flags, and Include as the opener, which
// reads relative to the including file and never outside where the deck
// came from.
func ReadWith(file string, src []byte, o netfile.ReadOptions) (*netfile.Design, error) {
	return Read(file, src, Options{Top: o.Top, Power: o.Power, Ground: o.Ground, Inputs: o.Inputs,
		NMOSModels: o.NMOSModels, PMOSModels: o.PMOSModels, Open: o.Include})
}
