// Package netfile reads and writes railyard's transistor-level design files
// (the .sw format of switchsim/FORMATS.md) and holds the built-in cell library.
//
// Reading goes in the stages of the standard library's regexp: the scanner
// splits lines into words with positions, the parser groups them into a
// Tree of statements (kept for the writer), the checker judges every
// statement and collects every error, and the flattener expands cells into
// a switchsim.Builder with hierarchical names (inst.node, inst.device),
// which compiles the dense netlist the engine runs on.
package netfile

import (
	"errors"
	"fmt"
	"path/filepath"
	"strings"

	"railyard/switchsim"
	"railyard/switchsim/diag"
)

// Design is a design file read and compiled.
type Design struct {
	Name, Desc string
	Netlist    *switchsim.Netlist
	Source     []byte // the file's bytes as read
	File       string // the name it was read as: a path or demo:NAME
	Tree       *Tree  // the statements as written, for the writer; nil for a design made from a netlist
	// Corners are the technology corners the design names (`corner` statements
	// of a .sw file), in the order written; each is the design's tech with
	// some keys replaced.
	Corners []Corner
	// Notes are what the reader noticed without refusing the file (elements
	// skipped, delays ignored, sizes that look scaled), with positions; the
	// commands print them to stderr.
	Notes diag.List
	// Format is the format the loader read it in (sw, netlist, verilog:
	// switchsim/load's names), "" when it was read directly; Options are the
	// reader options it was read with (Include cleared). A trace records
	// both for a netlist, so that a replay reads it the same way.
	Format  string
	Options ReadOptions
	// Includes are the files a netlist included, as the loader names them
	// (so that an output is never written over one).
	Includes []string
	// FoldCase says the design's names match whatever their case, as a
	// netlist's cards do: a steps file's names are looked up so. A .sw
	// design's names are exact.
	FoldCase bool
}

// Corner is one named technology corner of a design.
type Corner struct {
	Name string
	Tech switchsim.Tech
	Pos  diag.Pos
}

// Read reads a design from src with the default limits; filename is used in
// positions. Every error comes back as a diag.List.
func Read(filename string, src []byte) (*Design, error) {
	return ReadLimits(filename, src, DefaultLimits())
}

// ReadLimits is Read with the given limits. Every stage runs on what the
// earlier ones accepted, so one run reports the errors of all of them
// (syntax, names, cells, connectivity), leaving out only what an earlier
// error makes unknowable.
func ReadLimits(filename string, src []byte, lim Limits) (*Design, error) {
	lim = lim.orDefault()
	if e := diag.CheckSize(filename, src, lim.FileSize); e != nil {
		return nil, diag.List{e}
	}
	if e := diag.CheckText(filename, src); e != nil {
		return nil, diag.List{e}
	}
	errs := diag.NewSink(lim.Errors)
	tree := parseTree(filename, scanLines(filename, src, lim.LineLen, errs), errs)
	lib, err := library()
	if err != nil {
		return nil, err
	}
	c := &checker{file: filename, lim: lim, errs: errs, libCells: lib}
	p := c.check(tree)
	if !p.named {
		p.name = baseName(filename)
	}
	var nl *switchsim.Netlist
	if !p.tooBig && !p.railsBad && !errs.Full() {
		nl = flatten(filename, p, errs)
	}
	if errs.Any() {
		return nil, errs.Err()
	}
	return &Design{Name: p.name, Desc: p.desc, Netlist: nl, Source: src, File: filename, Tree: tree,
		Corners: p.corners, Notes: p.notes}, nil
}

// baseName is a file's name without its folders, any scheme before a colon
// (demo:, builtin:) and its extension: a design's name when it gives none.
func baseName(file string) string {
	if i := strings.LastIndexAny(file, `/\:`); i >= 0 {
		file = file[i+1:]
	}
	return strings.TrimSuffix(file, filepath.Ext(file))
}

func (l Limits) orDefault() Limits {
	d := DefaultLimits()
	for _, f := range []struct{ v, d *int }{{&l.FileSize, &d.FileSize}, {&l.LineLen, &d.LineLen}, {&l.Depth, &d.Depth},
		{&l.Devices, &d.Devices}, {&l.NameLen, &d.NameLen}, {&l.NameBytes, &d.NameBytes}, {&l.Errors, &d.Errors}} {
		if *f.v <= 0 {
			*f.v = *f.d
		}
	}
	return l
}

// flattener expands a checked program into a Builder.
type flattener struct {
	b             *switchsim.Builder
	p             *program
	errs          *diag.Sink
	file          string
	power, ground string
	declared      map[string]diag.Pos // outputs and annotated nodes, for Compile's messages
	suspect       map[string]bool     // nodes an error left incompletely connected
	incomplete    []string            // prefixes of instances of cells with a statement left out
	line, col     int                 // the top-level statement being expanded
}

func flatten(file string, p *program, errs *diag.Sink) *switchsim.Netlist {
	f := &flattener{b: switchsim.NewBuilder(), p: p, errs: errs, file: file, power: p.power, ground: p.ground,
		declared: map[string]diag.Pos{}, suspect: p.suspect}
	f.b.SetName(p.name, p.desc)
	f.b.SetTech(p.tech)
	if err := f.b.SetRails(p.power, p.ground); err != nil {
		errs.Add(at(file, 1, 0), "%v", err)
		return nil
	}
	f.scope(p.top, nil, "", nil, switchsim.HighZ)
	if errs.Full() {
		return nil
	}
	f.aliases()
	nl, err := f.b.Compile()
	if err != nil {
		var ce *switchsim.CompileError
		if !errors.As(err, &ce) {
			errs.Add(at(file, 1, 0), "%v", err)
			return nil
		}
		for _, pr := range ce.Problems {
			if pr.Node == "" && pr.Device == "" && f.p.techBad && strings.HasPrefix(pr.Msg, "technology: ") {
				continue // reported at the tech statement, with its position
			}
			if !f.caused(pr) {
				errs.Add(f.posOf(pr), "%s", pr.Msg)
			}
		}
		return nil
	}
	return nl
}

// aliases records the original spellings, each for a node or device the
// expanded design has.
func (f *flattener) aliases() {
	for _, a := range f.p.aliases {
		// The rails are nodes of every design, touched by a device or not.
		node, dev := f.b.HasNode(a.name) || a.name == f.power || a.name == f.ground, f.b.HasDevice(a.name)
		switch {
		case !node && !dev:
			if !f.p.dropped {
				f.errs.Add(at(f.file, a.at.Line, a.at.Col), "alias names %s, which is no node or device of the design", a.name)
			}
			continue
		case a.original != a.name && (f.b.HasNode(a.original) || f.b.HasDevice(a.original)):
			f.errs.Add(at(f.file, a.at.Line, a.at.Col), "the original spelling %q of %s is the name of another node or device", a.original, a.name)
			continue
		}
		if err := f.b.Original(a.name, a.original); err != nil {
			f.errs.Add(at(f.file, a.at.Line, a.at.Col), "%v", err)
		}
	}
}

// caused reports whether a Compile problem may come from a statement left
// out for an error: its node was named by one, or lies in an instance of a
// cell that lost one.
func (f *flattener) caused(pr switchsim.Problem) bool {
	if !f.p.dropped {
		return false
	}
	for _, n := range []string{pr.Node, pr.Device} {
		if n == "" {
			continue
		}
		if f.suspect[n] {
			return true
		}
		for _, pre := range f.incomplete {
			if strings.HasPrefix(n, pre) {
				return true
			}
		}
	}
	return false
}

// posOf finds the statement a Compile problem is about: where its node was
// declared, else the top-level statement that made its node or device (a
// device by name, an instance by the prefix of the names it made).
func (f *flattener) posOf(pr switchsim.Problem) diag.Pos {
	if p, ok := f.declared[pr.Node]; ok && pr.Node != "" {
		return p
	}
	for _, name := range []string{pr.Device, pr.Node} {
		if name == "" {
			continue
		}
		for i := range f.p.top {
			it := &f.p.top[i]
			switch {
			case it.name == "":
			case it.kind == "use" && strings.HasPrefix(name, it.name+"."),
				name == it.name, (it.kind == "tgate" || it.kind == "rtgate") && (name == it.name+".n" || name == it.name+".p"):
				return at(f.file, it.line, it.col)
			}
		}
	}
	return at(f.file, 1, 0)
}

// effective gives a device's strength: its own (or the default), capped by
// the instances around it.
func effective(s, def, limit switchsim.Strength) switchsim.Strength {
	if s == switchsim.HighZ {
		s = def
	}
	if limit != switchsim.HighZ && limit < s {
		s = limit
	}
	return s
}

// deviceDefault is a device's strength when none is given: strong, and
// pull for a resistive one (which passes no more).
func deviceDefault(resistive bool) switchsim.Strength {
	if resistive {
		return switchsim.Pull
	}
	return switchsim.Strong
}

// scope expands one scope: the top level (cd nil) or an instance of cd
// whose ports connect to the nodes in ports.
func (f *flattener) scope(items []item, cd *cellDef, prefix string, ports []string, limit switchsim.Strength) {
	if cd != nil && cd.incomplete {
		f.incomplete = append(f.incomplete, prefix)
		for _, n := range ports {
			f.suspect[n] = true
		}
	}
	mapn := func(n string) string {
		if cd == nil {
			return n
		}
		if i, ok := cd.portIndex(n); ok {
			return ports[i]
		}
		switch n {
		case cd.power:
			return f.power
		case cd.ground:
			return f.ground
		}
		return prefix + n
	}
	for i := range items {
		it := &items[i]
		if cd == nil {
			f.line, f.col = it.line, it.col
		}
		fail := func(err error) {
			if err == nil {
				return
			}
			msg := err.Error()
			if cd != nil {
				msg += fmt.Sprintf(" (expanding cell %s, %s:%d)", cd.name, cd.file, it.line)
			}
			f.errs.Add(at(f.file, f.line, f.col), "%s", msg)
		}
		t := it.terms
		switch it.kind {
		case "input":
			for _, n := range t {
				fail(f.b.Input(n))
			}
		case "output":
			for j, n := range t {
				f.declare(n, it.words[j], cd == nil)
				fail(f.b.Output(n))
			}
		case "node":
			for j, n := range t {
				m := mapn(n)
				f.declare(m, it.words[j], cd == nil)
				fail(f.b.Node(m, it.cap, it.charge))
			}
		case "nmos", "pmos", "rnmos", "rpmos":
			res := resistive(it.kind)
			o := switchsim.DeviceOpts{W: it.w, L: it.l, Strength: effective(it.strength, deviceDefault(res), limit), Resistive: res}
			if it.kind == "nmos" || it.kind == "rnmos" {
				fail(f.b.NMOS(prefix+it.name, mapn(t[0]), mapn(t[1]), mapn(t[2]), o))
			} else {
				fail(f.b.PMOS(prefix+it.name, mapn(t[0]), mapn(t[1]), mapn(t[2]), o))
			}
		case "tgate":
			fail(f.b.TGate(prefix+it.name, mapn(t[0]), mapn(t[1]), mapn(t[2]), mapn(t[3]), it.wn, it.wp, it.l,
				effective(it.strength, switchsim.Strong, limit)))
		case "rtgate":
			// Two resistive transistors, named as a tgate's are.
			s := effective(it.strength, switchsim.Pull, limit)
			n, p := prefix+it.name+".n", prefix+it.name+".p"
			if f.b.HasDevice(n) || f.b.HasDevice(p) {
				fail(fmt.Errorf("duplicate device name %q", prefix+it.name))
				break
			}
			fail(f.b.NMOS(n, mapn(t[0]), mapn(t[2]), mapn(t[3]), switchsim.DeviceOpts{W: it.wn, L: it.l, Strength: s, Resistive: true}))
			fail(f.b.PMOS(p, mapn(t[1]), mapn(t[2]), mapn(t[3]), switchsim.DeviceOpts{W: it.wp, L: it.l, Strength: s, Resistive: true}))
		case "tran", "rtran":
			res := it.kind == "rtran"
			fail(f.b.Tran(prefix+it.name, mapn(t[0]), mapn(t[1]),
				switchsim.DeviceOpts{Strength: effective(it.strength, deviceDefault(res), limit), Resistive: res, Ohms: it.ohms}))
		case "pullup", "pulldown":
			fail(f.b.PullWith(prefix+it.name, mapn(t[0]), it.kind == "pullup",
				switchsim.DeviceOpts{Strength: effective(it.strength, switchsim.Pull, limit), Ohms: it.ohms}))
		case "use":
			if it.cell.bad(f.p.lim) {
				continue // on a cycle or too deep: reported, never expanded
			}
			sub := make([]string, len(t))
			for j, n := range t {
				sub[j] = mapn(n)
			}
			lim := limit
			if it.strength != switchsim.HighZ && (lim == switchsim.HighZ || it.strength < lim) {
				lim = it.strength
			}
			f.scope(it.cell.items, it.cell, prefix+it.name+".", sub, lim)
		}
		if f.errs.Full() {
			return // past the error limit: stop expanding
		}
	}
}

// declare notes where a node was declared: at the word itself at the top
// level, at the use that expanded it inside a cell.
func (f *flattener) declare(n string, w Word, top bool) {
	if _, ok := f.declared[n]; ok {
		return
	}
	p := at(f.file, f.line, f.col)
	if top {
		p.Col = w.Col
	}
	f.declared[n] = p
}
