package cardfile

import (
	"math"
	"testing"
)

// The card format's numbers (common practice): scale suffixes in any case,
// meg for mega and m for milli, trailing unit letters ignored.
func TestParseValueSuffixes(t *testing.T) {
	cases := []struct {
		in   string
		want float64
	}{
		{"10", 10}, {"-2.5", -2.5}, {"+.5", 0.5}, {"1e-6", 1e-6}, {"1.5E3", 1500},
		{"1f", 1e-15}, {"1p", 1e-12}, {"1n", 1e-9}, {"1u", 1e-6}, {"1m", 1e-3}, {"1k", 1e3}, {"1g", 1e9}, {"1t", 1e12},
		{"1F", 1e-15}, {"1P", 1e-12}, {"1N", 1e-9}, {"1U", 1e-6}, {"1K", 1e3}, {"1G", 1e9}, {"1T", 1e12},
		{"1M", 1e-3},                                // M is milli, not mega (common practice)
		{"1meg", 1e6}, {"1MEG", 1e6}, {"1Meg", 1e6}, // meg is mega
		{"10fF", 10e-15}, {"0.18um", 0.18e-6}, {"1.8V", 1.8}, {"5kOhm", 5e3}, {"2megohm", 2e6},
		{"3v", 3},    // a letter that is no suffix is a unit
		{"1e-3k", 1}, // exponent and suffix together
		{"0.18u", 0.18e-6},
	}
	for _, c := range cases {
		got, ok := parseValue(c.in)
		if !ok || got != c.want {
			t.Errorf("parseValue(%q) = %v, %v; want %v (common practice)", c.in, got, ok, c.want)
		}
	}
	for _, bad := range []string{"", "u", ".", "1.2.3", "1e99999", "1u2", "abc", "1u-", "1e400"} {
		if v, ok := parseValue(bad); ok {
			t.Errorf("parseValue(%q) = %v, want an error", bad, v)
		}
	}
}

// 0.18u must be exactly the float64 nearest 0.18e-6, so sizes compare equal
// after a round trip through a file.
func TestParseValueExact(t *testing.T) {
	for _, c := range []struct {
		in   string
		want float64
	}{{"0.18u", 0.18e-6}, {"0.36u", 0.36e-6}, {"180n", 180e-9}, {"7.2e-7", 0.72e-6}, {"1.7e-4", 170e-6}} {
		if got, _ := parseValue(c.in); got != c.want {
			t.Errorf("parseValue(%q) = %v, want exactly %v", c.in, got, c.want)
		}
	}
}

func TestExpressions(t *testing.T) {
	vars := map[string]float64{"w": 2e-6, "nf": 4, "lmin": 0.18e-6}
	get := func(n string) (float64, error) {
		if v, ok := vars[n]; ok {
			return v, nil
		}
		return 0, errUnknown
	}
	cases := []struct {
		in   string
		want float64
	}{
		{"1+2*3", 7}, {"(1+2)*3", 9}, {"-2*-3", 6}, {"10/4", 2.5}, {"w/nf", 0.5e-6}, {"2*LMIN", 0.36e-6},
		{"-(1u+1u)", -2e-6}, {"1u*2", 2e-6}, {"+3", 3}, {"1e-6*2", 2e-6}, {"2 * w", 4e-6}, {"8-2-1", 5}, {"8/2/2", 2},
	}
	for _, c := range cases {
		e, err := parseExpr(c.in)
		if err != nil {
			t.Errorf("parseExpr(%q): %v", c.in, err)
			continue
		}
		got, err := e.eval(get)
		if err != nil || math.Abs(got-c.want) > 1e-12*math.Abs(c.want) {
			t.Errorf("%q = %v, %v; want %v", c.in, got, err, c.want)
		}
	}
	for _, bad := range []string{"1+", "(1", "1)", "2**3", "sqrt(4)", "1 2", "*3", "#"} {
		if _, err := parseExpr(bad); err == nil {
			t.Errorf("parseExpr(%q): want an error", bad)
		}
	}
	e, _ := parseExpr("1/(w-w)")
	if _, err := e.eval(get); err == nil {
		t.Error("division by zero was not an error")
	}
	deep := ""
	for i := 0; i < 200; i++ {
		deep += "("
	}
	if _, err := parseExpr(deep + "1"); err == nil {
		t.Error("an expression nested 200 deep was accepted")
	}
}

var errUnknown = errorString("unknown")

type errorString string

func (e errorString) Error() string { return string(e) }
