package netfile

import (
	"fmt"
	"sort"
	"strings"
	"unicode"

	"railyard/switchsim"
)

// Limits bound what the reader accepts, so that memory stays bounded on
// any input, however large or deeply nested.
type Limits struct {
	FileSize int // bytes in one file
	LineLen  int // bytes in one line
	Depth    int // instances nested inside instances
	Devices  int // devices once every cell is expanded
	Errors   int // errors reported before the rest are only counted
}

// DefaultLimits are the limits Read uses.
func DefaultLimits() Limits {
	return Limits{FileSize: 4 << 20, LineLen: 64 << 10, Depth: 64, Devices: 2_000_000, Errors: 100}
}

var (
	topKinds  = []string{"design", "tech", "power", "ground", "input", "output", "node", "nmos", "pmos", "tgate", "pullup", "pulldown", "cell", "use"}
	cellKinds = []string{"node", "nmos", "pmos", "tgate", "pullup", "pulldown", "use"}
)

// cellDef is a checked cell, ready to expand.
type cellDef struct {
	name          string
	file          string
	line, col     int
	ports         []string
	portIx        map[string]int
	items         []item
	lib           bool
	power, ground string // the rail names of the file that defines it

	visit uint8 // 0 unvisited, 1 on the walk's stack, 2 measured
	devs  int   // devices once expanded, saturated just past the limit
	bad   bool  // on a cycle or nested too deep: never expanded
}

// item is one checked statement of a scope.
type item struct {
	kind      string // input output node nmos pmos tgate pullup pulldown use
	line, col int
	name      string
	terms     []string
	words     []Word // the terms as written (input, output, node), for positions
	w, l      float64
	wn, wp    float64
	cap       float64
	strength  switchsim.Strength // HighZ: the device's default
	charge    switchsim.Strength // HighZ: the default
	cell      *cellDef
}

func (cd *cellDef) hasPort(n string) bool { _, ok := cd.portIx[n]; return ok }

func (it *item) devices() int {
	switch it.kind {
	case "nmos", "pmos", "pullup", "pulldown":
		return 1
	case "tgate":
		return 2
	}
	return 0
}

// program is a checked design: what the flattener needs.
type program struct {
	name, desc    string
	named         bool
	tech          switchsim.Tech
	power, ground string
	top           []item
	cells         map[string]*cellDef
}

type checker struct {
	file     string
	lim      Limits
	errs     *sink
	lib      bool
	cells    map[string]*cellDef
	libCells map[string]*cellDef
	prog     *program
	hint     string // cellHint's text, made once
}

func (c *checker) errAt(line, col int, format string, args ...any) {
	c.errs.add(Pos{c.file, line, col}, format, args...)
}

func (c *checker) where(line, col int) string {
	return fmt.Sprintf("%d:%d", line, col)
}

// isName reports whether s is a name: a letter or _ first, then letters,
// digits, _ . [ ] (FORMAT.md).
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
		c.errAt(s.Line, s.Col, "wrong number of terminals: %s takes %s, found %d word%s after %s", s.Kind, form, n, plural(n), s.Kind)
		return false
	case max >= 0 && n > max:
		w := s.Args[max]
		c.errAt(w.Line, w.Col, "wrong number of terminals: %s takes %s, found %d words after %s", s.Kind, form, n, s.Kind)
		return false
	}
	return true
}

func plural(n int) string {
	if n == 1 {
		return ""
	}
	return "s"
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
		case !contains(allowed, o.Key):
			if len(allowed) == 0 {
				c.errAt(o.Line, o.Col, "unknown option %q: %s takes no options", o.Key, s.Kind)
			} else {
				c.errAt(o.Line, o.Col, "unknown option %q for %s (want %s)", o.Key, s.Kind, strings.Join(allowed, ", "))
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
	if s.Kind != "design" {
		for _, w := range s.Strs {
			c.errAt(w.Line, w.Col, "unexpected string: only design takes a quoted description")
		}
	}
	return got
}

func contains(list []string, s string) bool {
	for _, x := range list {
		if x == s {
			return true
		}
	}
	return false
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

func (c *checker) strength(o Opt) (switchsim.Strength, bool) {
	s, ok := switchsim.ParseStrength(o.Val)
	if !ok || s < switchsim.Weak {
		c.errAt(o.Line, o.ValCol, "unknown strength %q (want supply, strong, pull or weak)", o.Val)
		return switchsim.HighZ, false
	}
	return s, true
}

func (c *checker) charge(o Opt) (switchsim.Strength, bool) {
	s, ok := switchsim.ParseStrength(o.Val)
	if !ok || !s.IsCharge() {
		c.errAt(o.Line, o.ValCol, "unknown charge %q (want small, medium or large)", o.Val)
		return switchsim.HighZ, false
	}
	return s, true
}

// check turns a parsed tree into a program, reporting every problem.
func (c *checker) check(t *Tree) *program {
	p := &program{tech: switchsim.Generic(), power: "vdd", ground: "gnd", cells: map[string]*cellDef{}}
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
	if powerAt != nil && groundAt != nil && p.power == p.ground {
		c.errAt(groundAt.Args[0].Line, groundAt.Args[0].Col, "power and ground are both named %s", p.power)
	}

	// Pass 2: cell headers, so that a cell may be used before it is defined.
	for _, s := range t.Stmts {
		if s.Kind == "cell" {
			c.cellHeader(s, p)
		}
	}
	// Pass 3: cell bodies and the top level.
	for _, s := range t.Stmts {
		if s.Kind == "cell" {
			if cd := c.cells[firstArg(s)]; cd != nil && cd.line == s.Line {
				cd.items = c.body(s.Body, cd)
			} else {
				c.body(s.Body, &cellDef{name: firstArg(s), power: p.power, ground: p.ground, portIx: map[string]int{}})
			}
		}
	}
	p.top = c.body(t.Stmts, nil)

	// Cycles, nesting depth and the expanded size.
	names := make([]string, 0, len(c.cells))
	for n := range c.cells {
		names = append(names, n)
	}
	sort.Slice(names, func(i, j int) bool { return c.cells[names[i]].line < c.cells[names[j]].line })
	var stack []*cellDef
	for _, n := range names {
		c.walk(c.cells[n], &stack, 0, 0)
	}
	total := 0
	for i := range p.top {
		it := &p.top[i]
		if it.kind == "use" && it.cell != nil {
			c.walk(it.cell, &stack, it.line, it.col)
			total += it.cell.devs
		} else {
			total += it.devices()
		}
		if total > c.lim.Devices {
			c.errAt(it.line, it.col, "the design expands to more than the limit of %d devices", c.lim.Devices)
			break
		}
	}
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
			c.errAt(w.Line, w.Col, "unknown technology preset %q (want one of %s)", w.Text, strings.Join(switchsim.Presets(), ", "))
			return
		}
		p.tech = t
	}
	for _, w := range s.Strs {
		c.errAt(w.Line, w.Col, "unexpected string: only design takes a quoted description")
	}
	seen := map[string]Opt{}
	good := true
	for _, o := range s.Opts {
		if _, ok := p.tech.Get(o.Key); !ok {
			c.errAt(o.Line, o.Col, "unknown technology key %q (want one of %s)", o.Key, strings.Join(switchsim.TechKeys(), " "))
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
		p.tech.Set(o.Key, v)
	}
	if good {
		if err := p.tech.Validate(); err != nil {
			c.errAt(s.Line, s.Col, "%v", err)
		}
	}
}

func (c *checker) cellHeader(s *Stmt, p *program) {
	c.opts(s)
	if !c.arity(s, 1, -1, "NAME PORT ...") {
		return
	}
	name, ok := c.name(s.Args[0], "a cell name")
	if !ok {
		return
	}
	if prev := c.cells[name]; prev != nil {
		c.errAt(s.Args[0].Line, s.Args[0].Col, "cell %s defined twice (first at %s)", name, c.where(prev.line, prev.col))
		return
	}
	cd := &cellDef{name: name, file: c.file, line: s.Line, col: s.Col, portIx: map[string]int{}, lib: c.lib, power: p.power, ground: p.ground}
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
			cd.portIx[port] = len(cd.ports)
			cd.ports = append(cd.ports, port)
		}
	}
	c.cells[name] = cd
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
	for _, s := range stmts {
		if s.Kind == "" {
			continue
		}
		if cd != nil && !contains(cellKinds, s.Kind) {
			if contains(topKinds, s.Kind) {
				c.errAt(s.Line, s.Col, "%s is not allowed inside a cell (cells take %s)", s.Kind, strings.Join(cellKinds, ", "))
			} else {
				c.errAt(s.Line, s.Col, "unknown statement %q (want one of %s)", s.Kind, strings.Join(cellKinds, ", "))
			}
			continue
		}
		it := item{kind: s.Kind, line: s.Line, col: s.Col, words: s.Args}
		ok := true
		switch s.Kind {
		case "design", "tech", "power", "ground", "cell":
			continue // judged in check
		case "input", "output":
			c.opts(s)
			if !c.arity(s, 1, -1, "NAME ...") {
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
		case "nmos", "pmos", "tgate", "pullup", "pulldown":
			var o map[string]Opt
			switch s.Kind {
			case "nmos", "pmos":
				o = c.opts(s, "w", "l", "strength")
				ok = c.arity(s, 4, 4, "NAME GATE A B")
			case "tgate":
				o = c.opts(s, "wn", "wp", "l", "strength")
				ok = c.arity(s, 5, 5, "NAME NGATE PGATE A B")
			default:
				o = c.opts(s, "strength")
				ok = c.arity(s, 2, 2, "NAME NODE")
			}
			if !ok {
				continue
			}
			var good bool
			if it.name, good = c.name(s.Args[0], "a device name"); good {
				good = claim(s, s.Args[0])
			}
			it.terms, ok = terms(s.Args[1:])
			ok = ok && good
			for key, dst := range map[string]*float64{"w": &it.w, "l": &it.l, "wn": &it.wn, "wp": &it.wp} {
				if v, has := o[key]; has {
					*dst, ok = c.numberOK(v, ok)
				}
			}
			if v, has := o["strength"]; has {
				it.strength, good = c.strength(v)
				ok = ok && good
			}
		case "use":
			o := c.opts(s, "strength")
			if !c.arity(s, 2, -1, "CELL NAME NODE ...") {
				continue
			}
			cw := s.Args[0]
			if cd != nil && cd.lib {
				it.cell = c.cells[cw.Text]
			} else {
				it.cell = c.lookup(cw.Text)
			}
			if it.cell == nil {
				c.errAt(cw.Line, cw.Col, "undeclared cell %q%s", cw.Text, c.cellHint())
				ok = false
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
				c.errAt(at.Line, at.Col, "wrong number of terminals: cell %s takes %d node%s (%s), found %d",
					it.cell.name, len(it.cell.ports), plural(len(it.cell.ports)), strings.Join(it.cell.ports, " "), len(it.terms))
				ok = false
			}
			if v, has := o["strength"]; has {
				it.strength, good = c.strength(v)
				ok = ok && good
			}
		default:
			c.errAt(s.Line, s.Col, "unknown statement %q (want one of %s)", s.Kind, strings.Join(topKinds, ", "))
			continue
		}
		if ok {
			items = append(items, it)
		}
	}
	return items
}

func (c *checker) numberOK(o Opt, ok bool) (float64, bool) {
	v, good := c.number(o, true)
	return v, ok && good
}

func (c *checker) cellHint() string {
	if c.hint != "" {
		return c.hint
	}
	var own []string
	for n := range c.cells {
		own = append(own, n)
	}
	sort.Strings(own)
	var lib []string
	for n := range c.libCells {
		lib = append(lib, n)
	}
	sort.Strings(lib)
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

// walk measures cd (expanded size) and reports the cycles and the nesting
// beyond the depth limit that it finds; line, col are those of the use
// that led here (0 from the top of the walk).
func (c *checker) walk(cd *cellDef, stack *[]*cellDef, line, col int) {
	switch cd.visit {
	case 2:
		return
	case 1:
		i := len(*stack) - 1
		for i > 0 && (*stack)[i] != cd {
			i--
		}
		var chain []string
		for _, x := range (*stack)[i:] {
			chain = append(chain, x.name)
			x.bad = true
		}
		chain = append(chain, cd.name)
		c.errAt(line, col, "cell %s instantiates itself: %s", cd.name, strings.Join(chain, " -> "))
		return
	}
	if len(*stack) >= c.lim.Depth {
		var chain []string
		for _, x := range *stack {
			chain = append(chain, x.name)
			x.bad = true
		}
		if len(chain) > 6 {
			chain = append(chain[:3], append([]string{"..."}, chain[len(chain)-3:]...)...)
		}
		c.errAt(line, col, "instances nest more than %d deep (%s -> %s)", c.lim.Depth, strings.Join(chain, " -> "), cd.name)
		cd.visit, cd.bad = 2, true
		return
	}
	cd.visit = 1
	*stack = append(*stack, cd)
	n := 0
	for i := range cd.items {
		it := &cd.items[i]
		if it.kind == "use" && it.cell != nil {
			c.walk(it.cell, stack, it.line, it.col)
			n += it.cell.devs
			if it.cell.bad {
				cd.bad = true
			}
		} else {
			n += it.devices()
		}
		n = min(n, c.lim.Devices+1)
	}
	*stack = (*stack)[:len(*stack)-1]
	cd.visit, cd.devs = 2, n
}
