// Package netfile reads and writes railyard's transistor-level design files
// (the .sw format of FORMAT.md) and holds the built-in cell library.
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
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"strconv"
	"strings"

	"railyard/designs"
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
}

// Corner is one named technology corner of a design.
type Corner struct {
	Name string
	Tech switchsim.Tech
	Pos  diag.Pos
}

// Read reads a design from src with the default limits; filename is used in
// positions. Every error comes back as an ErrorList.
func Read(filename string, src []byte) (*Design, error) {
	return ReadLimits(filename, src, DefaultLimits())
}

// ReadLimits is Read with the given limits.
func ReadLimits(filename string, src []byte, lim Limits) (*Design, error) {
	lim = lim.orDefault()
	if e := CheckSize(filename, src, lim.FileSize); e != nil {
		return nil, ErrorList{e}
	}
	if e := CheckText(filename, src); e != nil {
		return nil, ErrorList{e}
	}
	errs := &sink{max: lim.Errors}
	tree := parseTree(filename, scanLines(filename, src, lim.LineLen, errs), errs)
	lib, err := library()
	if err != nil {
		return nil, err
	}
	c := &checker{file: filename, lim: lim, errs: errs, libCells: lib}
	p := c.check(tree)
	if errs.any() {
		return nil, errs.err()
	}
	if !p.named {
		p.name = strings.TrimSuffix(filepath.Base(strings.TrimPrefix(filename, "demo:")), filepath.Ext(filename))
	}
	nl := flatten(filename, p, errs)
	if errs.any() {
		return nil, errs.err()
	}
	return &Design{Name: p.name, Desc: p.desc, Netlist: nl, Source: src, File: filename, Tree: tree}, nil
}

func (l Limits) orDefault() Limits {
	d := DefaultLimits()
	for _, f := range []struct{ v, d *int }{{&l.FileSize, &d.FileSize}, {&l.LineLen, &d.LineLen}, {&l.Depth, &d.Depth}, {&l.Devices, &d.Devices}, {&l.Errors, &d.Errors}} {
		if *f.v <= 0 {
			*f.v = *f.d
		}
	}
	return l
}

// ReadFile reads a design from a path, or an embedded demo as demo:NAME.
func ReadFile(path string) (*Design, error) {
	if name, ok := strings.CutPrefix(path, "demo:"); ok {
		sw, _, ok := designs.Source(name)
		if !ok {
			var names []string
			for _, e := range designs.List() {
				names = append(names, e.Name)
			}
			return nil, ErrorList{{Pos{File: path}, fmt.Sprintf("no demo design named %q (the demos: %s)", name, strings.Join(names, ", "))}}
		}
		return Read(path, sw)
	}
	src, err := ReadText(path, DefaultLimits().FileSize)
	if err != nil {
		return nil, err
	}
	return Read(path, src)
}

// ReadText reads a file of at most max bytes (and one more, so that the
// size error has a position). An error is an ErrorList naming the file.
func ReadText(path string, max int) ([]byte, error) {
	fail := func(err error) error {
		var pe *fs.PathError
		if errors.As(err, &pe) {
			err = pe.Err
		}
		return ErrorList{{Pos{File: path}, "cannot read: " + err.Error()}}
	}
	f, err := os.Open(path)
	if err != nil {
		return nil, fail(err)
	}
	defer f.Close()
	if st, err := f.Stat(); err == nil && st.IsDir() {
		return nil, ErrorList{{Pos{File: path}, "cannot read: is a directory"}}
	}
	src, err := io.ReadAll(io.LimitReader(f, int64(max)+1))
	if err != nil {
		return nil, fail(err)
	}
	return src, nil
}

// flattener expands a checked program into a Builder.
type flattener struct {
	b             *switchsim.Builder
	errs          *sink
	file          string
	power, ground string
	declared      map[string]Pos // outputs and annotated nodes, for Compile's messages
	line, col     int            // the top-level statement being expanded
}

func flatten(file string, p *program, errs *sink) *switchsim.Netlist {
	f := &flattener{b: switchsim.NewBuilder(), errs: errs, file: file, power: p.power, ground: p.ground, declared: map[string]Pos{}}
	f.b.SetName(p.name, p.desc)
	f.b.SetTech(p.tech)
	if err := f.b.SetRails(p.power, p.ground); err != nil {
		errs.add(Pos{file, 1, 0}, "%v", err)
		return nil
	}
	f.scope(p.top, nil, "", nil, switchsim.HighZ)
	if errs.any() {
		return nil
	}
	nl, err := f.b.Compile()
	if err != nil {
		var ce *switchsim.CompileError
		if !errors.As(err, &ce) {
			errs.add(Pos{file, 1, 0}, "%v", err)
			return nil
		}
		for _, msg := range ce.Problems {
			errs.add(f.posOf(msg), "%s", msg)
		}
		return nil
	}
	return nl
}

// posOf finds the declaration a Compile message is about, by the first
// quoted name in it.
func (f *flattener) posOf(msg string) Pos {
	if i := strings.IndexByte(msg, '"'); i >= 0 {
		if q, err := strconv.QuotedPrefix(msg[i:]); err == nil {
			if n, err := strconv.Unquote(q); err == nil {
				if p, ok := f.declared[n]; ok {
					return p
				}
			}
		}
	}
	return Pos{f.file, 1, 0}
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

// scope expands one scope: the top level (cd nil) or an instance of cd
// whose ports connect to the nodes in ports.
func (f *flattener) scope(items []item, cd *cellDef, prefix string, ports []string, limit switchsim.Strength) {
	mapn := func(n string) string {
		if cd == nil {
			return n
		}
		if i, ok := cd.portIx[n]; ok {
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
			f.errs.add(Pos{f.file, f.line, f.col}, "%s", msg)
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
		case "nmos", "pmos":
			o := switchsim.DeviceOpts{W: it.w, L: it.l, Strength: effective(it.strength, switchsim.Strong, limit)}
			if it.kind == "nmos" {
				fail(f.b.NMOS(prefix+it.name, mapn(t[0]), mapn(t[1]), mapn(t[2]), o))
			} else {
				fail(f.b.PMOS(prefix+it.name, mapn(t[0]), mapn(t[1]), mapn(t[2]), o))
			}
		case "tgate":
			fail(f.b.TGate(prefix+it.name, mapn(t[0]), mapn(t[1]), mapn(t[2]), mapn(t[3]), it.wn, it.wp, it.l,
				effective(it.strength, switchsim.Strong, limit)))
		case "pullup", "pulldown":
			fail(f.b.Pull(prefix+it.name, mapn(t[0]), it.kind == "pullup", effective(it.strength, switchsim.Pull, limit)))
		case "use":
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
		if f.errs.dropped > 0 {
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
	p := Pos{f.file, f.line, f.col}
	if top {
		p.Col = w.Col
	}
	f.declared[n] = p
}
