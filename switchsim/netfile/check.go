package netfile

import (
	"fmt"
	"slices"
	"strings"
	"unicode"

	"railyard/switchsim"
	"railyard/switchsim/diag"
)

// Limits bound what the reader accepts, so that memory stays bounded on
// any input, however large or deeply nested.
type Limits struct {
	FileSize  int // bytes in one file
	LineLen   int // bytes in one line
	Depth     int // instances nested inside instances
	Devices   int // devices once every cell is expanded
	NameLen   int // bytes in one name as written
	NameBytes int // bytes of every node and device name once every cell is expanded
	Errors    int // errors reported before the rest are only counted
}

// DefaultLimits are the limits Read uses.
func DefaultLimits() Limits {
	return Limits{FileSize: 4 << 20, LineLen: 64 << 10, Depth: 64, Devices: 2_000_000,
		NameLen: 1 << 10, NameBytes: 256 << 20, Errors: 100}
}

// MaxCorners bounds the corner statements of one design.
const MaxCorners = 16

var (
	topKinds = []string{"design", "tech", "corner", "power", "ground", "input", "output", "node", "nmos", "pmos", "tgate",
		"rnmos", "rpmos", "rtgate", "tran", "rtran", "pullup", "pulldown", "cell", "use", "alias"}
	cellKinds = []string{"node", "nmos", "pmos", "tgate", "rnmos", "rpmos", "rtgate", "tran", "rtran", "pullup", "pulldown", "use"}
)

// resistive reports whether a device statement is of the resistive kinds
// of IEEE 1364-2005 §7.12 (rnmos, rpmos, rtgate for rcmos, rtran).
func resistive(kind string) bool {
	switch kind {
	case "rnmos", "rpmos", "rtgate", "rtran":
		return true
	}
	return false
}

// cellDef is a checked cell, ready to expand.
type cellDef struct {
	name          string
	file          string
	line, col     int
	ports         []string
	portIx        map[string]int // by name, for cells of many ports; nil for few
	items         []item
	lib           bool
	power, ground string // the rail names of the file that defines it
	incomplete    bool   // a statement of its body had an error and was left out
	used          bool   // another cell uses it

	// Filled in by measure.
	visit  uint8 // 0 unvisited, 1 on the walk's stack, 2 measured
	stack  int   // its index on the walk's stack while visit is 1
	cycle  bool  // on a cycle, or uses a cell that is: never expanded
	height int   // levels of instances it makes, itself included, saturated past the depth limit
	deep   int   // the item whose cell is the tallest (-1: none), to name the chain
	devs   int64 // devices once expanded, saturated
	names  int64 // nodes and devices an instance names, saturated
	bytes  int64 // bytes of those names without the instance's own prefix, saturated
}

// item is one checked statement of a scope.
type item struct {
	kind      string // input output node, a device statement's keyword, use
	line, col int
	name      string
	terms     []string
	words     []Word // the terms as written (input, output, node), for positions
	w, l      float64
	wn, wp    float64
	cap       float64
	ohms      float64            // r=: a resistance in ohms for physical mode; 0 none given
	strength  switchsim.Strength // HighZ: the device's default
	charge    switchsim.Strength // HighZ: the default
	cell      *cellDef
}

func (cd *cellDef) hasPort(n string) bool { _, ok := cd.portIndex(n); return ok }

// portIndex finds a port by name: a scan for a few ports (most cells),
// a map beyond, so that a file of many small cells costs no map each.
func (cd *cellDef) portIndex(n string) (int, bool) {
	if cd.portIx != nil {
		i, ok := cd.portIx[n]
		return i, ok
	}
	for i, p := range cd.ports {
		if p == n {
			return i, true
		}
	}
	return 0, false
}

func (cd *cellDef) addPort(n string) {
	cd.ports = append(cd.ports, n)
	if cd.portIx == nil && len(cd.ports) > 8 {
		cd.portIx = make(map[string]int, 16)
		for i, p := range cd.ports {
			cd.portIx[p] = i
		}
	} else if cd.portIx != nil {
		cd.portIx[n] = len(cd.ports) - 1
	}
}

func (cd *cellDef) bad(lim Limits) bool { return cd.cycle || cd.height > lim.Depth }

func (it *item) devices() int {
	switch it.kind {
	case "nmos", "pmos", "rnmos", "rpmos", "tran", "rtran", "pullup", "pulldown":
		return 1
	case "tgate", "rtgate":
		return 2
	}
	return 0
}

// alias is a checked alias statement.
type alias struct {
	name, original string
	at             Word
}

// program is a checked design: what the flattener needs.
type program struct {
	name, desc    string
	named         bool
	tech          switchsim.Tech
	power, ground string
	railsBad      bool // power and ground share a name (reported)
	top           []item
	cells         map[string]*cellDef
	corners       []Corner
	aliases       []alias
	tooBig        bool            // past the device or name limit (reported): never expanded
	suspect       map[string]bool // top-level nodes named by a statement left out for an error
	dropped       bool            // some statement was left out for an error
	techBad       bool            // the tech statement's values were reported as an error
	notes         diag.List
	lim           Limits
}

type checker struct {
	file     string
	lim      Limits
	errs     *diag.Sink
	lib      bool
	cells    map[string]*cellDef
	libCells map[string]*cellDef
	prog     *program
	sizes    SizeNotes
	hint     string // cellHint's text, made once
}

func (c *checker) errAt(line, col int, format string, args ...any) {
	c.errs.Add(at(c.file, line, col), format, args...)
}

func (c *checker) where(line, col int) string {
	return fmt.Sprintf("%d:%d", line, col)
}

// isName reports whether s is a name: a letter or _ first, then letters,
// digits, _ . [ ] (switchsim/FORMATS.md).
func isName(s string) bool {
	if s == "" {
		return false
	}
	for i, r := range s {
		switch {
		case r == '_' || unicode.IsLetter(r):
		case i > 0 && (unicode.IsDigit(r) || r == '.' || r == '[' || r == ']'):
		default:
			return false
		}
	}
	return true
}

func (c *checker) name(w Word, what string) (string, bool) {
	if len(w.Text) > c.lim.NameLen {
		c.errAt(w.Line, w.Col, "%s is longer than the limit of %d bytes", what[strings.IndexByte(what, ' ')+1:], c.lim.NameLen)
		return "", false
	}
	if isName(w.Text) {
		return w.Text, true
	}
	c.errAt(w.Line, w.Col, "expected %s, found %q: a name starts with a letter or _ and holds only letters, digits, _ . [ ]", what, w.Text)
	return "", false
}

// arity checks the number of positional words after the keyword.
func (c *checker) arity(s *Stmt, min, max int, form string) bool {
	n := len(s.Args)
	switch {
	case n < min:
		c.errAt(s.Line, s.Col, "wrong number of terminals: %s takes %s, found %s after %s", s.Kind, form, diag.Count(n, "word"), s.Kind)
		return false
	case max >= 0 && n > max:
		w := s.Args[max]
		c.errAt(w.Line, w.Col, "wrong number of terminals: %s takes %s, found %s after %s", s.Kind, form, diag.Count(n, "word"), s.Kind)
		return false
	}
	return true
}

// opts checks a statement's KEY=VALUE words against the keys it takes and
// returns the good ones by key.
func (c *checker) opts(s *Stmt, allowed ...string) map[string]Opt {
	got := map[string]Opt{}
	for _, o := range s.Opts {
		switch {
		case o.Key == "":
			c.errAt(o.Line, o.Col, "missing option name before =")
			continue
		case !slices.Contains(allowed, o.Key):
			if len(allowed) == 0 {
				c.errAt(o.Line, o.Col, "unknown option %q: %s takes no options", o.Key, s.Kind)
			} else {
				c.errAt(o.Line, o.Col, "unknown option %q for %s%s (want %s)", o.Key, s.Kind, diag.DidYouMean(o.Key, allowed), strings.Join(allowed, ", "))
			}
			continue
		case o.Val == "":
			c.errAt(o.Line, o.ValCol, "missing value after %s=", o.Key)
			continue
		}
		if prev, dup := got[o.Key]; dup {
			c.errAt(o.Line, o.Col, "option %s given twice (first at %s)", o.Key, c.where(prev.Line, prev.Col))
			continue
		}
		got[o.Key] = o
	}
	if s.Kind != "design" && s.Kind != "alias" {
		for _, w := range s.Strs {
			c.errAt(w.Line, w.Col, "unexpected string: only design and alias take a quoted string")
		}
	}
	return got
}

// number reads an option's value as a number; positive demands > 0.
func (c *checker) number(o Opt, positive bool) (float64, bool) {
	v, err := ParseNumber(o.Val)
	if err != nil {
		c.errAt(o.Line, o.ValCol, "bad number %q for %s: want digits with an optional fraction, exponent and one SI prefix (f p n u m k M G)", o.Val, o.Key)
		return 0, false
	}
	if positive && v <= 0 {
		c.errAt(o.Line, o.ValCol, "%s must be positive, not %s", o.Key, o.Val)
		return 0, false
	}
	return v, true
}

// plausible notes a size or capacitance outside the plausible range.
func (c *checker) plausible(o Opt, v float64) {
	p := at(c.file, o.Line, o.ValCol)
	switch o.Key {
	case "w", "l", "wn", "wp":
		c.sizes.Size(p, o.Key, o.Val, v)
	case "cap", "cnode", "cdiff":
		c.sizes.Cap(p, o.Key, o.Val, v)
	}
}

var strengthNames = []string{"supply", "strong", "pull", "weak"}

func (c *checker) strength(o Opt) (switchsim.Strength, bool) {
	s, ok := switchsim.ParseStrength(o.Val)
	if !ok || s < switchsim.Weak {
		c.errAt(o.Line, o.ValCol, "unknown strength %q%s (want supply, strong, pull or weak)", o.Val, diag.DidYouMean(strings.ToLower(o.Val), strengthNames))
		return switchsim.HighZ, false
	}
	return s, true
}

func (c *checker) charge(o Opt) (switchsim.Strength, bool) {
	s, ok := switchsim.ParseStrength(o.Val)
	if !ok || !s.IsCharge() {
		c.errAt(o.Line, o.ValCol, "unknown charge %q%s (want small, medium or large)", o.Val, diag.DidYouMean(strings.ToLower(o.Val), []string{"small", "medium", "large"}))
		return switchsim.HighZ, false
	}
	return s, true
}

// check turns a parsed tree into a program, reporting every problem.
func (c *checker) check(t *Tree) *program {
	p := &program{tech: switchsim.Generic(), power: "vdd", ground: "gnd", cells: map[string]*cellDef{}, suspect: map[string]bool{}, lim: c.lim}
	c.prog, c.cells = p, p.cells

	// Pass 1: the statements that set up the whole file (design, tech,
	// rails), so that cells and bodies can be judged against them.
	var designAt, techAt, powerAt, groundAt *Stmt
	firstKind := -1
	for i, s := range t.Stmts {
		if s.Kind == "" {
			continue
		}
		if firstKind < 0 {
			firstKind = i
		}
		switch s.Kind {
		case "design":
			c.opts(s)
			switch {
			case designAt != nil:
				c.errAt(s.Line, s.Col, "design given twice (first at %s)", c.where(designAt.Line, designAt.Col))
				continue
			case i != firstKind:
				c.errAt(s.Line, s.Col, "design must be the first statement")
			}
			designAt = s
			if c.arity(s, 1, 1, "NAME [\"description\"]") {
				if n, ok := c.name(s.Args[0], "a design name"); ok {
					p.name, p.named = n, true
				}
			}
			switch len(s.Strs) {
			case 0:
			case 1:
				p.desc = s.Strs[0].Text
			default:
				w := s.Strs[1]
				c.errAt(w.Line, w.Col, "design takes one description string")
			}
		case "tech":
			if techAt != nil {
				c.errAt(s.Line, s.Col, "tech given twice (first at %s): put every key on one line", c.where(techAt.Line, techAt.Col))
				continue
			}
			techAt = s
			c.tech(s, p)
		case "power", "ground":
			prev := &powerAt
			if s.Kind == "ground" {
				prev = &groundAt
			}
			c.opts(s)
			if *prev != nil {
				c.errAt(s.Line, s.Col, "%s given twice (first at %s)", s.Kind, c.where((*prev).Line, (*prev).Col))
				continue
			}
			*prev = s
			if !c.arity(s, 1, 1, "one rail NAME") {
				continue
			}
			if n, ok := c.name(s.Args[0], "a rail name"); ok {
				if s.Kind == "power" {
					p.power = n
				} else {
					p.ground = n
				}
			}
		}
	}
	if p.power == p.ground {
		// Reported at the statement that made them meet: ground if given
		// (it names the second rail), else power naming the default ground.
		p.railsBad = true
		switch {
		case groundAt != nil && len(groundAt.Args) > 0:
			w := groundAt.Args[0]
			c.errAt(w.Line, w.Col, "power and ground are both named %s", p.power)
		case powerAt != nil && len(powerAt.Args) > 0:
			w := powerAt.Args[0]
			c.errAt(w.Line, w.Col, "power and ground are both named %s (the ground is gnd unless a ground statement renames it)", p.power)
		}
	}
	// Pass 1b: corners, each the tech of pass 1 with keys replaced.
	for _, s := range t.Stmts {
		if s.Kind == "corner" {
			c.corner(s, p)
		}
	}

	// Pass 2: cell headers, so that a cell may be used before it is defined.
	var order []*cellDef // the file's cells in the order written
	for _, s := range t.Stmts {
		if s.Kind == "cell" {
			if cd := c.cellHeader(s, p); cd != nil {
				order = append(order, cd)
			}
		}
	}
	// Pass 3: cell bodies and the top level.
	for _, s := range t.Stmts {
		if s.Kind == "cell" {
			if cd := c.cells[firstArg(s)]; cd != nil && cd.line == s.Line {
				cd.items = c.body(s.Body, cd)
			} else {
				c.body(s.Body, &cellDef{name: firstArg(s), power: p.power, ground: p.ground})
			}
		}
	}
	p.top = c.body(t.Stmts, nil)
	for _, s := range t.Stmts {
		if s.Kind == "alias" {
			c.alias(s, p)
		}
	}

	// Cycles, nesting depth and the expanded size.
	c.measure(order)
	c.reportDepth(order, p.top)
	c.total(p)
	p.notes = c.sizes.Notes()
	return p
}

func (c *checker) tech(s *Stmt, p *program) {
	if !c.arity(s, 0, 1, "[PRESET] [KEY=VALUE ...]") {
		return
	}
	if len(s.Args) == 1 {
		w := s.Args[0]
		t, ok := switchsim.Preset(w.Text)
		if !ok {
			c.errAt(w.Line, w.Col, "unknown technology preset %q%s (want one of %s)", w.Text, diag.DidYouMean(w.Text, switchsim.Presets()), strings.Join(switchsim.Presets(), ", "))
			return
		}
		p.tech = t
	}
	if c.techKeys(s, &p.tech) {
		if err := p.tech.Validate(); err != nil {
			c.errAt(s.Line, s.Col, "%v", err)
			p.techBad = true
		}
	}
}

// techKeys applies a statement's KEY=VALUE words to t; false when one is bad.
func (c *checker) techKeys(s *Stmt, t *switchsim.Tech) bool {
	for _, w := range s.Strs {
		c.errAt(w.Line, w.Col, "unexpected string: only design and alias take a quoted string")
	}
	seen := map[string]Opt{}
	good := true
	for _, o := range s.Opts {
		if _, ok := t.Get(o.Key); !ok {
			c.errAt(o.Line, o.Col, "unknown technology key %q%s (want one of %s)", o.Key, diag.DidYouMean(o.Key, switchsim.TechKeys()), strings.Join(switchsim.TechKeys(), " "))
			good = false
			continue
		}
		if prev, dup := seen[o.Key]; dup {
			c.errAt(o.Line, o.Col, "technology key %s given twice (first at %s)", o.Key, c.where(prev.Line, prev.Col))
			good = false
			continue
		}
		seen[o.Key] = o
		if o.Val == "" {
			c.errAt(o.Line, o.ValCol, "missing value after %s=", o.Key)
			good = false
			continue
		}
		v, ok := c.number(o, false)
		if !ok {
			good = false
			continue
		}
		if v > 0 {
			c.plausible(o, v)
		}
		t.Set(o.Key, v)
	}
	return good
}

// corner checks `corner NAME KEY=VALUE ...`: the design's tech with the
// keys replaced.
func (c *checker) corner(s *Stmt, p *program) {
	if !c.arity(s, 1, 1, "NAME KEY=VALUE ...") {
		return
	}
	name, ok := c.name(s.Args[0], "a corner name")
	if !ok {
		return
	}
	for _, k := range p.corners {
		if k.Name == name {
			c.errAt(s.Args[0].Line, s.Args[0].Col, "corner %s given twice (first at %s)", name, c.where(k.Pos.Line, k.Pos.Col))
			return
		}
	}
	if len(p.corners) >= MaxCorners {
		c.errAt(s.Line, s.Col, "more than the limit of %d corners", MaxCorners)
		return
	}
	if len(s.Opts) == 0 {
		c.errAt(s.Line, s.Col, "corner %s changes nothing: give the technology keys it replaces (KEY=VALUE)", name)
		return
	}
	t := p.tech
	if !c.techKeys(s, &t) {
		return
	}
	if err := t.Validate(); err != nil {
		c.errAt(s.Line, s.Col, "corner %s: %v", name, err)
		return
	}
	p.corners = append(p.corners, Corner{Name: name, Tech: t, Pos: at(c.file, s.Line, s.Col)})
}

// alias checks `alias NAME "ORIGINAL"`; whether NAME names a node or a
// device is known only once the cells are expanded (flatten).
func (c *checker) alias(s *Stmt, p *program) {
	c.opts(s)
	if !c.arity(s, 1, 1, `NAME "ORIGINAL"`) {
		return
	}
	if len(s.Strs) != 1 {
		c.errAt(s.Line, s.Col, `alias takes one quoted ORIGINAL spelling after the name, found %s`, diag.Count(len(s.Strs), "string"))
		return
	}
	w, q := s.Args[0], s.Strs[0]
	name, ok := c.name(w, "a node or device name")
	if !ok {
		return
	}
	switch {
	case q.Text == "":
		c.errAt(q.Line, q.Col, "the original spelling of %s is empty", name)
		return
	case len(q.Text) > c.lim.NameLen:
		c.errAt(q.Line, q.Col, "the original spelling is longer than the limit of %d bytes for a name", c.lim.NameLen)
		return
	}
	for _, a := range p.aliases {
		if a.name == name {
			c.errAt(w.Line, w.Col, "alias for %s given twice (first at %s)", name, c.where(a.at.Line, a.at.Col))
			return
		}
		if a.original == q.Text {
			c.errAt(q.Line, q.Col, "original spelling %q given to both %s and %s (first at %s)", q.Text, a.name, name, c.where(a.at.Line, a.at.Col))
			return
		}
	}
	p.aliases = append(p.aliases, alias{name: name, original: q.Text, at: w})
}

func (c *checker) cellHeader(s *Stmt, p *program) *cellDef {
	c.opts(s)
	if !c.arity(s, 1, -1, "NAME PORT ...") {
		return nil
	}
	name, ok := c.name(s.Args[0], "a cell name")
	if !ok {
		return nil
	}
	if prev := c.cells[name]; prev != nil {
		c.errAt(s.Args[0].Line, s.Args[0].Col, "cell %s defined twice (first at %s)", name, c.where(prev.line, prev.col))
		return nil
	}
	cd := &cellDef{name: name, file: c.file, line: s.Line, col: s.Col, lib: c.lib, power: p.power, ground: p.ground, deep: -1}
	for _, w := range s.Args[1:] {
		port, ok := c.name(w, "a port name")
		if !ok {
			continue
		}
		switch {
		case port == p.power || port == p.ground:
			c.errAt(w.Line, w.Col, "port %s of cell %s is a rail: rails are global inside cells and cannot be ports", port, name)
		case cd.hasPort(port):
			c.errAt(w.Line, w.Col, "port %s of cell %s given twice", port, name)
		default:
			cd.addPort(port)
		}
	}
	c.cells[name] = cd
	return cd
}

// lookup finds a cell for a use: the design's own cells first, then the
// built-in library. The library's own uses stay within the library.
func (c *checker) lookup(name string) *cellDef {
	if cd := c.cells[name]; cd != nil {
		return cd
	}
	return c.libCells[name]
}

// body checks one scope's statements: the top level (cd nil) or a cell.
func (c *checker) body(stmts []*Stmt, cd *cellDef) []item {
	var items []item
	names := map[string]*Stmt{} // device and instance names of this scope
	inputs := map[string]Word{}
	outputs := map[string]Word{}
	p := c.prog
	claim := func(s *Stmt, w Word) bool {
		if prev := names[w.Text]; prev != nil {
			c.errAt(w.Line, w.Col, "duplicate device or instance name %s (first at %s)", w.Text, c.where(prev.Line, prev.Col))
			return false
		}
		names[w.Text] = s
		return true
	}
	// terms reads node names, reporting each bad one.
	terms := func(ws []Word) ([]string, bool) {
		out := make([]string, len(ws))
		ok := true
		for i, w := range ws {
			n, good := c.name(w, "a node name")
			out[i], ok = n, ok && good
		}
		return out, ok
	}
	// drop records a statement left out for an error, so that the
	// flattener and Compile do not report what its absence causes.
	drop := func(s *Stmt) {
		p.dropped = true
		if cd != nil {
			cd.incomplete = true
			return
		}
		for _, w := range s.Args {
			p.suspect[w.Text] = true
		}
	}
	for _, s := range stmts {
		if s.Kind == "" {
			continue
		}
		if cd != nil && !slices.Contains(cellKinds, s.Kind) {
			if slices.Contains(topKinds, s.Kind) {
				c.errAt(s.Line, s.Col, "%s is not allowed inside a cell (cells take %s)", s.Kind, strings.Join(cellKinds, ", "))
			} else if hint := diag.DidYouMean(s.Kind, cellKinds); hint != "" {
				c.errAt(s.Line, s.Col, "unknown statement %q%s", s.Kind, hint)
			} else {
				c.errAt(s.Line, s.Col, "unknown statement %q (want one of %s)", s.Kind, strings.Join(cellKinds, ", "))
			}
			drop(s)
			continue
		}
		it := item{kind: s.Kind, line: s.Line, col: s.Col, words: s.Args}
		ok := true
		switch s.Kind {
		case "design", "tech", "corner", "power", "ground", "cell", "alias":
			continue // judged in check
		case "input", "output":
			c.opts(s)
			if !c.arity(s, 1, -1, "NAME ...") {
				drop(s)
				continue
			}
			seen := inputs
			if s.Kind == "output" {
				seen = outputs
			}
			for _, w := range s.Args {
				n, good := c.name(w, "a node name")
				if !good {
					ok = false
					continue
				}
				if prev, dup := seen[n]; dup {
					c.errAt(w.Line, w.Col, "%s %s declared twice (first at %s)", s.Kind, n, c.where(prev.Line, prev.Col))
					ok = false
					continue
				}
				seen[n] = w
				if s.Kind == "input" && (n == p.power || n == p.ground) {
					c.errAt(w.Line, w.Col, "%s is a rail and cannot be an input", n)
					ok = false
					continue
				}
				it.terms = append(it.terms, n)
			}
		case "node":
			o := c.opts(s, "cap", "charge")
			if !c.arity(s, 1, -1, "NAME ... [cap=C] [charge=small|medium|large]") {
				drop(s)
				continue
			}
			it.terms, ok = terms(s.Args)
			for i, n := range it.terms {
				if n != "" && (n == p.power || n == p.ground || (cd != nil && (n == cd.power || n == cd.ground))) {
					c.errAt(s.Args[i].Line, s.Args[i].Col, "%s is a rail: node annotates other nodes", n)
					ok = false
				}
			}
			if v, has := o["cap"]; has {
				it.cap, ok = c.numberOK(v, ok)
			}
			if v, has := o["charge"]; has {
				var good bool
				it.charge, good = c.charge(v)
				ok = ok && good
			}
		case "nmos", "pmos", "rnmos", "rpmos", "tgate", "rtgate", "tran", "rtran", "pullup", "pulldown":
			var o map[string]Opt
			switch s.Kind {
			case "nmos", "pmos", "rnmos", "rpmos":
				o = c.opts(s, "w", "l", "strength")
				ok = c.arity(s, 4, 4, "NAME GATE A B")
			case "tgate", "rtgate":
				o = c.opts(s, "wn", "wp", "l", "strength")
				ok = c.arity(s, 5, 5, "NAME NGATE PGATE A B")
			case "tran":
				o = c.opts(s, "strength")
				ok = c.arity(s, 3, 3, "NAME A B")
			case "rtran":
				o = c.opts(s, "r", "strength")
				ok = c.arity(s, 3, 3, "NAME A B")
			default:
				o = c.opts(s, "r", "strength")
				ok = c.arity(s, 2, 2, "NAME NODE")
			}
			if !ok {
				drop(s)
				continue
			}
			var good bool
			if it.name, good = c.name(s.Args[0], "a device name"); good {
				good = claim(s, s.Args[0])
			}
			it.terms, ok = terms(s.Args[1:])
			ok = ok && good
			for _, size := range []struct {
				key string
				dst *float64
			}{{"w", &it.w}, {"l", &it.l}, {"wn", &it.wn}, {"wp", &it.wp}, {"r", &it.ohms}} {
				if v, has := o[size.key]; has {
					*size.dst, ok = c.numberOK(v, ok)
				}
			}
			if v, has := o["strength"]; has {
				it.strength, good = c.strength(v)
				if good && resistive(s.Kind) && it.strength > switchsim.Pull {
					// Such a device never passes more than pull (resistive.go).
					c.errAt(v.Line, v.ValCol, "strength=%s on %s: a resistive device passes at most pull (IEEE 1364-2005 §7.12), so give pull or weak",
						strings.ToLower(v.Val), s.Kind)
					good = false
				}
				ok = ok && good
			}
		case "use":
			o := c.opts(s, "strength")
			if !c.arity(s, 2, -1, "CELL NAME NODE ...") {
				drop(s)
				continue
			}
			cw := s.Args[0]
			if cd != nil && cd.lib {
				it.cell = c.cells[cw.Text]
			} else {
				it.cell = c.lookup(cw.Text)
			}
			if it.cell == nil {
				if hint := diag.DidYouMean(cw.Text, c.cellNames()); hint != "" {
					c.errAt(cw.Line, cw.Col, "undeclared cell %q%s", cw.Text, hint)
				} else {
					c.errAt(cw.Line, cw.Col, "undeclared cell %q%s", cw.Text, c.cellHint())
				}
				ok = false
			} else if cd != nil && !it.cell.lib {
				it.cell.used = true // (the library's cells are shared: never written to)
			}
			var good bool
			if it.name, good = c.name(s.Args[1], "an instance name"); good {
				good = claim(s, s.Args[1])
			}
			ok = ok && good
			it.terms, good = terms(s.Args[2:])
			ok = ok && good
			if it.cell != nil && len(it.terms) != len(it.cell.ports) {
				at := s.Args[len(s.Args)-1]
				if len(it.terms) > len(it.cell.ports) {
					at = s.Args[2+len(it.cell.ports)]
				}
				c.errAt(at.Line, at.Col, "wrong number of terminals: cell %s takes %s (%s), found %d",
					it.cell.name, diag.Count(len(it.cell.ports), "node"), strings.Join(it.cell.ports, " "), len(it.terms))
				ok = false
			}
			if v, has := o["strength"]; has {
				it.strength, good = c.strength(v)
				ok = ok && good
			}
		default:
			if hint := diag.DidYouMean(s.Kind, topKinds); hint != "" {
				c.errAt(s.Line, s.Col, "unknown statement %q%s", s.Kind, hint)
			} else {
				c.errAt(s.Line, s.Col, "unknown statement %q (want one of %s)", s.Kind, strings.Join(topKinds, ", "))
			}
			drop(s)
			continue
		}
		if ok {
			items = append(items, it)
		} else {
			drop(s)
		}
	}
	return items
}

// numberOK reads a positive number, noting an implausible size or
// capacitance; ok carries the statement's state so far.
func (c *checker) numberOK(o Opt, ok bool) (float64, bool) {
	v, good := c.number(o, true)
	if good && !c.lib {
		c.plausible(o, v)
	}
	return v, ok && good
}

// cellNames lists the cells a use may name, the file's own first.
func (c *checker) cellNames() []string {
	own := make([]string, 0, len(c.cells)+len(c.libCells))
	for n := range c.cells {
		own = append(own, n)
	}
	slices.Sort(own)
	lib := make([]string, 0, len(c.libCells))
	for n := range c.libCells {
		lib = append(lib, n)
	}
	slices.Sort(lib)
	return append(own, lib...)
}

func (c *checker) cellHint() string {
	if c.hint != "" {
		return c.hint
	}
	var own []string
	for n := range c.cells {
		own = append(own, n)
	}
	slices.Sort(own)
	var lib []string
	for n := range c.libCells {
		lib = append(lib, n)
	}
	slices.Sort(lib)
	if len(own) > 8 {
		own = append(own[:8], "...")
	}
	h := " (built in: " + strings.Join(lib, ", ")
	if len(own) > 0 {
		h += "; this file defines: " + strings.Join(own, ", ")
	}
	c.hint = h + ")"
	return c.hint
}

// chainText names a chain of cells, eliding the middle of a long one.
func chainText(names []string) string {
	if len(names) > 7 {
		names = append(append(names[:3:3], "..."), names[len(names)-3:]...)
	}
	return strings.Join(names, " -> ")
}

// saturating bound for the sizes measure adds up: past every limit, and
// far from overflowing when multiplied by a name's length.
const saturate = 1 << 40

func sat(v int64) int64 { return min(v, saturate) }

// measure walks the cells a file defines, in the order written, deepest
// first (post-order), without recursion, so that a chain of thousands of
// cells costs no deeper stack than one. It reports each cycle at the use
// that closes it and gives every cell its nesting height and its expanded
// size: devices, names and name bytes. Each cell and each use is visited
// once, so the walk is linear in the file's size whatever the order the
// cells are defined in.
func (c *checker) measure(order []*cellDef) {
	var stack []*cellDef
	next := map[*cellDef]int{} // the next item of each cell on the stack
	for _, root := range order {
		if root.visit != 0 {
			continue
		}
		root.visit, root.stack = 1, 0
		stack = append(stack[:0], root)
		for len(stack) > 0 {
			cd := stack[len(stack)-1]
			i := next[cd]
			if i < len(cd.items) {
				next[cd] = i + 1
				it := &cd.items[i]
				if it.kind != "use" || it.cell == nil {
					continue
				}
				switch sub := it.cell; sub.visit {
				case 0:
					sub.visit, sub.stack = 1, len(stack)
					stack = append(stack, sub)
				case 1:
					var chain []string
					for _, x := range stack[sub.stack:] {
						chain = append(chain, x.name)
					}
					c.errAt(it.line, it.col, "cell %s instantiates itself: %s", sub.name, chainText(append(chain, sub.name)))
					cd.cycle = true
				}
				continue
			}
			c.finish(cd)
			delete(next, cd)
			stack = stack[:len(stack)-1]
		}
	}
}

// finish sums a cell whose used cells are all measured.
func (c *checker) finish(cd *cellDef) {
	cd.visit = 2
	cd.height = 1
	inner := map[string]bool{} // the nodes an instance makes
	inst := func(n string) {
		if !cd.hasPort(n) && n != cd.power && n != cd.ground {
			inner[n] = true
		}
	}
	var devs, names, bytes int64
	for i := range cd.items {
		it := &cd.items[i]
		switch it.kind {
		case "use":
			sub := it.cell
			if sub == nil || sub.visit != 2 {
				continue // a cycle, reported
			}
			cd.cycle = cd.cycle || sub.cycle
			if h := min(sub.height+1, c.lim.Depth+1); h > cd.height {
				cd.height, cd.deep = h, i
			}
			devs = sat(devs + sub.devs)
			names = sat(names + sub.names)
			bytes = sat(bytes + sub.bytes + sub.names*int64(len(it.name)+1))
		case "tgate", "rtgate":
			devs += 2
			names += 2
			bytes = sat(bytes + 2*int64(len(it.name)+2))
		default:
			if d := it.devices(); d > 0 {
				devs += int64(d)
				names++
				bytes = sat(bytes + int64(len(it.name)))
			}
		}
		for _, n := range it.terms {
			inst(n)
		}
	}
	for n := range inner {
		names++
		bytes = sat(bytes + int64(len(n)))
	}
	cd.devs, cd.names, cd.bytes = sat(devs), sat(names), bytes
}

// reportDepth reports the nesting beyond the depth limit, once per place:
// from each cell no other cell uses, and from the top level, it follows
// the tallest chain and names it at the use one level too deep.
func (c *checker) reportDepth(order []*cellDef, top []item) {
	seen := map[[2]int]bool{}
	report := func(cd *cellDef) {
		if cd.cycle || cd.height <= c.lim.Depth {
			return
		}
		chain := []string{cd.name}
		var it *item
		for cur := cd; len(chain) <= c.lim.Depth && cur.deep >= 0; {
			it = &cur.items[cur.deep]
			cur = it.cell
			chain = append(chain, cur.name)
		}
		if it == nil || seen[[2]int{it.line, it.col}] {
			return
		}
		seen[[2]int{it.line, it.col}] = true
		c.errAt(it.line, it.col, "instances nest more than %d deep (%s)", c.lim.Depth, chainText(chain))
	}
	for _, cd := range order {
		if !cd.used {
			report(cd)
		}
	}
	for i := range top {
		if it := &top[i]; it.kind == "use" && it.cell != nil && it.cell.visit == 2 {
			report(it.cell)
		}
	}
}

// total checks the expanded size of the top level against the limits,
// and that the design has a device at all.
func (c *checker) total(p *program) {
	var devs, bytes int64
	skipped := false
	nodes := map[string]bool{}
	for i := range p.top {
		it := &p.top[i]
		if it.kind == "use" && it.cell != nil {
			if it.cell.bad(c.lim) || it.cell.visit != 2 {
				for _, n := range it.terms {
					p.suspect[n] = true // never expanded: what it would connect is unknown
				}
				skipped = true
				continue
			}
			devs = sat(devs + it.cell.devs)
			bytes = sat(bytes + it.cell.bytes + it.cell.names*int64(len(it.name)+1))
		} else if d := it.devices(); d > 0 {
			devs += int64(d)
			bytes = sat(bytes + int64(d*(len(it.name)+2)))
		}
		for _, n := range it.terms {
			if !nodes[n] {
				nodes[n] = true
				bytes = sat(bytes + int64(len(n)))
			}
		}
		if devs > int64(c.lim.Devices) {
			c.errAt(it.line, it.col, "the design expands to more than the limit of %d devices", c.lim.Devices)
			p.tooBig = true
			return
		}
		if bytes > int64(c.lim.NameBytes) {
			c.errAt(it.line, it.col, "the design's node and device names, once its cells are expanded, take more than the limit of %s", diag.SizeString(c.lim.NameBytes))
			p.tooBig = true
			return
		}
	}
	if devs == 0 && !p.dropped && !skipped && !c.lib {
		c.errAt(1, 0, "the design has no devices: nothing to simulate (add nmos, pmos, tgate, tran, pullup, pulldown or use statements)")
	}
}
