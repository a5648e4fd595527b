package netfile_test

import (
	"errors"
	"fmt"
	"strings"
	"testing"

	"railyard/switchsim/diag"
	"railyard/switchsim/netfile"
)

// wantErrors reads src as t.sw and checks that every want, written
// "LINE:COL: text", matches an error at exactly that position whose
// message contains text. The positions are counted by hand from src.
func wantErrors(t *testing.T, src string, lim *netfile.Limits, wants ...string) diag.List {
	t.Helper()
	var err error
	if lim != nil {
		_, err = netfile.ReadLimits("t.sw", []byte(src), *lim)
	} else {
		_, err = netfile.Read("t.sw", []byte(src))
	}
	if err == nil {
		t.Fatalf("no error for:\n%s", src)
	}
	var list diag.List
	if !errors.As(err, &list) {
		t.Fatalf("error is %T, not a diag.List: %v", err, err)
	}
	text := err.Error()
	for _, w := range wants {
		pos, msg, _ := strings.Cut(w, ": ")
		found := false
		for _, line := range strings.Split(text, "\n") {
			if strings.HasPrefix(line, "t.sw:"+pos+": ") && strings.Contains(line, msg) {
				found = true
			}
		}
		if !found {
			t.Errorf("want t.sw:%s: ...%s..., got:\n%s", pos, msg, text)
		}
	}
	return list
}

// The bad inputs switchsim/FORMATS.md lists, and the reader's own, each with the
// position of the word at fault.
func TestErrorPositions(t *testing.T) {
	cases := []struct {
		name, src string
		wants     []string
	}{
		{"unknown statement", "input a\nnmoss n1 a x gnd\n", []string{`2:1: unknown statement "nmoss"`}},
		{"undeclared cell", "input a\nuse foo u1 a\n", []string{`2:5: undeclared cell "foo"`}},
		{"too few terminals", "input a\nnmos n1 a b\n", []string{"2:1: wrong number of terminals: nmos takes NAME GATE A B"}},
		{"too many terminals", "input a\nnmos n1 a b c d\n", []string{"2:15: wrong number of terminals"}},
		{"tgate terminals", "input a\ntgate t a b c\n", []string{"2:1: wrong number of terminals: tgate takes NAME NGATE PGATE A B"}},
		{"pull terminals", "pullup p\n", []string{"1:1: wrong number of terminals: pullup takes NAME NODE"}},
		{"use terminals", "input a\nuse inv u1 a\n", []string{"2:12: wrong number of terminals: cell inv takes 2 nodes (IN OUT), found 1"}},
		{"use too many", "input a\nuse inv u1 a b c\n", []string{"2:16: wrong number of terminals: cell inv takes 2 nodes"}},
		{"duplicate device", "input a\nnmos n1 a x gnd\nnmos n1 a y gnd\n", []string{"3:6: duplicate device or instance name n1 (first at 2:1)"}},
		{"duplicate instance", "input a\nuse inv u a y\nuse inv u a z\n", []string{"3:9: duplicate device or instance name u (first at 2:1)"}},
		{"device and instance", "input a\nnmos u a x gnd\nuse inv u a z\n", []string{"3:9: duplicate device or instance name u"}},
		{"duplicate flattened", "input a\nnmos u.n a x gnd\nuse inv u a y\n", []string{`3:1: duplicate device name "u.n"`}},
		{"duplicate in cell", "cell c A\n  nmos n A x gnd\n  nmos n A y gnd\nend\n", []string{"3:8: duplicate device or instance name n (first at 2:3)"}},
		{"unknown strength", "input a\nnmos n1 a x gnd strength=big\n", []string{`2:26: unknown strength "big" (want supply, strong, pull or weak)`}},
		{"charge is no device strength", "input a\nnmos n1 a x gnd strength=medium\n", []string{`2:26: unknown strength "medium"`}},
		{"use strength", "input a\nuse inv u a y strength=hard\n", []string{`2:24: unknown strength "hard"`}},
		{"unknown tech key", "tech generic vt=0.4\n", []string{`1:14: unknown technology key "vt"`}},
		{"unknown preset", "tech fast\n", []string{`1:6: unknown technology preset "fast"`}},
		{"tech twice", "tech\ntech vdd=1.2\n", []string{"2:1: tech given twice (first at 1:1)"}},
		{"tech invalid", "tech vdd=-1\n", []string{"1:1: technology: vdd must be positive"}},
		{"tech bad number", "tech vdd=fast\n", []string{`1:10: bad number "fast" for vdd`}},
		{"bad number", "input a\nnmos n1 a x gnd w=1.2.3u\n", []string{`2:19: bad number "1.2.3u" for w`}},
		{"unit letters", "input a\nnmos n1 a x gnd w=0.36um\n", []string{`2:19: bad number "0.36um"`}},
		{"two prefixes", "node x cap=1fF\n", []string{`1:12: bad number "1fF"`}},
		{"size not positive", "input a\nnmos n1 a x gnd l=0\n", []string{"2:19: l must be positive"}},
		{"cap negative", "input a\nnmos n a x gnd\nnode x cap=-1f\n", []string{"3:12: cap must be positive"}},
		{"bad charge", "input a\nnmos n a x gnd\nnode x charge=huge\n", []string{`3:15: unknown charge "huge"`}},
		{"self instance", "cell a X\n  use a i X\nend\n", []string{"2:3: cell a instantiates itself: a -> a"}},
		{"cycle", "cell a X\n  use b i X\nend\ncell b Y\n  use c j Y\nend\ncell c Z\n  use a k Z\nend\n",
			[]string{"8:3: cell a instantiates itself: a -> b -> c -> a"}},
		{"NUL byte", "input a\nnmos n a\x00 x gnd\n", []string{"2:9: not a text file: NUL byte"}},
		{"invalid UTF-8", "input a\n# caf\xe9\n", []string{"2:6: not a text file: invalid UTF-8"}},
		{"missing end", "input a\ncell c A\n  nmos n A x gnd\n", []string{"2:1: cell c has no end"}},
		{"nested cell", "cell a X\ncell b Y\nend\n", []string{"2:1: cell b starts inside cell a (line 1), which has no end"}},
		{"end alone", "input a\nend\n", []string{"2:1: end without a cell"}},
		{"design not first", "input a\ndesign x\n", []string{"2:1: design must be the first statement"}},
		{"design twice", "design x\ndesign y\n", []string{"2:1: design given twice (first at 1:1)"}},
		{"unclosed string", "design x \"abc\n", []string{"1:10: string is not closed"}},
		{"stray string", "input \"a\"\n", []string{"1:7: unexpected string"}},
		{"string keyword", "\"input\" a\n", []string{"1:1: expected a statement keyword, found a string"}},
		{"number as name", "input 3a\n", []string{`1:7: expected a node name, found "3a"`}},
		{"bad name", "input a-b\n", []string{`1:7: expected a node name, found "a-b": a name starts with a letter or _`}},
		{"unknown option", "input a\nnmos n1 a b c x=1\n", []string{`2:15: unknown option "x" for nmos (want w, l, strength)`}},
		{"option twice", "input a\nnmos n1 a b c w=1u w=2u\n", []string{"2:20: option w given twice (first at 2:15)"}},
		{"missing value", "input a\nnmos n1 a b c w=\n", []string{"2:17: missing value after w="}},
		{"port is a rail", "cell a vdd\nend\n", []string{"1:8: port vdd of cell a is a rail"}},
		{"port twice", "cell a X X\nend\n", []string{"1:10: port X of cell a given twice"}},
		{"cell twice", "cell a X\nend\ncell a Y\nend\n", []string{"3:6: cell a defined twice (first at 1:1)"}},
		{"input is a rail", "input vdd\n", []string{"1:7: vdd is a rail and cannot be an input"}},
		{"input twice", "input a b\ninput a\n", []string{"2:7: input a declared twice (first at 1:7)"}},
		{"rails share a name", "power a\nground a\n", []string{"2:8: power and ground are both named a"}},
		{"power twice", "power a\npower b\n", []string{"2:1: power given twice (first at 1:1)"}},
		{"not in a cell", "cell c A\n  input b\nend\n", []string{"2:3: input is not allowed inside a cell"}},
		{"unknown in a cell", "cell c A\n  wire b\nend\n", []string{`2:3: unknown statement "wire"`}},
		{"output unconnected", "input a\noutput a y\n", []string{`2:10: output "y" is not connected to any device`}},
		{"node unconnected", "input a\nnmos n a x gnd\nnode x z cap=1f\n", []string{`3:8: node "z" is not connected to any device`}},
		{"node on a rail", "node vdd cap=1f\n", []string{"1:6: vdd is a rail"}},
		{"end takes nothing", "cell c A\nend c\n", []string{"2:1: end takes nothing after it"}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) { wantErrors(t, c.src, nil, c.wants...) })
	}
}

// The reader keeps going and reports every error, in position order.
func TestEveryErrorReported(t *testing.T) {
	src := "input a\nnmos n1 a b\nfoo\nnmos n2 a x gnd strength=big\nuse nope u a\n"
	list := wantErrors(t, src, nil,
		"2:1: wrong number of terminals", `3:1: unknown statement "foo"`, `4:26: unknown strength`, `5:5: undeclared cell "nope"`)
	if len(list) != 4 {
		t.Errorf("want 4 errors, got %d:\n%v", len(list), list)
	}
	for i := 1; i < len(list); i++ {
		if list[i].Pos.Line < list[i-1].Pos.Line {
			t.Errorf("errors out of order:\n%v", list)
		}
	}
}

// A technology that cannot work is one error at its statement, not a
// second one without a position from the compile that follows.
func TestBadTechnologyReportedOnce(t *testing.T) {
	for _, c := range []struct{ src, want string }{
		// vdd below vtn + vtp: the reference inverter has no gain (common practice).
		{"tech generic vdd=0.8\ninput a\nuse inv i a y\n", "1:1: technology: vdd=0.8 V is not above vtn + vtp"},
		{"tech generic kn=1e-320\ninput a\nuse inv i a y\n", "1:1: technology: kn=1e-320 is outside the physical range"},
	} {
		if list := wantErrors(t, c.src, nil, c.want); len(list) != 1 {
			t.Errorf("%q: %d errors, want 1:\n%v", c.src, len(list), list)
		}
	}
}

func TestLimits(t *testing.T) {
	t.Run("line length", func(t *testing.T) {
		lim := netfile.DefaultLimits()
		lim.LineLen = 20
		wantErrors(t, "input a\n# "+strings.Repeat("x", 30)+"\n", &lim, "2:21: line is longer than the limit of 20 bytes")
	})
	t.Run("file size", func(t *testing.T) {
		lim := netfile.DefaultLimits()
		lim.FileSize = 10
		// byte 10 (0-based), the first past the limit, starts line 2
		wantErrors(t, "input a b\ninput c d\n", &lim, "2:1: file is longer than the limit of 10 bytes")
	})
	t.Run("nesting depth", func(t *testing.T) {
		var b strings.Builder
		for i := 0; i < 10; i++ {
			fmt.Fprintf(&b, "cell c%d A\n  use c%d u A\nend\n", i, i+1)
		}
		b.WriteString("cell c10 A\n  pullup p A\nend\ninput a\nuse c0 top a\n")
		lim := netfile.DefaultLimits()
		lim.Depth = 5
		wantErrors(t, b.String(), &lim, "14:3: instances nest more than 5 deep (c0 -> c1 -> c2 -> c3 -> c4 -> c5)")
		lim.Depth = 11 // c0 .. c10: eleven levels
		if _, err := netfile.ReadLimits("t.sw", []byte(b.String()), lim); err != nil {
			t.Errorf("11 levels within a limit of 11: %v", err)
		}
	})
	t.Run("devices", func(t *testing.T) {
		// Each cell uses the one before twice: 2^40 devices if expanded.
		var b strings.Builder
		b.WriteString("cell c0 A\n  pullup p A\nend\n")
		for i := 1; i <= 40; i++ {
			fmt.Fprintf(&b, "cell c%d A\n  use c%d x A\n  use c%d y A\nend\n", i, i-1, i-1)
		}
		b.WriteString("input a\nuse c40 top a\n")
		lim := netfile.DefaultLimits()
		lim.Depth = 100
		list := wantErrors(t, b.String(), &lim, fmt.Sprintf("%d:1: the design expands to more than the limit of 2000000 devices", 3+40*4+2))
		if len(list) != 1 {
			t.Errorf("want one error, got %v", list)
		}
	})
	t.Run("error count", func(t *testing.T) {
		lim := netfile.DefaultLimits()
		lim.Errors = 10
		list := wantErrors(t, strings.Repeat("bogus\n", 50), &lim, "10:1: too many errors: 40 more not shown")
		if len(list) != 11 {
			t.Errorf("want 10 errors and a last line, got %d", len(list))
		}
	})
}
