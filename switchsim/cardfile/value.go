package cardfile

import (
	"fmt"
	"math"
	"strconv"
	"strings"
)

// Numbers as the card format writes them (common practice): a decimal
// mantissa with an optional exponent, then letters. The first letters may
// be a scale suffix, in any case: f 1e-15, p 1e-12, n 1e-9, u 1e-6,
// m 1e-3 (milli: M is milli too), k 1e3, meg 1e6, g 1e9, t 1e12; every
// letter after the suffix is a unit and is ignored (10fF, 0.18um, 1.8V,
// 5kOhm). Letters that are no suffix are all unit (3V is 3).

var suffixes = map[byte]int{'f': -15, 'p': -12, 'n': -9, 'u': -6, 'm': -3, 'k': 3, 'g': 9, 't': 12}

// parseValue reads one number with its suffix and unit letters.
func parseValue(s string) (float64, bool) {
	i := 0
	if i < len(s) && (s[i] == '+' || s[i] == '-') {
		i++
	}
	digits := 0
	for i < len(s) && s[i] >= '0' && s[i] <= '9' {
		i, digits = i+1, digits+1
	}
	if i < len(s) && s[i] == '.' {
		i++
		for i < len(s) && s[i] >= '0' && s[i] <= '9' {
			i, digits = i+1, digits+1
		}
	}
	if digits == 0 {
		return 0, false
	}
	mant := s[:i]
	exp := 0
	if i < len(s) && (s[i] == 'e' || s[i] == 'E') {
		j := i + 1
		if j < len(s) && (s[j] == '+' || s[j] == '-') {
			j++
		}
		k := j
		for k < len(s) && s[k] >= '0' && s[k] <= '9' {
			k++
		}
		if k > j {
			if k-j > 4 {
				return 0, false // an exponent far past float64's range
			}
			exp, _ = strconv.Atoi(s[i+1 : k])
			i = k
		}
	}
	rest := strings.ToLower(s[i:])
	for _, c := range []byte(rest) {
		if c < 'a' || c > 'z' {
			return 0, false
		}
	}
	switch {
	case strings.HasPrefix(rest, "meg"):
		exp += 6
	case rest != "":
		exp += suffixes[rest[0]] // 0 for a letter that is only a unit
	}
	// The suffix is folded into the exponent before converting, so 0.18u
	// is exactly the float64 nearest 0.18e-6.
	v, err := strconv.ParseFloat(mant+"e"+strconv.Itoa(exp), 64)
	if err != nil || math.IsInf(v, 0) {
		return 0, false
	}
	return v, true
}

// Expressions, in {} or '' (or bare where a value is expected): numbers as
// above, parameter names (any case), + - * /, unary minus and plus, and
// parentheses. The scanner drops parentheses between words, so expressions
// are parsed from their own text.

type exprKind uint8

const (
	exNum exprKind = iota
	exName
	exNeg
	exAdd
	exSub
	exMul
	exDiv
)

type expr struct {
	kind exprKind
	num  float64
	name string // lower case
	a, b *expr
}

// maxExprDepth bounds the nesting of an expression, so that a hostile
// one cannot exhaust the stack.
const maxExprDepth = 64

type exprParser struct {
	s     string
	i     int
	depth int
	err   string
}

// parseExpr parses an expression; the error says what was expected.
func parseExpr(s string) (*expr, error) {
	p := &exprParser{s: s}
	e := p.sum()
	p.space()
	if p.err == "" && p.i < len(p.s) {
		p.fail("unexpected %q", p.s[p.i:p.i+1])
	}
	if p.err != "" {
		return nil, fmt.Errorf("%s", p.err)
	}
	return e, nil
}

func (p *exprParser) fail(f string, a ...any) {
	if p.err == "" {
		p.err = fmt.Sprintf(f, a...) + fmt.Sprintf(" at column %d of the expression (expressions take numbers, parameter names, + - * / and parentheses)", p.i+1)
	}
}

func (p *exprParser) space() {
	for p.i < len(p.s) && isSpace(p.s[p.i]) {
		p.i++
	}
}

func (p *exprParser) sum() *expr {
	e := p.product()
	for p.err == "" {
		p.space()
		if p.i >= len(p.s) || (p.s[p.i] != '+' && p.s[p.i] != '-') {
			return e
		}
		k := exAdd
		if p.s[p.i] == '-' {
			k = exSub
		}
		p.i++
		e = &expr{kind: k, a: e, b: p.product()}
	}
	return e
}

func (p *exprParser) product() *expr {
	e := p.unary()
	for p.err == "" {
		p.space()
		if p.i >= len(p.s) || (p.s[p.i] != '*' && p.s[p.i] != '/') {
			return e
		}
		if p.i+1 < len(p.s) && p.s[p.i+1] == '*' {
			p.fail("** is not supported")
			return e
		}
		k := exMul
		if p.s[p.i] == '/' {
			k = exDiv
		}
		p.i++
		e = &expr{kind: k, a: e, b: p.unary()}
	}
	return e
}

func (p *exprParser) unary() *expr {
	p.depth++
	defer func() { p.depth-- }()
	if p.depth > maxExprDepth {
		p.fail("expression nests more than %d deep", maxExprDepth)
		return nil
	}
	p.space()
	if p.i >= len(p.s) {
		p.fail("missing a value")
		return nil
	}
	switch c := p.s[p.i]; {
	case c == '-':
		p.i++
		return &expr{kind: exNeg, a: p.unary()}
	case c == '+':
		p.i++
		return p.unary()
	case c == '(':
		p.i++
		e := p.sum()
		p.space()
		if p.i >= len(p.s) || p.s[p.i] != ')' {
			p.fail("missing )")
			return nil
		}
		p.i++
		return e
	case c >= '0' && c <= '9' || c == '.':
		j := p.i
		for j < len(p.s) && (isAlnum(p.s[j]) || p.s[j] == '.') {
			if (p.s[j] == 'e' || p.s[j] == 'E') && j+1 < len(p.s) && (p.s[j+1] == '+' || p.s[j+1] == '-') {
				j++
			}
			j++
		}
		v, ok := parseValue(p.s[p.i:j])
		if !ok {
			p.fail("bad number %q", p.s[p.i:j])
			return nil
		}
		p.i = j
		return &expr{kind: exNum, num: v}
	case isAlnum(c) || c == '_':
		j := p.i
		for j < len(p.s) && (isAlnum(p.s[j]) || p.s[j] == '_' || p.s[j] == '.') {
			j++
		}
		name := strings.ToLower(p.s[p.i:j])
		p.i = j
		p.space()
		if p.i < len(p.s) && p.s[p.i] == '(' {
			p.fail("function %s is not supported", name)
			return nil
		}
		return &expr{kind: exName, name: name}
	default:
		p.fail("unexpected %q", string(c))
		return nil
	}
}

func isAlnum(c byte) bool {
	return c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z' || c >= '0' && c <= '9'
}

// eval computes e, looking names up with get.
func (e *expr) eval(get func(name string) (float64, error)) (float64, error) {
	switch e.kind {
	case exNum:
		return e.num, nil
	case exName:
		return get(e.name)
	case exNeg:
		v, err := e.a.eval(get)
		return -v, err
	}
	a, err := e.a.eval(get)
	if err != nil {
		return 0, err
	}
	b, err := e.b.eval(get)
	if err != nil {
		return 0, err
	}
	var v float64
	switch e.kind {
	case exAdd:
		v = a + b
	case exSub:
		v = a - b
	case exMul:
		v = a * b
	case exDiv:
		if b == 0 {
			return 0, fmt.Errorf("division by zero")
		}
		v = a / b
	}
	if math.IsInf(v, 0) || math.IsNaN(v) {
		return 0, fmt.Errorf("the value is out of range")
	}
	return v, nil
}
