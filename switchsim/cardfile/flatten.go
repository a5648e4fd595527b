package cardfile

import (
	"errors"
	"fmt"
	"math"
	"path/filepath"
	"sort"
	"strconv"
	"strings"

	"railyard/switchsim"
	"railyard/switchsim/diag"
	"railyard/switchsim/internal/netbuild"
	"railyard/switchsim/netfile"
)

// flattener expands the deck's top into a netbuild.Design.
type flattener struct {
	file        string
	d           *deck
	opt         Options
	lim         Limits
	errs, notes *netbuild.Sink
	rails       netbuild.Rails
	nb          *netbuild.Design
	tree        *netbuild.Tree[*subckt]
	global      *env
	powerSeen   bool
	groundSeen  bool
	devs, elems int
	over        bool // past a limit: stop expanding
	nPat, pPat  []string
	use         map[*model]int // devices per model card
	typedBy     map[string]bool
	coupling    bool
	sizes       netfile.SizeNotes // implausible sizes and capacitances, said once when scaled
}

// env is one scope of parameters: the deck's (.param at the top level) or
// an instance's (its subcircuit's defaults, the instance's values and the
// subcircuit's own .param cards).
type env struct {
	vars   map[string]*pval
	parent *env
}

type pval struct {
	p     *param
	in    *env // where the value is evaluated
	val   float64
	state uint8 // 0 new, 1 being evaluated, 2 done, 3 failed
}

// errReported stands for an error already reported at its own position.
var errReported = errors.New("reported")

// inst is one instance being expanded (the top too): the prefixes of its
// names, its ports' nodes and its parameters.
type inst struct {
	sub             *subckt
	key, want, orig string
	ports           []int32
	env             *env
	depth           int
}

func newFlattener(file string, d *deck, opt Options, lim Limits, errs, notes *netbuild.Sink) *flattener {
	f := &flattener{file: file, d: d, opt: opt, lim: lim, errs: errs, notes: notes,
		rails: netbuild.NewRails(opt.Power, opt.Ground), use: map[*model]int{}, typedBy: map[string]bool{}}
	// Netlists from extraction write sizes in units a scale set elsewhere
	// fixes: implausible sizes are said once for the design.
	f.sizes.Scaled = true
	for _, p := range opt.NMOSModels {
		f.nPat = append(f.nPat, strings.ToLower(p))
	}
	for _, p := range opt.PMOSModels {
		f.pPat = append(f.pPat, strings.ToLower(p))
	}
	f.rails.AddGround("0") // node 0 is ground in the card format, whatever --ground says
	f.nb = netbuild.NewDesign(netbuild.Node{Want: "vdd"}, netbuild.Node{Want: "gnd"})
	f.tree = &netbuild.Tree[*subckt]{What: "subcircuit", Name: func(s *subckt) string { return s.name },
		Depth: lim.Depth, Max: netbuild.Size{lim.Devices, lim.Elements}, Errs: errs,
		Body: func(s *subckt, use func(*subckt, diag.Pos)) netbuild.Size {
			var own netbuild.Size
			for _, e := range s.body.elems {
				sz := f.elemSize(e, use)
				own[0], own[1] = own[0]+sz[0], own[1]+sz[1]
			}
			return own
		}}
	f.global = &env{vars: map[string]*pval{}}
	for i := range d.top.params {
		p := &d.top.params[i]
		if prev := f.global.vars[p.key]; prev != nil {
			errs.Add(p.pos, "parameter %s defined twice (first at %s)", p.key, prev.p.pos)
			continue
		}
		f.global.vars[p.key] = &pval{p: p, in: f.global}
	}
	return f
}

// run picks the top, expands it and builds the netlist.
func (f *flattener) run() *switchsim.Netlist {
	for _, s := range f.d.order { // cycles anywhere are errors, whichever subcircuit is the top
		f.tree.Measure(s, s.pos)
	}
	if f.errs.Any() {
		return nil
	}
	top, ok := f.pickTop()
	if !ok {
		return nil
	}
	f.measure(top)
	if f.errs.Any() {
		return nil
	}
	in := &inst{env: f.global, sub: top}
	name := strings.TrimSuffix(filepath.Base(f.file), filepath.Ext(f.file))
	if top != nil {
		name = top.name
		for k, dir := range top.pininfo {
			switch dir {
			case 'p':
				f.rails.AddPower(k)
			case 'g':
				f.rails.AddGround(k)
			}
		}
		in.env = f.instEnv(top, nil, f.global)
		in.sub = nil // the top's ports are its own nodes
		f.scope(top.body.elems, in)
	} else {
		f.scope(f.d.top.elems, in)
		for _, c := range f.d.skipped {
			f.notes.Add(c.pos, "skipped: %s card (an analysis or control card)", c.head())
		}
	}
	f.nb.Name = netbuild.Escape(strings.ToLower(name))
	f.nb.At = diag.Pos{File: f.file}
	if top != nil {
		f.nb.At = top.pos
	}
	f.nb.Desc = f.d.title
	if f.errs.Any() {
		return nil
	}
	f.ports(top, in)
	f.tech()
	f.summaryNotes()
	if f.errs.Any() {
		return nil
	}
	return f.nb.Build(f.errs.S)
}

// pickTop finds the subcircuit that is the design, or nil for the top level.
func (f *flattener) pickTop() (*subckt, bool) {
	d := f.d
	if f.opt.Top != "" {
		if s := d.subs[strings.ToLower(f.opt.Top)]; s != nil {
			return s, true
		}
		f.errs.Add(diag.Pos{File: f.file}, "no subcircuit named %q (this deck defines: %s)", f.opt.Top, f.subList(d.order))
		return nil, false
	}
	for _, e := range d.top.elems {
		if strings.IndexByte("mxrc", e.letter) >= 0 {
			return nil, true // the deck's own top level holds devices: it is the design
		}
	}
	for _, s := range d.order {
		for _, e := range s.body.elems {
			if e.letter == 'x' && len(e.args) > 0 {
				if c := d.subs[strings.ToLower(e.args[len(e.args)-1].text)]; c != nil && c != s {
					c.used = true
				}
			}
		}
	}
	var tops []*subckt
	for _, s := range d.order {
		if !s.used {
			tops = append(tops, s)
		}
	}
	switch {
	case len(d.order) == 0:
		f.errs.Add(diag.Pos{File: f.file}, "the deck has no devices and no subcircuit")
	case len(tops) == 1:
		return tops[0], true
	case len(tops) == 0:
		f.errs.Add(diag.Pos{File: f.file}, "every subcircuit is instantiated by another: give --top (this deck defines: %s)", f.subList(d.order))
	default:
		f.errs.Add(diag.Pos{File: f.file}, "the deck defines %d subcircuits that none instantiates: give --top with one of %s", len(tops), f.subList(tops))
	}
	return nil, false
}

func (f *flattener) subList(list []*subckt) string {
	names := make([]string, len(list))
	for i, s := range list {
		names[i] = s.name
	}
	return netbuild.List(names)
}

// measure walks the instance tree from the top: cycles, depth and the
// expanded size are errors before anything is expanded.
func (f *flattener) measure(top *subckt) {
	if top != nil {
		sz := f.tree.Measure(top, top.pos)
		f.sizeCheck(sz, top.pos)
		return
	}
	var sz netbuild.Size
	for _, e := range f.d.top.elems {
		own := f.elemSize(e, func(c *subckt, at diag.Pos) {
			cs := f.tree.Measure(c, at)
			sz[0], sz[1] = sz[0]+cs[0], sz[1]+cs[1]
		})
		sz[0], sz[1] = min(sz[0]+own[0], f.lim.Devices+1), min(sz[1]+own[1], f.lim.Elements+1)
	}
	f.sizeCheck(sz, diag.Pos{File: f.file})
}

func (f *flattener) sizeCheck(sz netbuild.Size, at diag.Pos) {
	switch {
	case sz[0] > f.lim.Devices:
		f.errs.Add(at, "the design expands to more than the limit of %d devices", f.lim.Devices)
	case sz[1] > f.lim.Elements:
		f.errs.Add(at, "the design expands to more than the limit of %d elements", f.lim.Elements)
	}
}

// elemSize is one element's own devices and elements; an instance of a
// subcircuit goes to use instead.
func (f *flattener) elemSize(e elem, use func(*subckt, diag.Pos)) netbuild.Size {
	switch e.letter {
	case 'm', 'r':
		return netbuild.Size{1, 1}
	case 'c':
		return netbuild.Size{0, 1}
	case 'x':
		if len(e.args) == 0 {
			return netbuild.Size{}
		}
		if c := f.d.subs[strings.ToLower(e.args[len(e.args)-1].text)]; c != nil {
			use(c, e.pos)
			return netbuild.Size{}
		}
		return netbuild.Size{1, 1} // a transistor model wrapped as a subcircuit
	}
	return netbuild.Size{}
}

// instEnv makes the parameter scope of an instance of s with the values
// given on its X card (evaluated in the caller's scope).
func (f *flattener) instEnv(s *subckt, given []param, caller *env) *env {
	if len(s.defs) == 0 && len(s.body.params) == 0 && len(given) == 0 {
		return f.global
	}
	e := &env{vars: map[string]*pval{}, parent: f.global}
	for i := range s.defs {
		p := &s.defs[i]
		e.vars[p.key] = &pval{p: p, in: e}
	}
	for i := range given {
		p := &given[i]
		if _, ok := e.vars[p.key]; !ok {
			var keys []string
			for _, d := range s.defs {
				keys = append(keys, d.key)
			}
			f.errs.Add(p.pos, "subcircuit %s has no parameter %s (its parameters: %s)", s.name, p.key, orNone(keys))
			continue
		}
		e.vars[p.key] = &pval{p: p, in: caller}
	}
	for i := range s.body.params {
		p := &s.body.params[i]
		if prev := e.vars[p.key]; prev != nil && prev.p.pos.File != "" && prev.in == e {
			f.errs.Add(p.pos, "parameter %s defined twice in subcircuit %s (first at %s)", p.key, s.name, prev.p.pos)
			continue
		}
		e.vars[p.key] = &pval{p: p, in: e}
	}
	return e
}

func orNone(s []string) string {
	if len(s) == 0 {
		return "none"
	}
	return strings.Join(s, ", ")
}

// value evaluates a value word in scope e: a number with its suffix, or
// an expression ({...}, '...', or a bare one). ast caches the parse.
func (f *flattener) value(t tok, ast **expr, e *env) (float64, bool) {
	if !t.expr {
		if v, ok := parseValue(t.text); ok {
			return v, true
		}
	}
	if *ast == nil {
		x, err := parseExpr(t.text)
		if err != nil {
			if !t.expr {
				f.errs.Add(t.pos, "bad value %q: want a number with an optional suffix (f p n u m k meg g t) or an expression", t.text)
			} else {
				f.errs.Add(t.pos, "bad expression: %v", err)
			}
			return 0, false
		}
		*ast = x
	}
	v, err := (*ast).eval(func(name string) (float64, error) { return f.param(e, name) })
	if err != nil {
		if err != errReported {
			f.errs.Add(t.pos, "%v", err)
		}
		return 0, false
	}
	return v, true
}

func (f *flattener) param(e *env, name string) (float64, error) {
	for s := e; s != nil; s = s.parent {
		pv := s.vars[name]
		if pv == nil {
			continue
		}
		switch pv.state {
		case 2:
			return pv.val, nil
		case 1:
			f.errs.Add(pv.p.pos, "parameter %s depends on itself", name)
			pv.state = 3
			return 0, errReported
		case 3:
			return 0, errReported
		}
		pv.state = 1
		v, ok := f.value(pv.p.val, &pv.p.ast, pv.in)
		if !ok {
			pv.state = 3
			return 0, errReported
		}
		pv.val, pv.state = v, 2
		return v, nil
	}
	return 0, fmt.Errorf("unknown parameter %s", name)
}

// paramValue evaluates one element parameter.
func (f *flattener) paramValue(p *param, e *env) (float64, bool) { return f.value(p.val, &p.ast, e) }

// node resolves a node name in an instance.
func (f *flattener) node(t tok, in *inst) int32 {
	if len(t.text) > f.lim.NameBytes {
		f.errs.Add(t.pos, "name is longer than the limit of %d bytes", f.lim.NameBytes)
		return f.nb.Ground
	}
	if t.expr || t.str {
		f.errs.Add(t.pos, "expected a node name, found an expression")
		return f.nb.Ground
	}
	l := strings.ToLower(t.text)
	if in.sub != nil {
		if i, ok := in.sub.portIx[l]; ok {
			return in.ports[i]
		}
	}
	switch f.rails.Kind(l) {
	case 1:
		if !f.powerSeen {
			f.powerSeen = true
			n := &f.nb.Nodes[f.nb.Power]
			n.Want, n.Orig, n.Pos = netbuild.RailWant(t.text, true, true), t.text, t.pos
		}
		return f.nb.Power
	case -1:
		if !f.groundSeen && l != "0" {
			f.groundSeen = true
			n := &f.nb.Nodes[f.nb.Ground]
			n.Want, n.Orig, n.Pos = netbuild.RailWant(t.text, false, true), t.text, t.pos
		}
		return f.nb.Ground
	}
	if f.d.globals[l] || strings.HasSuffix(l, "!") {
		want := netbuild.Escape(l)
		return f.nb.Node(l, netbuild.Node{Want: want, Orig: t.text, Exact: want == l, Pos: t.pos})
	}
	want := in.want + netbuild.Escape(l)
	orig := in.orig + t.text
	return f.nb.Node(in.key+l, netbuild.Node{Want: want, Orig: orig, Exact: want == strings.ToLower(orig), Pos: t.pos})
}

func (f *flattener) devName(t tok, in *inst) (want, orig string, exact bool) {
	l := strings.ToLower(t.text)
	want, orig = in.want+netbuild.Escape(l), in.orig+t.text
	return want, orig, want == strings.ToLower(orig)
}

// skippedKinds names the element letters railyard skips.
var skippedKinds = map[byte]string{
	'd': "a diode", 'v': "a voltage source", 'i': "a current source", 'e': "a controlled source", 'f': "a controlled source",
	'g': "a controlled source", 'h': "a controlled source", 'b': "a behavioural source", 'l': "an inductor",
	'k': "an inductor coupling", 'q': "a bipolar transistor", 'j': "a JFET", 'z': "a MESFET", 's': "a switch",
	'w': "a switch", 't': "a transmission line", 'o': "a transmission line", 'u': "a distributed line", 'y': "an element",
	'a': "an element", 'n': "an element", 'p': "an element",
}

// scope expands one scope's elements.
func (f *flattener) scope(elems []elem, in *inst) {
	for i := range elems {
		if f.over || f.errs.Full() {
			return
		}
		e := &elems[i]
		if len(e.name.text) > f.lim.NameBytes {
			f.errs.Add(e.pos, "name is longer than the limit of %d bytes", f.lim.NameBytes)
			continue
		}
		switch e.letter {
		case 'm':
			if len(e.args) != 5 {
				f.errs.Add(e.pos, "wrong number of terminals: M card %s takes drain gate source bulk model, found %s after its name",
					e.name.text, diag.Count(len(e.args), "word"))
				continue
			}
			f.mos(e, in, e.args[:4], e.args[4])
		case 'x':
			f.instance(e, in)
		case 'c':
			f.capacitor(e, in)
		case 'r':
			f.resistor(e, in)
		default:
			what := skippedKinds[e.letter]
			if what == "" {
				what = "an element"
			}
			f.notes.Add(e.pos, "skipped: %s %s (%s): the switch-level model has no place for it", strings.ToUpper(e.name.text[:1]), e.name.text, what)
		}
	}
}

// mos adds one transistor: terminals drain gate source bulk (the bulk is
// not connected: the body is at its rail for the body effect).
func (f *flattener) mos(e *elem, in *inst, t []tok, modelTok tok) {
	kind, m, ok := f.modelKind(modelTok)
	if !ok {
		return
	}
	var w, l float64
	var wTok, lTok *tok
	mult, nf := 1.0, 1.0
	good := true
	for i := range e.params {
		p := &e.params[i]
		var dst *float64
		switch p.key {
		case "w":
			dst, wTok = &w, &p.val
		case "l":
			dst, lTok = &l, &p.val
		case "m":
			dst = &mult
		case "nf":
			dst = &nf // checked, but w is already the width over all fingers (BSIM4)
		default:
			continue // other keys (ad as pd ps nrd nrs sa sb ...) are kept in the card but mean nothing here
		}
		v, ok := f.paramValue(p, in.env)
		if ok && v <= 0 {
			f.errs.Add(p.val.pos, "%s must be positive, not %g", p.key, v)
			ok = false
		}
		good = good && ok
		if ok {
			*dst = v
		}
	}
	if !good {
		return
	}
	// A product of decimal numbers carries binary noise (0.42 x 1e-6 is
	// 4.1999999999999995e-07): 12 significant digits keep what was written.
	// w is the total width over nf fingers, as the BSIM4 compact model
	// reads it (Weff = W/NF per finger, from memory), so nf leaves the
	// DC width alone; m parallel devices multiply it.
	w = roundDigits(w * f.d.scale * mult)
	l = roundDigits(l * f.d.scale)
	if f.tooMany(e.pos) {
		return
	}
	if m != nil {
		f.use[m]++
	}
	want, orig, exact := f.devName(e.name, in)
	dv := netbuild.Device{Want: want, Orig: orig, Exact: exact, Kind: kind, Pos: e.pos,
		Gate: f.node(t[1], in), A: f.node(t[0], in), B: f.node(t[2], in), Opts: switchsim.DeviceOpts{W: w, L: l}}
	if wTok != nil {
		f.sizes.Size(wTok.pos, "w", wTok.text, w)
	}
	if lTok != nil {
		f.sizes.Size(lTok.pos, "l", lTok.text, l)
	}
	f.nb.AddDevice(dv)
}

func (f *flattener) tooMany(at diag.Pos) bool {
	f.devs++
	if f.devs > f.lim.Devices {
		f.errs.Add(at, "the design expands to more than the limit of %d devices", f.lim.Devices)
		f.over = true
		return true
	}
	return false
}

// modelKind types a transistor model: by its .model card (or the first
// bin NAME.k of a binned model), else by --nmos-models/--pmos-models,
// else by the trade's naming habits.
func (f *flattener) modelKind(t tok) (netbuild.DeviceKind, *model, bool) {
	l := strings.ToLower(t.text)
	m := f.d.models[l]
	if m == nil {
		m = f.d.bins[l]
	}
	if m != nil {
		switch m.typ {
		case "nmos":
			return netbuild.NMOS, m, true
		case "pmos":
			return netbuild.PMOS, m, true
		}
		f.errs.Add(t.pos, "model %s is a %s model (%s), not nmos or pmos", t.text, m.typ, m.pos)
		return 0, nil, false
	}
	k, how, ok := f.typeByName(l)
	if !ok {
		f.errs.Add(t.pos, "unknown model %s: no .model card defines it and its name does not say nMOS or pMOS (give --nmos-models or --pmos-models)", t.text)
		return 0, nil, false
	}
	if !f.typedBy[l] {
		f.typedBy[l] = true
		pol := "nMOS"
		if k == netbuild.PMOS {
			pol = "pMOS"
		}
		f.notes.Add(t.pos, "model %s has no .model card: typed %s %s; the technology keeps the preset's values for it", t.text, pol, how)
	}
	return k, nil, true
}

// typeByName applies the patterns, then the naming habits: a name holding
// nfet, nmos or nch, or starting with n, is nMOS; pfet, pmos or pch, or
// starting with p, is pMOS (common practice).
func (f *flattener) typeByName(l string) (netbuild.DeviceKind, string, bool) {
	for _, p := range f.nPat {
		if glob(p, l) {
			return netbuild.NMOS, "by --nmos-models", true
		}
	}
	for _, p := range f.pPat {
		if glob(p, l) {
			return netbuild.PMOS, "by --pmos-models", true
		}
	}
	n := strings.Contains(l, "nfet") || strings.Contains(l, "nmos") || strings.Contains(l, "nch")
	p := strings.Contains(l, "pfet") || strings.Contains(l, "pmos") || strings.Contains(l, "pch")
	switch {
	case n && !p:
		return netbuild.NMOS, "by its name", true
	case p && !n:
		return netbuild.PMOS, "by its name", true
	case n && p:
		return 0, "", false
	case strings.HasPrefix(l, "n"):
		return netbuild.NMOS, "by its first letter", true
	case strings.HasPrefix(l, "p"):
		return netbuild.PMOS, "by its first letter", true
	}
	return 0, "", false
}

// glob matches name against a pattern in which * stands for any run of
// characters (both already lower case).
func glob(pattern, name string) bool {
	parts := strings.Split(pattern, "*")
	if len(parts) == 1 {
		return pattern == name
	}
	if !strings.HasPrefix(name, parts[0]) {
		return false
	}
	name = name[len(parts[0]):]
	last := parts[len(parts)-1]
	for _, mid := range parts[1 : len(parts)-1] {
		i := strings.Index(name, mid)
		if i < 0 {
			return false
		}
		name = name[i+len(mid):]
	}
	return strings.HasSuffix(name, last)
}

// instance expands an X card: a subcircuit, or a transistor model wrapped
// as a subcircuit that the deck does not define.
func (f *flattener) instance(e *elem, in *inst) {
	if len(e.args) < 1 {
		f.errs.Add(e.pos, "X card %s needs its nodes and a subcircuit name", e.name.text)
		return
	}
	subTok := e.args[len(e.args)-1]
	nodes := e.args[:len(e.args)-1]
	s := f.d.subs[strings.ToLower(subTok.text)]
	if s == nil {
		if len(nodes) == 4 {
			if _, _, ok := f.typeByName(strings.ToLower(subTok.text)); ok {
				f.mos(e, in, nodes, subTok)
				return
			}
		}
		hint := ""
		if len(nodes) == 4 {
			hint = "; it is no transistor model either, by its name (give --nmos-models or --pmos-models if it is one)"
		}
		f.errs.Add(subTok.pos, "instance %s of unknown subcircuit %s%s (this deck defines: %s)", e.name.text, subTok.text, hint, f.subList(f.d.order))
		return
	}
	if len(nodes) != len(s.ports) {
		var ports []string
		for _, p := range s.ports {
			ports = append(ports, p.text)
		}
		f.errs.Add(e.pos, "wrong number of terminals: subcircuit %s takes %s (%s), instance %s gives %d",
			s.name, diag.Count(len(s.ports), "node"), strings.Join(ports, " "), e.name.text, len(nodes))
		return
	}
	if f.tree.Bad(s) {
		return
	}
	ports := make([]int32, len(nodes))
	for i, t := range nodes {
		ports[i] = f.node(t, in)
	}
	l := strings.ToLower(e.name.text)
	sub := &inst{sub: s, key: in.key + l + "\x00", want: in.want + netbuild.Escape(l) + ".", orig: in.orig + e.name.text + ".",
		ports: ports, env: f.instEnv(s, e.params, in.env), depth: in.depth + 1}
	f.scope(s.body.elems, sub)
}

// twoNodes reads the two nodes and the value of a C or R card; key is the
// parameter that may carry the value instead (c= or r=). The value is
// divided (R) or multiplied (C) by m=.
func (f *flattener) twoNodes(e *elem, in *inst, key string) (a, b int32, v float64, ok bool) {
	what := "C card " + e.name.text + " takes NODE NODE VALUE"
	if key == "r" {
		what = "R card " + e.name.text + " takes NODE NODE VALUE"
	}
	var val *param
	mult := 1.0
	for i := range e.params {
		p := &e.params[i]
		switch p.key {
		case key:
			val = p
		case "m":
			m, good := f.paramValue(p, in.env)
			if !good || m <= 0 {
				if good {
					f.errs.Add(p.val.pos, "m must be positive")
				}
				return 0, 0, 0, false
			}
			mult = m
		}
	}
	switch {
	case len(e.args) == 3 && val == nil:
		val = &param{key: key, val: e.args[2], pos: e.args[2].pos}
		e.params = append(e.params, *val) // keep the parsed expression with the card
		val = &e.params[len(e.params)-1]
	case len(e.args) == 2 && val != nil:
	default:
		f.errs.Add(e.pos, "wrong number of terminals: %s, found %s after its name", what, diag.Count(len(e.args), "word"))
		return 0, 0, 0, false
	}
	v, ok = f.paramValue(val, in.env)
	if !ok {
		return 0, 0, 0, false
	}
	if v < 0 || (key == "r" && v == 0) {
		f.errs.Add(val.val.pos, "%s must be positive, not %g", map[string]string{"c": "a capacitance", "r": "a resistance"}[key], v)
		return 0, 0, 0, false
	}
	if key == "r" {
		v /= mult
	} else {
		v *= mult
	}
	return f.node(e.args[0], in), f.node(e.args[1], in), v, true
}

func (f *flattener) isRail(n int32) bool { return n == f.nb.Power || n == f.nb.Ground }

// capacitor adds a C card's value to the capacitance of the nodes it
// touches: a capacitor to a rail to its node, a coupling capacitor
// between two nodes in full to each (each side as if the other held
// still, the usual grounded approximation).
func (f *flattener) capacitor(e *elem, in *inst) {
	a, b, c, ok := f.twoNodes(e, in, "c")
	if !ok {
		return
	}
	f.elems++
	switch {
	case f.isRail(a) && f.isRail(b):
		f.notes.Add(e.pos, "skipped: capacitor %s between the rails", e.name.text)
	case a == b:
		f.notes.Add(e.pos, "skipped: capacitor %s has both ends on one node", e.name.text)
	case f.isRail(a):
		f.nb.Nodes[b].Cap += c
	case f.isRail(b):
		f.nb.Nodes[a].Cap += c
	default:
		f.nb.Nodes[a].Cap += c
		f.nb.Nodes[b].Cap += c
		f.coupling = true
	}
}

// resistor adds an R card: to a rail a pull with its resistance, between
// two nodes a resistive always-on device (IEEE 1364-2005 §7.12 in ideal
// mode, its resistance in physical mode).
func (f *flattener) resistor(e *elem, in *inst) {
	a, b, r, ok := f.twoNodes(e, in, "r")
	if !ok {
		return
	}
	switch {
	case f.isRail(a) && f.isRail(b):
		f.notes.Add(e.pos, "skipped: resistor %s between the rails carries no signal", e.name.text)
		return
	case a == b:
		f.notes.Add(e.pos, "skipped: resistor %s has both ends on one node", e.name.text)
		return
	}
	if f.tooMany(e.pos) {
		return
	}
	want, orig, exact := f.devName(e.name, in)
	dv := netbuild.Device{Want: want, Orig: orig, Exact: exact, Pos: e.pos, Gate: -1, A: a, B: b,
		Opts: switchsim.DeviceOpts{Ohms: r}}
	switch {
	case f.isRail(a):
		dv.Kind, dv.A, dv.B = railPull(a == f.nb.Power), -1, b
	case f.isRail(b):
		dv.Kind, dv.A, dv.B = railPull(b == f.nb.Power), -1, a
	default:
		dv.Kind, dv.Opts.Resistive = netbuild.Tran, true
	}
	f.nb.AddDevice(dv)
}

func railPull(up bool) netbuild.DeviceKind {
	if up {
		return netbuild.PullUp
	}
	return netbuild.PullDown
}

// ports decides the inputs and outputs: of the top subcircuit's ports, or
// of the top level's nodes.
func (f *flattener) ports(top *subckt, in *inst) {
	given := map[string]bool{}
	for _, n := range f.opt.Inputs {
		given[strings.ToLower(n)] = true
	}
	if top == nil {
		f.topLevelInputs(given)
		return
	}
	type port struct {
		t    tok
		node int32
	}
	var sig []port
	seen := map[int32]bool{}
	for _, t := range top.ports {
		n := f.node(t, in)
		if f.isRail(n) || seen[n] {
			continue
		}
		seen[n] = true
		if !f.nb.Nodes[n].Used {
			f.notes.Add(t.pos, "port %s connects to no device (bulk terminals connect nothing): it is neither an input nor an output", t.text)
			delete(given, strings.ToLower(t.text))
			continue
		}
		sig = append(sig, port{t, n})
	}
	for _, t := range top.ports {
		delete(given, strings.ToLower(t.text))
		delete(given, strings.ToLower(netbuild.Escape(strings.ToLower(t.text))))
	}
	for n := range given {
		f.errs.Add(top.pos, "--inputs names %s, which is not a signal port of subcircuit %s", n, top.name)
	}
	declared := false
	for _, p := range sig {
		if top.pininfo[strings.ToLower(p.t.text)] == 'i' {
			declared = true
		}
	}
	known := len(f.opt.Inputs) > 0 || declared
	guess := map[int32]bool{}
	if !known {
		guess = f.guessInputs()
	}
	var ins, outs []string
	for _, p := range sig {
		l := strings.ToLower(p.t.text)
		isIn := false
		for _, n := range f.opt.Inputs { // the netlist's spelling, or the railyard name
			isIn = isIn || strings.EqualFold(n, l) || n == netbuild.Escape(l)
		}
		switch {
		case isIn || top.pininfo[l] == 'i':
			isIn = true
		case !known:
			isIn = guess[p.node]
		}
		if isIn {
			f.nb.Inputs = append(f.nb.Inputs, p.node)
			ins = append(ins, p.t.text)
		} else {
			f.nb.Outputs = append(f.nb.Outputs, p.node)
			outs = append(outs, p.t.text)
		}
	}
	if !known && len(sig) > 0 {
		f.notes.Add(top.pos, "inputs guessed from the connections: %s; outputs: %s (ports that reach only gates, or no device driven from a rail, are inputs); give --inputs or a steps file to choose",
			orNone(ins), orNone(outs))
	}
}

// guessInputs marks the nodes that look driven from outside: a node that
// is a channel terminal of a device whose other terminal is a rail is
// driven by a stage of the cell (an output); every other node is taken as
// an input.
func (f *flattener) guessInputs() map[int32]bool {
	driven := map[int32]bool{}
	for _, d := range f.nb.Devices {
		switch {
		case d.Kind == netbuild.PullUp || d.Kind == netbuild.PullDown:
			driven[d.B] = true
		case d.A >= 0 && f.isRail(d.A):
			driven[d.B] = true
		case f.isRail(d.B) && d.A >= 0:
			driven[d.A] = true
		}
	}
	in := map[int32]bool{}
	for i := range f.nb.Nodes {
		in[int32(i)] = !driven[int32(i)]
	}
	return in
}

// topLevelInputs: a deck's top level has no ports; its inputs are those
// given, or else the nodes its voltage sources drive against a rail.
func (f *flattener) topLevelInputs(given map[string]bool) {
	names := make([]string, 0, len(given))
	for n := range given {
		names = append(names, n)
	}
	sort.Strings(names)
	for _, n := range names {
		i, ok := f.nb.Lookup(n)
		if !ok {
			f.errs.Add(diag.Pos{File: f.file}, "--inputs names %s, which is no node of the deck's top level", n)
			continue
		}
		f.nb.Inputs = append(f.nb.Inputs, i)
	}
	if len(given) > 0 {
		return
	}
	seen := map[int32]bool{}
	for _, e := range f.d.top.elems {
		if e.letter != 'v' || len(e.args) < 2 {
			continue
		}
		a, ok := f.nb.Lookup(strings.ToLower(e.args[0].text))
		if !ok || f.rails.Kind(e.args[1].text) != -1 {
			continue
		}
		if !f.isRail(a) && f.nb.Nodes[a].Used && !seen[a] {
			seen[a] = true
			f.nb.Inputs = append(f.nb.Inputs, a)
			f.notes.Add(e.pos, "%s is an input: source %s drives it", e.args[0].text, e.name.text)
		}
	}
}

// tech sets the technology from the nmos and pmos models most devices use,
// and vdd from a source between the rails.
func (f *flattener) tech() {
	t := f.nb.Tech
	best := func(typ string) *model {
		var m *model
		for mm, n := range f.use {
			if mm.typ == typ && (m == nil || n > f.use[m] || n == f.use[m] && mm.pos.Before(m.pos)) {
				m = mm
			}
		}
		return m
	}
	nm, pm := best("nmos"), best("pmos")
	var from []string
	gammaSet := false
	for _, m := range []*model{nm, pm} {
		if m == nil {
			continue
		}
		from = append(from, fmt.Sprintf("%s (%d devices)", m.name, f.use[m]))
		vals := map[string]float64{}
		for i := range m.params {
			p := &m.params[i]
			if v, ok := f.paramValue(p, f.global); ok {
				vals[p.key] = v
			}
		}
		if lv, ok := vals["level"]; ok && lv != 1 {
			f.notes.Add(m.pos, "model %s is level %g: only its level-1 keys (VTO KP GAMMA PHI, or U0 and TOX for KP) are read", m.name, lv)
		}
		n := m.typ == "nmos"
		if v, ok := vals["vto"]; ok {
			if n {
				t.Vtn = v
			} else {
				t.Vtp = math.Abs(v)
			}
		}
		kp, ok := vals["kp"]
		if !ok {
			u0, okU := vals["u0"]
			if !okU {
				u0, okU = vals["uo"]
			}
			tox, okT := vals["tox"]
			if okU && okT && tox > 0 {
				kp, ok = KPFromMobility(u0, tox), true
			}
		}
		if ok {
			if n {
				t.Kn = kp
			} else {
				t.Kp = kp
			}
		}
		if g, ok := vals["gamma"]; ok && (n || !gammaSet) {
			t.Gamma, gammaSet = g, true
		}
		if p, ok := vals["phi"]; ok && (n || !gammaSet) {
			t.Phi = p
		}
	}
	for mm := range f.use {
		if mm != nm && mm != pm {
			f.notes.Add(mm.pos, "model %s is used by %d devices, but the technology is that of %s: railyard has one technology per design", mm.name, f.use[mm], strings.Join(from, " and "))
		}
	}
	for _, e := range f.d.top.elems {
		if e.letter != 'v' || len(e.args) < 3 {
			continue
		}
		ka, kb := f.rails.Kind(e.args[0].text), f.rails.Kind(e.args[1].text)
		if ka != 1 || kb != -1 {
			continue
		}
		vt := e.args[2]
		if strings.EqualFold(vt.text, "dc") && len(e.args) > 3 {
			vt = e.args[3]
		}
		var ast *expr
		if v, ok := f.value(vt, &ast, f.global); ok && v > 0 {
			t.Vdd = v
			f.notes.Add(e.pos, "vdd is %g V: source %s", v, e.name.text)
		}
		break
	}
	if err := t.Validate(); err != nil {
		at := diag.Pos{File: f.file}
		if nm != nil {
			at = nm.pos
		} else if pm != nil {
			at = pm.pos
		}
		f.errs.Add(at, "the models give an unusable %v", err)
		return
	}
	if len(from) > 0 {
		f.notes.Add(firstPos(nm, pm), "technology from model %s: vtn %.3g V, vtp %.3g V, kn %.3g A/V^2, kp %.3g A/V^2, gamma %.3g, phi %.3g V",
			strings.Join(from, " and "), t.Vtn, t.Vtp, t.Kn, t.Kp, t.Gamma, t.Phi)
	}
	f.nb.Tech = t
}

func firstPos(ms ...*model) diag.Pos {
	for _, m := range ms {
		if m != nil {
			return m.pos
		}
	}
	return diag.Pos{}
}

// EpsOx is the permittivity of silicon dioxide, 3.9 x 8.854e-12 F/m.
const EpsOx = 3.9 * 8.854e-12

// KPFromMobility is the level-1 model's process transconductance
// KP = U0 eps_ox / TOX, with U0 in cm^2/(V s) as the level-1 model
// writes it (so 1e-4 m^2/(V s) each) and TOX in metres; KP in A/V^2.
func KPFromMobility(u0, tox float64) float64 { return u0 * 1e-4 * EpsOx / tox }

// summaryNotes adds the notes said once per design.
func (f *flattener) summaryNotes() {
	if f.coupling {
		f.notes.Add(diag.Pos{File: f.file}, "coupling capacitors between two signal nodes are counted in full on each node (as if the other held still)")
	}
	for i := range f.nb.Nodes {
		if n := &f.nb.Nodes[i]; n.Cap > 0 && n.Used {
			f.sizes.Cap(n.Pos, "capacitance of "+n.Orig, netfile.FormatNumber(n.Cap), n.Cap)
		}
	}
	for _, n := range f.sizes.Notes() {
		f.notes.Add(n.Pos, "%s", n.Msg)
	}
}

// roundDigits rounds v to 12 significant digits.
func roundDigits(v float64) float64 {
	r, err := strconv.ParseFloat(strconv.FormatFloat(v, 'g', 12, 64), 64)
	if err != nil {
		return v
	}
	return r
}
