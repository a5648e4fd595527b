package cardfile

import (
	"railyard/switchsim/internal/netbuild"
	"strings"

	"railyard/switchsim/diag"
)

// deck is a netlist as written, its blocks grouped: the top level, the
// subcircuits, the models, parameters, globals and options.
type deck struct {
	title   string
	top     scope
	subs    map[string]*subckt // by lower-case name
	order   []*subckt          // in the order defined
	models  map[string]*model  // by lower-case name
	bins    map[string]*model  // NAME of binned models NAME.1, NAME.2: the first bin
	globals map[string]bool    // lower-case names made global by .global
	scale   float64            // .option scale, 1 when not given
	skipped []card             // analysis and control cards of the top level
}

// scope is the cards of the top level or of one subcircuit.
type scope struct {
	elems  []elem
	params []param // .param cards
}

type subckt struct {
	name    string // as written
	pos     diag.Pos
	ports   []tok
	portIx  map[string]int // lower-case port name -> index
	defs    []param        // parameters with defaults on the header
	body    scope
	pininfo map[string]byte // lower-case pin -> i o b p g
	closed  bool
	used    bool // instantiated by some card
}

// elem is one element card: its letter, name, positional words and
// KEY=VALUE parameters.
type elem struct {
	letter byte // lower case
	name   tok
	args   []tok
	params []param
	pos    diag.Pos
}

// param is KEY=VALUE; ast caches the parsed expression.
type param struct {
	key string // lower case
	val tok
	pos diag.Pos
	ast *expr
}

type model struct {
	name   string
	typ    string // lower case: nmos, pmos, or another type
	params []param
	pos    diag.Pos
}

// split separates a card's words after the first skip words into
// positional words and KEY=VALUE parameters; positional words after the
// first parameter are errors.
func split(c *card, skip int, errs *netbuild.Sink) (args []tok, params []param) {
	t := c.toks
	// The positional words are most often the run before the first =: they
	// are taken as a slice of the card's own words, with no copy.
	run := len(t)
	for i := skip; i < len(t); i++ {
		if t[i].eq {
			run = i - 1
			break
		}
	}
	if run < skip {
		run = skip
	}
	args = t[skip:run:run]
	for i := run; i < len(t); i++ {
		switch {
		case t[i].eq:
			errs.Add(t[i].pos, "= with no parameter name before it")
		case i+1 < len(t) && t[i+1].eq:
			if t[i].expr || t[i].str {
				errs.Add(t[i].pos, "a parameter name must be a word")
			}
			if i+2 >= len(t) || t[i+2].eq {
				errs.Add(t[i+1].pos, "missing value after %s=", t[i].text)
				i++
				continue
			}
			if params == nil {
				params = make([]param, 0, (len(t)-i)/3)
			}
			params = append(params, param{key: strings.ToLower(t[i].text), val: t[i+2], pos: t[i].pos})
			i += 2
		case len(params) > 0 && c.head() != ".model":
			errs.Add(t[i].pos, "unexpected %q after the parameters: positional words come first", t[i].text)
		default:
			args = append(args, t[i]) // copies: args has no room past the run
		}
	}
	return args, params
}

// parse groups the cards into a deck, checking the block structure and
// the cards that define things. Element cards are judged when expanded.
func parse(cards []card, errs, notes *netbuild.Sink) *deck {
	d := &deck{subs: map[string]*subckt{}, models: map[string]*model{}, bins: map[string]*model{}, globals: map[string]bool{}, scale: 1}
	var cur *subckt
	var scalePos diag.Pos
	sc := &d.top
	for ci := range cards {
		c := &cards[ci]
		if len(c.toks) == 0 {
			continue
		}
		if c.pininfo {
			if cur == nil {
				notes.Add(c.pos, "*.pininfo outside a subcircuit: ignored")
				continue
			}
			for _, t := range c.toks {
				pin, dir, ok := strings.Cut(t.text, ":")
				dir = strings.ToLower(dir)
				if !ok || len(dir) != 1 || !strings.Contains("iobpg", dir) {
					notes.Add(t.pos, "*.pininfo entry %q is not PIN:I, :O, :B, :P or :G: ignored", t.text)
					continue
				}
				if cur.pininfo == nil {
					cur.pininfo = map[string]byte{}
				}
				cur.pininfo[strings.ToLower(pin)] = dir[0]
			}
			continue
		}
		h := c.head()
		first := c.toks[0]
		if first.expr || first.str || first.eq {
			errs.Add(first.pos, "a card starts with a name or a keyword, not %q", first.text)
			continue
		}
		switch h {
		case ".subckt", ".subcircuit":
			if cur != nil {
				errs.Add(c.pos, "subcircuit %s starts inside subcircuit %s (%s), which has no .ends: subcircuits cannot be nested", arg(c, 1), cur.name, cur.pos)
			}
			args, params := split(c, 1, errs)
			if len(args) == 0 {
				errs.Add(c.pos, ".subckt needs a name: .subckt NAME PORT ... [KEY=VALUE ...]")
				cur, sc = nil, &d.top
				continue
			}
			s := &subckt{name: args[0].text, pos: args[0].pos, portIx: map[string]int{}}
			for _, p := range args[1:] {
				if strings.EqualFold(p.text, "params:") {
					continue
				}
				l := strings.ToLower(p.text)
				if _, dup := s.portIx[l]; dup {
					errs.Add(p.pos, "port %s of subcircuit %s given twice", p.text, s.name)
					continue
				}
				s.portIx[l] = len(s.ports)
				s.ports = append(s.ports, p)
			}
			s.defs = params
			key := strings.ToLower(s.name)
			if prev := d.subs[key]; prev != nil {
				errs.Add(s.pos, "subcircuit %s defined twice (first at %s)", s.name, prev.pos)
			} else {
				d.subs[key] = s
				d.order = append(d.order, s)
			}
			cur, sc = s, &s.body
		case ".ends", ".eom":
			if cur == nil {
				errs.Add(c.pos, ".ends with no .subckt to close")
				continue
			}
			if len(c.toks) > 1 && !strings.EqualFold(c.toks[1].text, cur.name) {
				errs.Add(c.toks[1].pos, ".ends %s closes subcircuit %s", c.toks[1].text, cur.name)
			}
			cur.closed = true
			cur, sc = nil, &d.top
		case ".param", ".parameter", ".parameters":
			args, params := split(c, 1, errs)
			for _, a := range args {
				errs.Add(a.pos, "expected NAME=VALUE after .param, found %q", a.text)
			}
			sc.params = append(sc.params, params...)
		case ".global":
			for _, t := range c.toks[1:] {
				d.globals[strings.ToLower(t.text)] = true
			}
		case ".model":
			parseModel(d, c, errs, notes)
		case ".option", ".options", ".opt":
			_, params := split(c, 1, errs)
			var other []string
			for _, p := range params {
				if p.key != "scale" {
					other = append(other, p.key)
					continue
				}
				v, ok := parseValue(p.val.text)
				if !ok || v <= 0 {
					errs.Add(p.val.pos, "scale must be a positive number, not %q", p.val.text)
					continue
				}
				if d.scale != 1 && v != d.scale {
					errs.Add(p.pos, "scale given twice with different values (first at %s)", scalePos)
					continue
				}
				d.scale, scalePos = v, p.pos
			}
			if len(other) > 0 {
				notes.Add(c.pos, "skipped: options %s (only scale= means anything here)", strings.Join(other, " "))
			}
		case ".end":
		case ".lib":
			notes.Add(c.pos, "skipped: .lib %s (library references are not read; give the models with .model cards or --nmos-models/--pmos-models)", arg(c, 1))
		case ".endc", ".endl":
			notes.Add(c.pos, "%s with no block to close: ignored", h)
		default:
			if h[0] == '.' {
				if cur == nil {
					d.skipped = append(d.skipped, *c)
				} else {
					notes.Add(c.pos, "skipped: %s card (an analysis or control card) inside subcircuit %s", h, cur.name)
				}
				continue
			}
			if !isAlnum(h[0]) {
				errs.Add(c.pos, "a card starts with a letter or a dot, not %q", h[:1])
				continue
			}
			args, params := split(c, 1, errs)
			sc.elems = append(sc.elems, elem{letter: h[0] | 0x20, name: first, args: args, params: params, pos: c.pos})
		}
	}
	if cur != nil {
		errs.Add(cur.pos, "subcircuit %s has no .ends", cur.name)
	}
	return d
}

func arg(c *card, i int) string {
	if i < len(c.toks) {
		return c.toks[i].text
	}
	return "(unnamed)"
}

// Types of .model cards the trade uses besides nmos and pmos: their
// models are of elements railyard skips.
var otherModelTypes = map[string]bool{"d": true, "npn": true, "pnp": true, "njf": true, "pjf": true, "nmf": true, "pmf": true,
	"r": true, "c": true, "l": true, "sw": true, "csw": true, "vswitch": true, "iswitch": true, "ltra": true, "urc": true, "res": true, "cap": true}

func parseModel(d *deck, c *card, errs, notes *netbuild.Sink) {
	args, params := split(c, 1, errs)
	if len(args) < 2 {
		errs.Add(c.pos, ".model needs a name and a type: .model NAME nmos|pmos (KEY=VALUE ...)")
		return
	}
	for _, a := range args[2:] {
		errs.Add(a.pos, "unexpected %q in .model: parameters are KEY=VALUE", a.text)
	}
	m := &model{name: args[0].text, typ: strings.ToLower(args[1].text), params: params, pos: args[0].pos}
	switch {
	case m.typ == "nmos" || m.typ == "pmos":
	case otherModelTypes[m.typ]:
		notes.Add(c.pos, "skipped: .model %s of type %s (not a transistor)", m.name, m.typ)
	default:
		errs.Add(args[1].pos, "unknown model type %q for %s (want nmos or pmos; %s are skipped)", args[1].text, m.name, "d npn pnp r c sw ...")
		return
	}
	key := strings.ToLower(m.name)
	if prev := d.models[key]; prev != nil {
		errs.Add(m.pos, "model %s defined twice (first at %s)", m.name, prev.pos)
		return
	}
	d.models[key] = m
	if base, bin, ok := cutLast(key, '.'); ok && isDigits(bin) && (m.typ == "nmos" || m.typ == "pmos") {
		if d.bins[base] == nil {
			d.bins[base] = m
		}
	}
}

func cutLast(s string, sep byte) (string, string, bool) {
	i := strings.LastIndexByte(s, sep)
	if i < 0 {
		return s, "", false
	}
	return s[:i], s[i+1:], true
}

func isDigits(s string) bool {
	if s == "" {
		return false
	}
	for i := 0; i < len(s); i++ {
		if s[i] < '0' || s[i] > '9' {
			return false
		}
	}
	return true
}
