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
	"errors"
	"io"
	"io/fs"
	"os"
	"path"
	"path/filepath"
	"railyard/switchsim/internal/netbuild"
	"strings"

	"railyard/switchsim/diag"
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
	// Open reads an included file. nil reads from disk relative to the
	// including file (ReadFile) or refuses includes (Read).
	Open Opener
	// Limits bound what is read; zero fields take DefaultLimits.
	Limits Limits
}

// Opener reads the file a deck includes: from is the path of the
// including file (as an earlier Opener call or the caller named it), name
// the file name as written. It returns the path to show in positions and
// to give as from for the file's own includes, and the file's bytes. An
// Opener confines includes to where they may come from (DirOpener).
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
	return &netfile.Design{Name: nl.Name, Desc: nl.Desc, Netlist: nl, Source: src, File: file, Notes: notes.List()}, nil
}

// ReadFile reads a deck from disk; includes are read relative to the
// including file, from anywhere (the command line's trust). Servers use
// Read with DirOpener instead.
func ReadFile(p string, opt Options) (*netfile.Design, error) {
	lim := opt.Limits.orDefault()
	src, err := readLimited(p, lim.FileSize, func(name string) (fs.File, error) { return os.Open(name) })
	if err != nil {
		return nil, diag.List{{Pos: diag.Pos{File: p}, Msg: "cannot read: " + err.Error()}}
	}
	if opt.Open == nil {
		opt.Open = DiskOpener(lim.FileSize)
	}
	return Read(p, src, opt)
}

// DiskOpener reads includes from disk relative to the including file,
// anywhere; max bounds a file's size.
func DiskOpener(max int) Opener {
	return func(from, name string) (string, []byte, error) {
		p := name
		if !filepath.IsAbs(p) {
			p = filepath.Join(filepath.Dir(from), p)
		}
		src, err := readLimited(p, max, func(n string) (fs.File, error) { return os.Open(n) })
		return p, src, err
	}
}

// DirOpener reads includes inside the folder root only (railyard serve's
// --designs): from and the returned paths are relative to root, written
// with /; an include that leaves root, by .. or by a link, is refused.
func DirOpener(root string, max int) (Opener, error) {
	r, err := os.OpenRoot(root)
	if err != nil {
		return nil, err
	}
	return func(from, name string) (string, []byte, error) {
		name = filepath.ToSlash(name)
		if path.IsAbs(name) {
			return "", nil, errors.New("an include outside the allowed folder (an absolute path)")
		}
		p := path.Clean(path.Join(path.Dir(filepath.ToSlash(from)), name))
		if p == ".." || strings.HasPrefix(p, "../") {
			return "", nil, errors.New("an include outside the allowed folder")
		}
		src, err := readLimited(p, max, func(n string) (fs.File, error) { return r.Open(n) })
		if err != nil && strings.Contains(err.Error(), "escapes") {
			return "", nil, errors.New("an include outside the allowed folder (through a link)")
		}
		return p, src, err
	}, nil
}

// readLimited reads at most max+1 bytes (so that the size check can say
// where the limit was passed).
func readLimited(p string, max int, open func(string) (fs.File, error)) ([]byte, error) {
	f, err := open(p)
	if err != nil {
		var pe *fs.PathError
		if errors.As(err, &pe) {
			err = pe.Err
		}
		return nil, err
	}
	defer f.Close()
	if st, err := f.Stat(); err == nil && st.IsDir() {
		return nil, errors.New("is a directory")
	}
	return io.ReadAll(io.LimitReader(f, int64(max)+1))
}
