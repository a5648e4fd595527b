package netfile

import (
	"errors"
	"math"
	"strconv"
	"strings"
)

// SI prefixes a number may end with (switchsim/FORMATS.md): m is milli, M is mega.
var siPrefix = map[byte]int{'f': -15, 'p': -12, 'n': -9, 'u': -6, 'm': -3, 'k': 3, 'M': 6, 'G': 9}

var errNumber = errors.New("bad number")

// ParseNumber reads a decimal number with an optional sign, fraction,
// exponent and one SI prefix: 10f, 0.18u, 1.5e3, -0.45, 2.5k.
// The prefix is folded into the exponent before the text is converted, so
// 0.18u is exactly the float64 nearest 0.18e-6.
func ParseNumber(s string) (float64, error) {
	body := s
	exp := 0
	if n := len(body); n > 0 {
		if e, ok := siPrefix[body[n-1]]; ok {
			exp, body = e, body[:n-1]
		}
	}
	i := 0
	if i < len(body) && (body[i] == '+' || body[i] == '-') {
		i++
	}
	digits := 0
	for i < len(body) && body[i] >= '0' && body[i] <= '9' {
		i, digits = i+1, digits+1
	}
	if i < len(body) && body[i] == '.' {
		i++
		for i < len(body) && body[i] >= '0' && body[i] <= '9' {
			i, digits = i+1, digits+1
		}
	}
	if digits == 0 {
		return 0, errNumber
	}
	mant := body[:i]
	if i < len(body) {
		if body[i] != 'e' && body[i] != 'E' {
			return 0, errNumber
		}
		es := body[i+1:]
		j := 0
		if j < len(es) && (es[j] == '+' || es[j] == '-') {
			j++
		}
		if j == len(es) || len(es)-j > 4 {
			return 0, errNumber // no exponent digits, or far beyond float64's range
		}
		for _, c := range es[j:] {
			if c < '0' || c > '9' {
				return 0, errNumber
			}
		}
		e, _ := strconv.Atoi(es)
		exp += e
	}
	v, err := strconv.ParseFloat(mant+"e"+strconv.Itoa(exp), 64)
	if err != nil || math.IsInf(v, 0) {
		return 0, errNumber
	}
	return v, nil
}

// FormatNumber prints v in the shortest form that ParseNumber reads back as
// exactly v, with an SI prefix chosen so the mantissa lies in [1, 1000)
// where a prefix fits (engineering notation): 1.8e-07 prints as 180n.
func FormatNumber(v float64) string {
	if v == 0 || math.IsNaN(v) || math.IsInf(v, 0) {
		if v == 0 {
			return "0"
		}
		return strconv.FormatFloat(v, 'g', -1, 64) // not readable back; never produced by the reader
	}
	s := strconv.FormatFloat(v, 'e', -1, 64) // [-]d[.ddd]e±XX
	sign := ""
	if s[0] == '-' {
		sign, s = "-", s[1:]
	}
	epos := strings.IndexByte(s, 'e')
	digits := strings.Replace(s[:epos], ".", "", 1)
	e, _ := strconv.Atoi(s[epos+1:]) // v = d.ddd x 10^e
	p := 0
	if e < 0 || e >= 3 {
		p = floorDiv(e, 3) * 3
		p = max(-15, min(9, p))
	}
	// value = 0.digits x 10^(e+1); shift the point to 10^p
	point := e + 1 - p           // digits before the decimal point
	if point > 6 || point < -6 { // beyond the prefixes: plain exponent form
		return sign + strconv.FormatFloat(math.Abs(v), 'g', -1, 64)
	}
	var m string
	switch {
	case point <= 0:
		m = "0." + strings.Repeat("0", -point) + digits
	case point >= len(digits):
		m = digits + strings.Repeat("0", point-len(digits))
	default:
		m = digits[:point] + "." + digits[point:]
	}
	suffix := ""
	for c, x := range siPrefix {
		if x == p {
			suffix = string(c)
		}
	}
	return sign + m + suffix
}

func floorDiv(a, b int) int {
	q := a / b
	if (a%b != 0) && ((a < 0) != (b < 0)) {
		q--
	}
	return q
}
