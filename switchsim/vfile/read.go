// Package vfile reads IEEE 1364-2005 switch-level modules: module ...
// endmodule with ANSI or list-style ports, input output inout wire tri
// supply0 supply1 trireg declarations, the switch primitives of §7 with
// their terminal orders, pullup and pulldown with strengths, and
// instances of other modules with ordered or named connections. A file
// becomes a *netfile.Design the engine runs like a .sw design. Anything
// outside that subset (behavioural code, assign, gate primitives, UDPs)
// is an error with its position that says what is read.
//
// Primitives become railyard devices: nmos and tranif1 nMOS, pmos and
// tranif0 pMOS, cmos an nMOS and a pMOS in parallel (a transmission gate),
// tran an always-on link, and the r-forms the same with the strength
// reduction of §7.12. Channels conduct both ways, as the transistors the
// primitives stand for do. supply1 and supply0 nets are the rails.
package vfile

import (
	"railyard/switchsim/diag"
	"railyard/switchsim/internal/netbuild"
	"railyard/switchsim/netfile"
)

// Options say how to read a file (the command line's flags).
type Options struct {
	// Top names the module that is the design (--top); "" takes the only
	// module no other one instantiates.
	Top string
	// Power and Ground name rails besides the supply1 and supply0 nets
	// (--power, --ground); nil takes the defaults vdd vcc vpwr vdd! and
	// gnd vss vgnd gnd! 0.
	Power, Ground []string
	// Inputs are ports driven from outside besides the input ports: the
	// columns a steps file applies, or --inputs (inout ports a test drives).
	Inputs []string
	// Limits bound what is read; zero fields take DefaultLimits.
	Limits Limits
}

// Limits bound what the reader accepts.
type Limits struct {
	FileSize   int // bytes
	Tokens     int // tokens in the file
	Depth      int // module instances nested inside instances
	Devices    int // devices once every instance is expanded
	VectorBits int // bits in one vector
	Terms      int // connections of one instance
	NameBytes  int // bytes in one name
	Errors     int // errors kept before the rest are only counted
	Notes      int // notes kept
}

// DefaultLimits are the limits used where Options.Limits leaves a zero.
func DefaultLimits() Limits {
	return Limits{FileSize: 16 << 20, Tokens: 8 << 20, Depth: 64, Devices: 2_000_000, VectorBits: 4096, Terms: 65536,
		NameBytes: 1024, Errors: 100, Notes: 100}
}

func (l Limits) orDefault() Limits {
	d := DefaultLimits()
	for _, f := range []struct{ v, d *int }{{&l.FileSize, &d.FileSize}, {&l.Tokens, &d.Tokens}, {&l.Depth, &d.Depth},
		{&l.Devices, &d.Devices}, {&l.VectorBits, &d.VectorBits}, {&l.Terms, &d.Terms}, {&l.NameBytes, &d.NameBytes},
		{&l.Errors, &d.Errors}, {&l.Notes, &d.Notes}} {
		if *f.v <= 0 {
			*f.v = *f.d
		}
	}
	return l
}

// Read reads a module file from src; file names it in positions. Errors
// come back as a diag.List, each with its position.
func Read(file string, src []byte, opt Options) (*netfile.Design, error) {
	lim := opt.Limits.orDefault()
	errs, notes := netbuild.NewSink(lim.Errors), netbuild.NewSink(lim.Notes)
	if e := diag.CheckSize(file, src, lim.FileSize); e != nil {
		return nil, diag.List{e}
	}
	if e := diag.CheckText(file, src); e != nil {
		return nil, diag.List{e}
	}
	if len(src) >= 3 && src[0] == 0xEF && src[1] == 0xBB && src[2] == 0xBF {
		src = src[3:]
	}
	lx := &lexer{file: file, src: src, line: 1, col: 1, errs: errs, notes: notes}
	p := &parser{toks: lx.all(lim.Tokens), errs: errs, notes: notes, lim: lim, mods: map[string]*module{}}
	p.source()
	if errs.Any() {
		return nil, errs.Err()
	}
	if len(p.order) == 0 {
		return nil, diag.List{{Pos: diag.Pos{File: file}, Msg: "the file holds no module"}}
	}
	f := newFlattener(file, p, opt, lim, errs, notes)
	nl := f.run()
	if errs.Any() || nl == nil {
		if !errs.Any() {
			errs.Add(diag.Pos{File: file}, "the netlist could not be built")
		}
		return nil, errs.Err()
	}
	return &netfile.Design{Name: nl.Name, Desc: nl.Desc, Netlist: nl, Source: src, File: file, Notes: notes.List()}, nil
}

// ReadWith is Read with the options the loader fills (the Reader of
// switchsim/load's registry); a module file includes nothing.
func ReadWith(file string, src []byte, o netfile.ReadOptions) (*netfile.Design, error) {
	return Read(file, src, Options{Top: o.Top, Power: o.Power, Ground: o.Ground, Inputs: o.Inputs})
}
