package steps_test

import (
	"math"
	"strings"
	"testing"

	"railyard/switchsim"
	"railyard/switchsim/diag"
	"railyard/switchsim/netfile"
	"railyard/switchsim/steps"
)

// switchsim/FORMATS.md's check semantics: 0 1 X compare the logic value, a stored
// value counting; full swing also wants states 0/1; Z wants a floating
// node; L H want the weak-or-degraded states; - passes always.
func TestWantCheck(t *testing.T) {
	nan := math.NaN()
	ns := map[string]switchsim.NodeState{
		"strong1":   {Value: switchsim.V1, Strength: switchsim.Strong, State: switchsim.State1, Volts: nan},
		"degraded1": {Value: switchsim.V1, Strength: switchsim.Strong, State: switchsim.StateH, Volts: 1.1},
		"weak1":     {Value: switchsim.V1, Strength: switchsim.Weak, State: switchsim.StateH, Volts: nan},
		"stored1":   {Value: switchsim.V1, Strength: switchsim.Medium, State: switchsim.StateZ, Volts: nan, Floating: true},
		"strong0":   {Value: switchsim.V0, Strength: switchsim.Supply, State: switchsim.State0, Volts: nan},
		"weak0":     {Value: switchsim.V0, Strength: switchsim.Pull, State: switchsim.StateL, Volts: nan},
		"stored0":   {Value: switchsim.V0, Strength: switchsim.Large, State: switchsim.StateZ, Volts: nan, Floating: true},
		"storedX":   {Value: switchsim.VX, Strength: switchsim.Small, State: switchsim.StateZ, Volts: nan, Floating: true},
		"conflict":  {Value: switchsim.VX, Strength: switchsim.Strong, State: switchsim.StateX, Volts: nan},
	}
	// name -> the states that pass, without and with full swing
	cases := []struct {
		want       steps.Want
		pass, full string
	}{
		{steps.WantAny, "strong1 degraded1 weak1 stored1 strong0 weak0 stored0 storedX conflict", "strong1 degraded1 weak1 stored1 strong0 weak0 stored0 storedX conflict"},
		{steps.Want1, "strong1 degraded1 weak1 stored1", "strong1"},
		{steps.Want0, "strong0 weak0 stored0", "strong0"},
		{steps.WantX, "storedX conflict", "storedX conflict"},
		{steps.WantZ, "stored1 stored0 storedX", "stored1 stored0 storedX"},
		{steps.WantH, "degraded1 weak1", "degraded1 weak1"},
		{steps.WantL, "weak0", "weak0"},
	}
	for _, c := range cases {
		for name, s := range ns {
			for _, full := range []bool{false, true} {
				list := c.pass
				if full {
					list = c.full
				}
				want := strings.Contains(" "+list+" ", " "+name+" ")
				if got := c.want.Check(s, full); got != want {
					t.Errorf("%s.Check(%s, fullSwing=%v) = %v, want %v", c.want, name, full, got, want)
				}
			}
		}
	}
}

func TestParseWant(t *testing.T) {
	for i, s := range []string{"-", "0", "1", "X", "Z", "L", "H"} {
		w, ok := steps.ParseWant(s)
		if !ok || w != steps.Want(i) || w.String() != s {
			t.Errorf("ParseWant(%q) = %v %v", s, w, ok)
		}
		if lw, ok := steps.ParseWant(strings.ToLower(s)); !ok || lw != w {
			t.Errorf("ParseWant(%q) lower case: %v %v", strings.ToLower(s), lw, ok)
		}
	}
	for _, s := range []string{"", "2", "W", "01", "?"} {
		if _, ok := steps.ParseWant(s); ok {
			t.Errorf("ParseWant(%q) accepted", s)
		}
	}
}

func nand(t *testing.T) *switchsim.Netlist {
	t.Helper()
	d, err := netfile.Read("nand.sw", []byte("design nand\ninput a b\noutput y\nuse nand2 g a b y\n"))
	if err != nil {
		t.Fatal(err)
	}
	return d.Netlist
}

func TestRead(t *testing.T) {
	nl := nand(t)
	src := "# a header comment\n\napply a b\ncheck y g.mid\n0 0 | 1 -   # both low\n1 1|0 -\nx Z | x z\n0 1    # no checks\n"
	st, err := steps.Read("t.steps", []byte(src), nl)
	if err != nil {
		t.Fatal(err)
	}
	a, _ := nl.Lookup("a")
	b, _ := nl.Lookup("b")
	y, _ := nl.Lookup("y")
	mid, _ := nl.Lookup("g.mid")
	if len(st.Apply) != 2 || st.Apply[0] != a || st.Apply[1] != b || len(st.Check) != 2 || st.Check[0] != y || st.Check[1] != mid {
		t.Fatalf("columns %v %v", st.Apply, st.Check)
	}
	type row struct {
		line   int
		drives string
		wants  string
		label  string
	}
	want := []row{{5, "00", "1-", "both low"}, {6, "11", "0-", ""}, {7, "xz", "XZ", ""}, {8, "01", "--", "no checks"}}
	if len(st.Rows) != len(want) {
		t.Fatalf("%d rows, want %d", len(st.Rows), len(want))
	}
	for i, w := range want {
		r := st.Rows[i]
		d, c := "", ""
		for _, x := range r.Drives {
			d += x.String()
		}
		for _, x := range r.Wants {
			c += x.String()
		}
		if r.Line != w.line || d != w.drives || c != w.wants || r.Label != w.label {
			t.Errorf("row %d: line %d drives %q wants %q label %q; want %+v", i, r.Line, d, c, r.Label, w)
		}
	}
}

// A steps file with no check line: rows are apply values alone.
func TestReadNoChecks(t *testing.T) {
	st, err := steps.Read("t.steps", []byte("apply a\n1\n0\n"), nand(t))
	if err != nil {
		t.Fatal(err)
	}
	if len(st.Rows) != 2 || len(st.Check) != 0 || st.Rows[1].Wants != nil {
		t.Errorf("%+v", st)
	}
}

// Every error of switchsim/FORMATS.md's steps list, and the reader's own, at the
// position of the word at fault (counted by hand).
func TestReadErrors(t *testing.T) {
	cases := []struct{ name, src, want string }{
		{"apply not an input", "apply a y\n", `t.steps:1:9: apply column "y" is not an input of design nand (inputs: a b)`},
		{"apply no node", "apply q\n", `t.steps:1:7: apply column "q" is no node of design nand`},
		{"check no node", "apply a\ncheck y zz\n", `t.steps:2:9: check column "zz" is no node of design nand`},
		{"too few apply", "apply a b\n0\n", "t.steps:2:1: wrong number of values: 1 apply value, want 2 (a b)"},
		{"too many apply", "apply a b\n0 1 1\n", "t.steps:2:5: wrong number of values: 3 apply values, want 2 (a b)"},
		{"forgot the bar", "apply a b\ncheck y\n0 1 1\n", "t.steps:3:5: wrong number of values: 3 values, want 2 apply values (a b), then | and the check values"},
		{"too many checks", "apply a b\ncheck y\n0 1 | 1 0\n", "t.steps:3:9: wrong number of values: 2 check values, want 1 (y)"},
		{"too few checks", "apply a b\ncheck y g.mid\n0 1 | 1\n", "t.steps:3:7: wrong number of values: 1 check values, want 2 (y g.mid)"},
		{"unknown apply value", "apply a\n2\n", `t.steps:2:1: unknown apply value "2": want 0, 1, x or z`},
		{"unknown check value", "apply a\ncheck y\n0 | Q\n", `t.steps:3:5: unknown check value "Q": want 0, 1, X, Z, L, H or -`},
		{"missing apply", "0 1\n", `t.steps:1:1: missing apply line`},
		{"empty file", "# only a comment\n", `t.steps:1: missing apply line`},
		{"check first", "check y\napply a\n", `t.steps:1:1: check before the apply line`},
		{"apply twice", "apply a\napply b\n", "t.steps:2:1: apply given twice (first on line 1)"},
		{"check after a row", "apply a\n0\ncheck y\n", "t.steps:3:1: check must come before the first row"},
		{"bar without check", "apply a\n0 | 1\n", "t.steps:2:3: | with no check line"},
		{"two bars", "apply a\ncheck y\n0 | 1 | 1\n", "t.steps:3:7: a row takes one |"},
		{"apply column twice", "apply a a\n", `t.steps:1:9: apply column "a" given twice (first at column 7)`},
		{"empty apply", "apply\n", "t.steps:1:1: apply needs at least one node name"},
		{"NUL", "apply a\n0\x00\n", "t.steps:2:2: not a text file: NUL byte"},
		{"bad UTF-8", "apply a\n0 # \xc3\n", "t.steps:2:5: not a text file: invalid UTF-8"},
	}
	nl := nand(t)
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, err := steps.Read("t.steps", []byte(c.src), nl)
			if err == nil {
				t.Fatalf("no error")
			}
			if _, ok := err.(diag.List); !ok {
				t.Errorf("error is %T, not a diag.List", err)
			}
			found := false
			for _, line := range strings.Split(err.Error(), "\n") {
				found = found || strings.HasPrefix(line, c.want)
			}
			if !found {
				t.Errorf("want %s\ngot  %v", c.want, err)
			}
		})
	}
}

func TestReadLimits(t *testing.T) {
	nl := nand(t)
	_, err := steps.ReadLimits("t.steps", []byte("apply a\n# "+strings.Repeat("x", 40)+"\n"), nl, steps.Limits{LineLen: 16})
	if err == nil || !strings.HasPrefix(err.Error(), "t.steps:2:17: line is longer than the limit of 16 bytes") {
		t.Errorf("long line: %v", err)
	}
	_, err = steps.ReadLimits("t.steps", []byte("apply a\n0\n1\n"), nl, steps.Limits{FileSize: 8})
	if err == nil || !strings.HasPrefix(err.Error(), "t.steps:2:1: file is longer than the limit of 8 bytes") {
		t.Errorf("big file: %v", err)
	}
	_, err = steps.ReadLimits("t.steps", []byte("apply a\n"+strings.Repeat("7\n", 30)), nl, steps.Limits{Errors: 5})
	if err == nil || !strings.Contains(err.Error(), "too many errors: 25 more not shown") {
		t.Errorf("many errors: %v", err)
	}
}

// ApplyNames reads only the apply line, before any row, so a netlist
// reader can learn its inputs from the steps before the netlist is read.
func TestApplyNames(t *testing.T) {
	for _, c := range []struct {
		src  string
		want []string
	}{
		{"# header\n\napply clk d # columns\ncheck q\n1 0 | 1\n", []string{"clk", "d"}},
		{"check q\napply a|b\n", []string{"a", "b"}},
		{"1 0\napply a\n", nil},
		{"", nil},
	} {
		got := steps.ApplyNames([]byte(c.src))
		if strings.Join(got, ",") != strings.Join(c.want, ",") || (got == nil) != (c.want == nil) {
			t.Errorf("ApplyNames(%q) = %q, want %q", c.src, got, c.want)
		}
	}
}

// With FoldCase (a design read from netlist cards, whose names are
// case-insensitive: common practice of the card format) a column matches
// a node's railyard name or shown spelling in any case; without it (a .sw
// design) names are exact. A folded name that is two nodes' is refused,
// and so is one node named twice in the apply line in two spellings.
func TestFoldCase(t *testing.T) {
	d, err := netfile.Read("f.sw", []byte("input clk d\noutput ab AB\nalias q2 \"Q<2>\"\nnmos n clk d ab\nnmos m clk d AB\nnmos k clk d q2\n"))
	if err != nil {
		t.Fatal(err)
	}
	nl := d.Netlist
	src := []byte("apply CLK D\ncheck q<2>\n1 1 | 1\n")
	if _, err := steps.Read("f.steps", src, nl); err == nil || !strings.Contains(err.Error(), `f.steps:1:7: apply column "CLK" is no node`) {
		t.Errorf("exact names: %v", err)
	}
	st, err := steps.ReadWith("f.steps", src, nl, steps.Options{FoldCase: true})
	if err != nil {
		t.Fatalf("folded names: %v", err)
	}
	clk, _ := nl.Lookup("clk")
	q2, _ := nl.Lookup("q2")
	if st.Apply[0] != clk || st.Check[0] != q2 {
		t.Errorf("folded columns %v %v, want clk=%d and q2 (shown Q<2>)=%d", st.Apply, st.Check, clk, q2)
	}
	for src, want := range map[string]string{
		"apply clk\ncheck Ab\n1 | 1\n":  `f.steps:2:7: check column "Ab" names more than one node`,
		"apply clk CLK\n1 1\n":          `f.steps:1:11: apply column "CLK" given twice (first at column 7)`,
		"apply clk\ncheck nothere\n1\n": `f.steps:2:7: check column "nothere" is no node`,
	} {
		if _, err := steps.ReadWith("f.steps", []byte(src), nl, steps.Options{FoldCase: true}); err == nil || !strings.Contains(err.Error(), want) {
			t.Errorf("%q: %v, want %s", src, err, want)
		}
	}
}
