package vfile

import (
	"railyard/switchsim/internal/netbuild"
	"strconv"
	"strings"

	"railyard/switchsim"
	"railyard/switchsim/diag"
)

// module is one module as written.
type module struct {
	name  string
	pos   diag.Pos
	ports []string // in header order
	nets  map[string]*net
	order []*net // declared nets, in order
	items []item
	used  bool // instantiated by another module
}

// net is a declared net or port: its kind, direction, charge and bits.
type net struct {
	name     string
	pos      diag.Pos
	dir      string // input output inout, or ""
	kind     string // wire tri supply0 supply1 trireg ("" until declared)
	charge   switchsim.Strength
	vector   bool
	msb, lsb int
	isPort   bool
}

func (n *net) width() int {
	if !n.vector {
		return 1
	}
	return abs(n.msb-n.lsb) + 1
}

// bit returns the i-th bit counting from the msb.
func (n *net) bit(i int) int {
	if n.msb >= n.lsb {
		return n.msb - i
	}
	return n.msb + i
}

func abs(x int) int {
	if x < 0 {
		return -x
	}
	return x
}

// ref is a net reference in a terminal or a connection: a name with an
// optional bit or part select, a constant 0 or 1, or nothing.
type ref struct {
	name     string
	esc      bool
	pos      diag.Pos
	sel      int // 0 none, 1 bit, 2 part
	msb, lsb int
	konst    int // -1 none, 0 or 1
	empty    bool
}

// item is a primitive instance or a module instance.
type item struct {
	prim     string // the primitive's keyword, "" for a module instance
	module   tok    // the module instantiated
	name     tok    // instance name (text "" when unnamed)
	terms    []ref  // primitive terminals, or ordered connections
	named    []namedConn
	isNamed  bool
	strength [2]switchsim.Strength // pullup/pulldown (0 and 1 strengths), HighZ when not given
	pos      diag.Pos
}

type namedConn struct {
	port tok
	ref  ref
}

// switch primitives of IEEE 1364-2005 §7 and their terminal counts.
var primTerms = map[string]int{
	"nmos": 3, "pmos": 3, "rnmos": 3, "rpmos": 3, "cmos": 4, "rcmos": 4,
	"tran": 2, "rtran": 2, "tranif0": 3, "tranif1": 3, "rtranif0": 3, "rtranif1": 3,
	"pullup": 1, "pulldown": 1,
}

var primForm = map[string]string{
	"nmos": "(out, data, control)", "pmos": "(out, data, control)", "rnmos": "(out, data, control)", "rpmos": "(out, data, control)",
	"cmos": "(out, data, ncontrol, pcontrol)", "rcmos": "(out, data, ncontrol, pcontrol)",
	"tran": "(a, b)", "rtran": "(a, b)", "tranif0": "(a, b, control)", "tranif1": "(a, b, control)",
	"rtranif0": "(a, b, control)", "rtranif1": "(a, b, control)", "pullup": "(y)", "pulldown": "(y)",
}

// What the subset reads, for the errors about what it does not.
const supported = "modules with ports; input output inout wire tri supply0 supply1 trireg declarations; the switch primitives " +
	"nmos pmos cmos rnmos rpmos rcmos tran rtran tranif0 tranif1 rtranif0 rtranif1 pullup pulldown (IEEE 1364-2005 §7); module instances"

var gatePrims = map[string]bool{"and": true, "nand": true, "or": true, "nor": true, "xor": true, "xnor": true, "buf": true, "not": true,
	"bufif0": true, "bufif1": true, "notif0": true, "notif1": true}

var outside = map[string]string{
	"assign": "continuous assignment", "always": "behavioural code", "initial": "behavioural code", "reg": "a reg",
	"integer": "an integer variable", "real": "a real variable", "realtime": "a variable", "time": "a time variable", "event": "an event",
	"function": "a function", "task": "a task", "generate": "a generate block", "genvar": "a genvar", "defparam": "defparam",
	"wand": "a wand net", "wor": "a wor net", "tri0": "a tri0 net", "tri1": "a tri1 net", "triand": "a triand net",
	"trior": "a trior net", "uwire": "a uwire net", "primitive": "a user-defined primitive (UDP)", "table": "a UDP table",
	"config": "a configuration", "library": "a library map", "fork": "behavioural code", "begin": "behavioural code",
	"specparam": "a specify parameter",
}

type parser struct {
	toks       []tok
	i          int
	errs       *netbuild.Sink
	notes      *netbuild.Sink
	lim        Limits
	mods       map[string]*module
	order      []*module
	delayNoted bool // a delay was seen: noted once
}

// peek is the next token; past the end it stays at the final tEOF.
func (p *parser) peek() tok {
	if p.i >= len(p.toks) {
		p.i = len(p.toks) - 1
	}
	return p.toks[p.i]
}

// at is the token n ahead of the next (tEOF past the end).
func (p *parser) at(n int) tok {
	if p.i+n >= len(p.toks) {
		return p.toks[len(p.toks)-1]
	}
	return p.toks[p.i+n]
}

func (p *parser) take() tok {
	t := p.peek()
	if t.kind != tEOF {
		p.i++
	}
	return t
}

func (p *parser) accept(s string) bool {
	if p.peek().is(s) {
		p.i++
		return true
	}
	return false
}

// expect reports a missing punctuation and reports whether it was there.
func (p *parser) expect(s, where string) bool {
	if p.accept(s) {
		return true
	}
	t := p.peek()
	p.errs.Add(t.pos, "expected %q %s, found %s", s, where, describe(t))
	return false
}

func describe(t tok) string {
	switch t.kind {
	case tEOF:
		return "the end of the file"
	case tIdent:
		return strconv.Quote(t.text)
	}
	return strconv.Quote(t.text)
}

// skipTo moves past the next s (a statement's end) to resume after an error.
func (p *parser) skipTo(s string) {
	for {
		t := p.take()
		if t.kind == tEOF || t.is(s) {
			return
		}
		if t.kind == tIdent && t.text == "endmodule" {
			p.i--
			return
		}
	}
}

// skipBefore moves up to the next s, endmodule or the end, leaving it.
func (p *parser) skipBefore(s string) {
	for {
		t := p.peek()
		if t.kind == tEOF || t.is(s) || t.kind == tIdent && t.text == "endmodule" {
			return
		}
		p.i++
	}
}

func (p *parser) ident(what string) (tok, bool) {
	t := p.peek()
	if t.kind != tIdent {
		p.errs.Add(t.pos, "expected %s, found %s", what, describe(t))
		return t, false
	}
	p.i++
	return t, true
}

func (p *parser) source() {
	for p.peek().kind != tEOF && !p.errs.Full() {
		t := p.take()
		switch {
		case t.kind == tIdent && (t.text == "module" || t.text == "macromodule"):
			p.module(t)
		case t.kind == tIdent && t.text == "primitive":
			p.errs.Add(t.pos, "a user-defined primitive (UDP) is outside the switch-level subset; railyard reads %s", supported)
			for q := p.take(); q.kind != tEOF && !(q.kind == tIdent && q.text == "endprimitive"); q = p.take() {
			}
		default:
			p.errs.Add(t.pos, "expected module, found %s", describe(t))
			for q := p.peek(); q.kind != tEOF && !(q.kind == tIdent && (q.text == "module" || q.text == "macromodule")); q = p.peek() {
				p.i++
			}
		}
	}
}

func (p *parser) module(kw tok) {
	name, ok := p.ident("a module name")
	if !ok {
		p.skipTo(";")
	}
	m := &module{name: name.text, pos: name.pos, nets: map[string]*net{}}
	if ok {
		if prev := p.mods[m.name]; prev != nil {
			p.errs.Add(name.pos, "module %s defined twice (first at %s)", m.name, prev.pos)
		} else {
			p.mods[m.name] = m
			p.order = append(p.order, m)
		}
	}
	if p.accept("#") {
		p.errs.Add(p.peek().pos, "module parameters are outside the switch-level subset")
		p.balanced()
	}
	if p.accept("(") {
		p.portList(m)
	}
	p.expect(";", "after the module header")
	for !p.errs.Full() {
		t := p.peek()
		if t.kind == tEOF {
			p.errs.Add(kw.pos, "module %s has no endmodule", m.name)
			return
		}
		if t.kind == tIdent && t.text == "endmodule" {
			p.i++
			break
		}
		p.item(m)
	}
	for _, n := range m.ports {
		if d := m.nets[n]; d == nil || d.dir == "" {
			at := m.pos
			if d != nil {
				at = d.pos
			}
			p.errs.Add(at, "port %s of module %s has no direction (declare it input, output or inout)", n, m.name)
		}
	}
}

// balanced skips a parenthesised group (a parameter or delay list).
func (p *parser) balanced() {
	if !p.expect("(", "") {
		return
	}
	depth := 1
	for depth > 0 {
		t := p.take()
		switch {
		case t.kind == tEOF:
			return
		case t.is("("):
			depth++
		case t.is(")"):
			depth--
		}
	}
}

// portList reads ( a, b, c ) or ANSI ( input a, output [3:0] y, ... ).
func (p *parser) portList(m *module) {
	if p.accept(")") {
		return
	}
	dir, kind := "", ""
	for {
		t := p.peek()
		if t.kind == tIdent && (t.text == "input" || t.text == "output" || t.text == "inout") {
			p.i++
			dir, kind = t.text, ""
			if q := p.peek(); q.kind == tIdent && isNetKind(q.text) {
				kind = q.text
				p.i++
			}
			if q := p.peek(); q.kind == tIdent && q.text == "reg" {
				p.errs.Add(q.pos, "a reg is outside the switch-level subset; railyard reads %s", supported)
				p.i++
			}
			var r [2]int
			vec := p.rangeOpt(&r)
			name, ok := p.ident("a port name")
			if ok {
				p.declare(m, name, dir, kind, vec, r, true)
			}
		} else if t.is(".") {
			p.errs.Add(t.pos, "port expressions (.name(...)) in a module header are not supported: bit-level ports only")
			p.skipTo(")")
			return
		} else {
			name, ok := p.ident("a port name")
			if !ok {
				p.skipTo(")")
				return
			}
			if dir != "" { // ANSI: the direction carries on to the next names
				p.declare(m, name, dir, kind, false, [2]int{}, true)
			} else {
				p.addPort(m, name)
			}
			if p.peek().is("[") {
				p.errs.Add(p.peek().pos, "a bit select in the port list is not supported: bit-level ports only")
				p.skipTo(")")
				return
			}
		}
		if p.accept(")") {
			return
		}
		if !p.expect(",", "between ports") {
			p.skipTo(")")
			return
		}
	}
}

func (p *parser) addPort(m *module, name tok) {
	for _, q := range m.ports {
		if q == name.text {
			p.errs.Add(name.pos, "port %s given twice", name.text)
			return
		}
	}
	m.ports = append(m.ports, name.text)
	if m.nets[name.text] == nil {
		n := &net{name: name.text, pos: name.pos, isPort: true, charge: switchsim.HighZ}
		m.nets[name.text] = n
		m.order = append(m.order, n)
	}
}

func isNetKind(s string) bool {
	switch s {
	case "wire", "tri", "supply0", "supply1", "trireg":
		return true
	}
	return false
}

// rangeOpt reads an optional [msb:lsb] of integer constants.
func (p *parser) rangeOpt(r *[2]int) bool {
	if !p.peek().is("[") {
		return false
	}
	open := p.take()
	a, ok1 := p.intConst()
	ok2 := p.expect(":", "in a range [msb:lsb]")
	b, ok3 := p.intConst()
	ok4 := p.expect("]", "after a range")
	if !(ok1 && ok2 && ok3 && ok4) {
		p.skipBefore(";")
		return false
	}
	if abs(a-b)+1 > p.lim.VectorBits {
		p.errs.Add(open.pos, "vector [%d:%d] is wider than the limit of %d bits", a, b, p.lim.VectorBits)
		return false
	}
	r[0], r[1] = a, b
	return true
}

func (p *parser) intConst() (int, bool) {
	t := p.peek()
	if t.kind != tNumber || strings.ContainsAny(t.text, ".'e") {
		p.errs.Add(t.pos, "expected an integer constant, found %s: vectors need constant bounds (otherwise use bit-level ports)", describe(t))
		return 0, false
	}
	p.i++
	v, err := strconv.Atoi(strings.ReplaceAll(t.text, "_", ""))
	if err != nil || v > 1<<20 {
		p.errs.Add(t.pos, "bit index %s is out of range", t.text)
		return 0, false
	}
	return v, true
}

// declare records a direction or a net kind for a name of m.
func (p *parser) declare(m *module, name tok, dir, kind string, vec bool, r [2]int, ansi bool) {
	if ansi {
		p.addPort(m, name)
	}
	n := m.nets[name.text]
	if n == nil {
		n = &net{name: name.text, pos: name.pos, charge: switchsim.HighZ}
		m.nets[name.text] = n
		m.order = append(m.order, n)
	}
	if dir != "" {
		if n.dir != "" {
			p.errs.Add(name.pos, "%s is declared %s and %s", name.text, n.dir, dir)
			return
		}
		if !n.isPort {
			p.errs.Add(name.pos, "%s is declared %s but is not in the port list of module %s", name.text, dir, m.name)
			return
		}
		n.dir = dir
	}
	if kind != "" {
		if n.kind != "" && n.kind != kind {
			p.errs.Add(name.pos, "%s is declared %s and %s", name.text, n.kind, kind)
			return
		}
		n.kind = kind
	}
	if vec {
		if n.vector && (n.msb != r[0] || n.lsb != r[1]) {
			p.errs.Add(name.pos, "%s is declared with two different ranges", name.text)
			return
		}
		n.vector, n.msb, n.lsb = true, r[0], r[1]
	}
}

// item reads one module item.
func (p *parser) item(m *module) {
	t := p.take()
	if t.kind != tIdent {
		if t.is(";") {
			return
		}
		p.errs.Add(t.pos, "expected a declaration or an instance, found %s", describe(t))
		p.skipTo(";")
		return
	}
	switch w := t.text; {
	case w == "input" || w == "output" || w == "inout":
		kind := ""
		if q := p.peek(); q.kind == tIdent && isNetKind(q.text) {
			kind = q.text
			p.i++
		}
		p.declList(m, w, kind)
	case isNetKind(w):
		p.netDecl(m, t)
	case w == "parameter" || w == "localparam":
		p.notes.Add(t.pos, "%s read and ignored: switch-level netlists need no parameters", w)
		p.skipTo(";")
	case w == "specify":
		p.notes.Add(t.pos, "specify block read and ignored: railyard does not model delays")
		for q := p.take(); q.kind != tEOF && !(q.kind == tIdent && q.text == "endspecify"); q = p.take() {
		}
	case primTerms[w] > 0:
		p.prim(m, t)
	case gatePrims[w]:
		p.errs.Add(t.pos, "gate primitive %s is outside the switch-level subset; railyard reads %s", w, supported)
		p.skipTo(";")
	case outside[w] != "":
		p.errs.Add(t.pos, "%s (%s) is outside the switch-level subset; railyard reads %s", w, outside[w], supported)
		if w == "function" || w == "task" || w == "generate" || w == "specify" || w == "fork" || w == "begin" {
			end := map[string]string{"function": "endfunction", "task": "endtask", "generate": "endgenerate", "fork": "join", "begin": "end"}[w]
			for q := p.take(); q.kind != tEOF && !(q.kind == tIdent && (q.text == end || q.text == "endmodule")); q = p.take() {
			}
			if p.i > 0 && p.toks[p.i-1].text == "endmodule" {
				p.i--
			}
			return
		}
		p.skipTo(";")
	case w == "module" || w == "macromodule":
		p.errs.Add(t.pos, "module %s starts inside module %s, which has no endmodule", p.peek().text, m.name)
		p.i--
		p.skipTo(";")
	default:
		p.instance(m, t)
	}
}

func (p *parser) declList(m *module, dir, kind string) {
	if q := p.peek(); q.kind == tIdent && q.text == "reg" {
		p.errs.Add(q.pos, "a reg is outside the switch-level subset; railyard reads %s", supported)
		p.skipTo(";")
		return
	}
	var r [2]int
	vec := p.rangeOpt(&r)
	for {
		name, ok := p.ident("a name")
		if !ok {
			p.skipTo(";")
			return
		}
		p.declare(m, name, dir, kind, vec, r, false)
		if p.accept(";") {
			return
		}
		if !p.expect(",", "between names") {
			p.skipTo(";")
			return
		}
	}
}

func (p *parser) netDecl(m *module, kw tok) {
	charge := switchsim.HighZ
	if p.peek().is("(") {
		open := p.take()
		q := p.take()
		ok := q.kind == tIdent
		if kw.text == "trireg" && ok {
			switch q.text {
			case "small":
				charge = switchsim.Small
			case "medium":
				charge = switchsim.Medium
			case "large":
				charge = switchsim.Large
			default:
				ok = false
			}
		} else {
			ok = false
		}
		if !ok {
			if kw.text == "trireg" {
				p.errs.Add(q.pos, "expected a charge strength (small, medium or large) after trireg (, found %s", describe(q))
			} else {
				p.errs.Add(open.pos, "a drive strength on a %s declaration goes with an assignment, which is outside the switch-level subset", kw.text)
			}
			p.skipTo(";")
			return
		}
		p.expect(")", "after the charge strength")
	}
	if kw.text == "trireg" && charge == switchsim.HighZ {
		charge = switchsim.Medium // IEEE 1364-2005: a trireg's charge strength is medium unless given
	}
	if q := p.peek(); q.kind == tIdent && (q.text == "scalared" || q.text == "vectored") {
		p.i++
	}
	var r [2]int
	vec := p.rangeOpt(&r)
	if p.peek().is("#") {
		p.delay()
	}
	for {
		name, ok := p.ident("a net name")
		if !ok {
			p.skipTo(";")
			return
		}
		p.declare(m, name, "", kw.text, vec, r, false)
		if n := m.nets[name.text]; n != nil && charge != switchsim.HighZ {
			n.charge = charge
		}
		if p.peek().is("=") {
			p.errs.Add(p.peek().pos, "a net declaration with an assignment is outside the switch-level subset; railyard reads %s", supported)
			p.skipTo(";")
			return
		}
		if p.accept(";") {
			return
		}
		if !p.expect(",", "between names") {
			p.skipTo(";")
			return
		}
	}
}

// delay skips #d, #(...) and notes once that delays are ignored.
func (p *parser) delay() {
	at := p.take()
	if !p.delayNoted {
		p.notes.Add(at.pos, "delays are read and ignored: railyard's rounds are unit delays")
		p.delayNoted = true
	}
	if p.peek().is("(") {
		p.balanced()
		return
	}
	t := p.take()
	if t.kind != tNumber && t.kind != tIdent {
		p.errs.Add(t.pos, "expected a delay after #, found %s", describe(t))
	}
}

var strengthNames = map[string]switchsim.Strength{"supply": switchsim.Supply, "strong": switchsim.Strong, "pull": switchsim.Pull, "weak": switchsim.Weak, "highz": switchsim.HighZ}

// strengthSpec reads (s0, s1), (s1, s0), (s1) or (s0) of a pullup or pulldown.
func (p *parser) strengthSpec(it *item, kw tok) bool {
	if !p.peek().is("(") {
		return true
	}
	// A strength spec is ( strength-keyword ...; otherwise it is the terminal list.
	if q := p.at(1); q.kind != tIdent || !isStrengthWord(q.text) {
		return true
	}
	if kw.text != "pullup" && kw.text != "pulldown" {
		p.errs.Add(p.peek().pos, "%s takes no drive strength (IEEE 1364-2005 §7.1: a switch passes the strength of its data input); strengths go on pullup and pulldown", kw.text)
		p.balanced()
		return false
	}
	p.i++
	for {
		q := p.take()
		s, ok := strengthNames[strings.TrimRight(q.text, "01")]
		if q.kind != tIdent || !ok || q.text == "" || (q.text[len(q.text)-1] != '0' && q.text[len(q.text)-1] != '1') {
			p.errs.Add(q.pos, "expected a strength (supply strong pull weak, with 0 or 1: strong1), found %s", describe(q))
			p.skipBefore(";")
			return false
		}
		if s == switchsim.HighZ {
			p.errs.Add(q.pos, "%s cannot pull at highz", kw.text)
		}
		it.strength[q.text[len(q.text)-1]-'0'] = s
		if p.accept(")") {
			return true
		}
		if !p.expect(",", "between strengths") {
			p.skipBefore(";")
			return false
		}
	}
}

func isStrengthWord(s string) bool {
	if len(s) < 2 {
		return false
	}
	_, ok := strengthNames[s[:len(s)-1]]
	return ok && (s[len(s)-1] == '0' || s[len(s)-1] == '1')
}

// prim reads a switch primitive statement: KIND [strength] [delay]
// [name [range]] (terms) {, [name] (terms)} ;
func (p *parser) prim(m *module, kw tok) {
	proto := item{prim: kw.text, pos: kw.pos}
	if !p.strengthSpec(&proto, kw) {
		p.skipTo(";")
		return
	}
	if p.peek().is("#") {
		p.delay()
	}
	for first := true; ; first = false {
		it := proto
		if !first {
			it.pos = p.peek().pos // an unnamed instance is named by where it starts
		}
		if q := p.peek(); q.kind == tIdent {
			it.name = p.take()
			if p.peek().is("[") {
				p.errs.Add(p.peek().pos, "arrays of instances are not supported: write one instance a bit")
				p.skipTo(";")
				return
			}
		}
		if !p.expect("(", "before the terminals of "+kw.text+" "+primForm[kw.text]) {
			p.skipTo(";")
			return
		}
		it.terms = p.refs()
		if n := primTerms[kw.text]; len(it.terms) != n {
			p.errs.Add(it.pos, "wrong number of terminals: %s takes %d %s (IEEE 1364-2005 §7), found %d", kw.text, n, primForm[kw.text], len(it.terms))
		} else {
			for _, r := range it.terms {
				if r.empty {
					p.errs.Add(r.pos, "a terminal of %s is left empty: every terminal %s must be connected", kw.text, primForm[kw.text])
				}
			}
			m.items = append(m.items, it)
		}
		if p.accept(";") {
			return
		}
		if !p.expect(",", "between instances or ;") {
			p.skipTo(";")
			return
		}
	}
}

// refs reads comma-separated references up to and including ")".
func (p *parser) refs() []ref {
	var out []ref
	for {
		r := p.ref()
		out = append(out, r)
		if len(out) > p.lim.Terms {
			p.errs.Add(r.pos, "more than %d connections in one instance", p.lim.Terms)
			p.skipTo(")")
			return out
		}
		if p.accept(")") {
			return out
		}
		if !p.expect(",", "between terminals") {
			p.skipTo(")")
			return out
		}
	}
}

// ref reads one net reference (possibly empty).
func (p *parser) ref() ref {
	t := p.peek()
	r := ref{pos: t.pos, konst: -1}
	switch {
	case t.is(",") || t.is(")"):
		r.empty = true
		return r
	case t.kind == tNumber:
		p.i++
		switch t.text {
		case "1'b0", "'b0", "1'h0", "1'd0", "0":
			r.konst = 0
		case "1'b1", "'b1", "1'h1", "1'd1", "1":
			r.konst = 1
		default:
			p.errs.Add(t.pos, "constant %s: only 1'b0 and 1'b1 (the rails) can connect a terminal", t.text)
			r.konst = 0
		}
		return r
	case t.is("{"):
		p.errs.Add(t.pos, "concatenations are not supported: connect one net or one bit range")
		for q := p.take(); q.kind != tEOF && !q.is("}"); q = p.take() {
		}
		r.empty = true
		return r
	case t.kind != tIdent:
		p.errs.Add(t.pos, "expected a net name, found %s", describe(t))
		p.take()
		r.empty = true
		return r
	}
	p.i++
	r.name, r.esc = t.text, t.esc
	if p.accept("[") {
		a, ok := p.intConst()
		if !ok {
			p.skipTo("]")
			return r
		}
		r.sel, r.msb, r.lsb = 1, a, a
		if p.accept(":") {
			b, ok := p.intConst()
			if !ok {
				p.skipTo("]")
				return r
			}
			r.sel, r.lsb = 2, b
		}
		p.expect("]", "after a bit select")
	}
	return r
}

// instance reads a module instance: MODULE [#(...)] NAME (conns) {, NAME (conns)} ;
func (p *parser) instance(m *module, mod tok) {
	if p.peek().is("#") {
		p.notes.Add(p.peek().pos, "parameters of instances of %s are ignored", mod.text)
		p.i++
		p.balanced()
	}
	if p.peek().is("(") {
		p.errs.Add(p.peek().pos, "%s is not a keyword of the switch-level subset (%s), and a module instance needs a name", mod.text, supported)
		p.skipTo(";")
		return
	}
	for first := true; ; first = false {
		it := item{module: mod, pos: mod.pos}
		name, ok := p.ident("an instance name")
		if !ok {
			p.skipTo(";")
			return
		}
		it.name = name
		if !first {
			it.pos = name.pos
		}
		if p.peek().is("[") {
			p.errs.Add(p.peek().pos, "arrays of instances are not supported: write one instance a bit")
			p.skipTo(";")
			return
		}
		if !p.expect("(", "before the connections of "+name.text) {
			p.skipTo(";")
			return
		}
		if p.peek().is(".") {
			it.isNamed = true
			for {
				if !p.expect(".", "before a named connection (.port(net))") {
					p.skipTo(";")
					return
				}
				port, ok := p.ident("a port name")
				if !ok || !p.expect("(", "after ."+port.text) {
					p.skipTo(";")
					return
				}
				var r ref
				if p.peek().is(")") {
					r = ref{pos: p.peek().pos, empty: true, konst: -1}
				} else {
					r = p.ref()
				}
				p.expect(")", "after the connection of ."+port.text)
				it.named = append(it.named, namedConn{port, r})
				if len(it.named) > p.lim.Terms {
					p.errs.Add(port.pos, "more than %d connections in one instance", p.lim.Terms)
					p.skipTo(";")
					return
				}
				if p.accept(")") {
					break
				}
				if !p.expect(",", "between connections") {
					p.skipTo(";")
					return
				}
			}
		} else if !p.accept(")") {
			it.terms = p.refs()
		}
		m.items = append(m.items, it)
		if p.accept(";") {
			return
		}
		if !p.expect(",", "between instances or ;") {
			p.skipTo(";")
			return
		}
	}
}
