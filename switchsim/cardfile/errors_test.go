package cardfile_test

import (
	"errors"
	"strings"
	"testing"

	"railyard/switchsim/cardfile"
)

// Bad netlists give FILE:LINE:COL errors, all of them.
func TestBadNetlists(t *testing.T) {
	cases := []struct {
		name, src string
		want      []string
	}{
		{"unknown model type", ".model nx nmosfet vto=1\n.subckt c a\nm1 a a 0 0 nch\n.ends\n",
			[]string{`t.sp:1:11: unknown model type "nmosfet" for nx`}},
		{"model of another type", ".model d1 d\n.subckt c a\nm1 a a 0 0 d1\n.ends\n",
			[]string{"t.sp:3:12: model d1 is a d model"}},
		{"missing .ends", ".subckt c a\nm1 a a 0 0 nch\n",
			[]string{"t.sp:1:9: subcircuit c has no .ends"}},
		{"nested .subckt", ".subckt c a\n.subckt d b\n.ends\n",
			[]string{"t.sp:2:1: subcircuit d starts inside subcircuit c"}},
		{"stray .ends", ".ends\n", []string{"t.sp:1:1: .ends with no .subckt to close"}},
		{"M card terminals", ".subckt c a\nm1 a a 0 nch w=1u\n.ends\n",
			[]string{"t.sp:2:1: wrong number of terminals: M card m1 takes drain gate source bulk model, found 4 words"}},
		{"X card terminals", ".subckt c a\nx1 a b inv\n.ends\n.subckt inv i\nm1 i i 0 0 nch\n.ends\n",
			[]string{"t.sp:2:1: wrong number of terminals: subcircuit inv takes 1 node (i), instance x1 gives 2"}},
		{"unknown subcircuit", ".subckt c a\nx1 a b nand7\n.ends\n",
			[]string{"t.sp:2:8: instance x1 of unknown subcircuit nand7"}},
		{"recursive subcircuit", ".subckt c a\nx1 a d\n.ends\n.subckt d a\nx2 a c\n.ends\n",
			[]string{"subcircuit c instantiates itself: c -> d -> c"}},
		{"self instance", ".subckt c a\nx1 a c\n.ends\n",
			[]string{"t.sp:2:1: subcircuit c instantiates itself: c -> c"}},
		{"binary", "\x00\x01\x02", []string{"t.sp:1:1: not a text file: NUL byte"}},
		{"bad utf-8", "* ok\n.subckt \xff\n", []string{"t.sp:2:9: not a text file: invalid UTF-8"}},
		{"continuation first", "+ w=1u\n", []string{"t.sp:1:1: continuation line (+) with no card before it"}},
		{"bad number", ".subckt c a\nm1 a a 0 0 nch w=1x2\n.ends\n", []string{`t.sp:2:18: bad value "1x2"`}},
		{"unclosed brace", ".subckt c a\nm1 a a 0 0 nch w={1u\n.ends\n", []string{"t.sp:2:18: { is not closed on this line"}},
		{"twice", ".subckt c a\nm1 a a 0 0 nch\n.ends\n.subckt C b\n.ends\n", []string{"t.sp:4:9: subcircuit C defined twice (first at t.sp:1:9)"}},
		{"negative r", ".subckt c a\nm1 a a 0 0 nch\nr1 a 0 -5\n.ends\n", []string{"t.sp:3:8: a resistance must be positive"}},
		{"c card shape", ".subckt c a\nm1 a a 0 0 nch\nc1 a 0\n.ends\n", []string{"t.sp:3:1: wrong number of terminals: C card c1 takes NODE NODE VALUE"}},
		{"several at once", ".model nx nmosfet\n.subckt c a\nm1 a a 0 nch\nx2 a zz\n.ends\n.subckt open b\n",
			[]string{"t.sp:1:11: unknown model type", "t.sp:6:9: subcircuit open has no .ends"}},
	}
	for _, c := range cases {
		_, err := cardfile.Read("t.sp", []byte(c.src), cardfile.Options{})
		if err == nil {
			t.Errorf("%s: no error", c.name)
			continue
		}
		for _, w := range c.want {
			if !strings.Contains(err.Error(), w) {
				t.Errorf("%s: errors\n%v\nlack %q", c.name, err, w)
			}
		}
	}
	// Every error of a file is reported, sorted by position.
	_, err := cardfile.Read("t.sp", []byte(".subckt c a\nm1 a a 0 nch\nm2 a a 0 0 zz\nx3 a b\n.ends\n"), cardfile.Options{})
	lines := strings.Split(err.Error(), "\n")
	if len(lines) != 3 || !strings.HasPrefix(lines[0], "t.sp:2:") || !strings.HasPrefix(lines[1], "t.sp:3:") || !strings.HasPrefix(lines[2], "t.sp:4:") {
		t.Errorf("want three sorted errors, got:\n%v", err)
	}
}

// An include the opener refuses (the loader's: outside the folder the deck
// came from) is an error at the file name, with the opener's reason.
func TestIncludeRefused(t *testing.T) {
	open := func(from, name string) (string, []byte, error) {
		if strings.HasPrefix(name, "..") || strings.HasPrefix(name, "/") {
			return "", nil, errors.New("leads out of the folder")
		}
		if name == "lib/inv.sp" {
			return "lib/inv.sp", []byte(".subckt inv a y\nmn y a 0 0 nch\n.ends\n"), nil
		}
		return "", nil, errors.New("no such file")
	}
	ok := ".include lib/inv.sp\n.subckt top a y\nx1 a y inv\n.ends\n"
	if _, err := cardfile.Read("top.sp", []byte(ok), cardfile.Options{Open: open}); err != nil {
		t.Fatalf("an include inside the folder: %v", err)
	}
	for _, c := range []struct{ src, want string }{
		{".include ../secret.sp\n", `top.sp:1:10: cannot include "../secret.sp": leads out of the folder`},
		{".inc '/etc/x.sp'\n", `top.sp:1:6: cannot include "/etc/x.sp": leads out of the folder`},
		{".include lib/none.sp\n", `cannot include "lib/none.sp": no such file`},
	} {
		_, err := cardfile.Read("top.sp", []byte(c.src), cardfile.Options{Open: open})
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%q: %v, want %q", c.src, err, c.want)
		}
	}
}

// Limits: every one gives an error with a position, never a panic or an
// unbounded read.
func TestLimits(t *testing.T) {
	lim := cardfile.Limits{FileSize: 4096, LineLen: 80, CardWords: 50, Devices: 10, Depth: 4, NameBytes: 16, Errors: 5, Includes: 2}
	cases := []struct{ src, want string }{
		{strings.Repeat("* x\n", 2000), "t.sp:1025:1: file is longer than the limit of 4 KiB"},
		{"* " + strings.Repeat("x", 100) + "\n", "t.sp:1:81: line is longer than the limit of 80 bytes"},
		{".subckt c a\nm1 a a 0 0 nch\n" + strings.Repeat("+ w=1u\n", 20) + ".ends\n", "card is longer than the limit of 50 words"},
		{".subckt c a\n" + strings.Repeat("x1 a d\n", 1) + ".ends\n.subckt d a\n" + strings.Repeat("m1 a a 0 0 nch\n", 11) + ".ends\n",
			"more than the limit of 10 devices"},
		{".subckt c a\nm1 a a 0 0 nch\nm" + strings.Repeat("x", 20) + " a a 0 0 nch\n.ends\n", "name is longer than the limit of 16 bytes"},
		{".subckt c a\nx1 a d1\n.ends\n.subckt d1 a\nx1 a d2\n.ends\n.subckt d2 a\nx1 a d3\n.ends\n.subckt d3 a\nx1 a d4\n.ends\n.subckt d4 a\nx1 a d5\n.ends\n.subckt d5 a\nm1 a a 0 0 nch\n.ends\n",
			"instances nest more than 4 deep"},
	}
	for _, c := range cases {
		_, err := cardfile.Read("t.sp", []byte(c.src), cardfile.Options{Limits: lim})
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%.40q: %v, want %q", c.src, err, c.want)
		}
	}
	// Exponential instance trees are refused before anything is expanded.
	var b strings.Builder
	b.WriteString(".subckt l0 a\nm1 a a 0 0 nch\n.ends\n")
	for i := 1; i <= 30; i++ {
		b.WriteString(".subckt l" + itoa(i) + " a\nx1 a l" + itoa(i-1) + "\nx2 a l" + itoa(i-1) + "\n.ends\n")
	}
	_, err := cardfile.Read("t.sp", []byte(b.String()), cardfile.Options{Top: "l30"})
	if err == nil || !strings.Contains(err.Error(), "more than the limit of 2000000 devices") {
		t.Errorf("2^30 devices: %v", err)
	}
	// Past the error limit the rest are counted.
	_, err = cardfile.Read("t.sp", []byte(strings.Repeat("+ x\n", 20)), cardfile.Options{Limits: lim})
	if err == nil || !strings.Contains(err.Error(), "too many errors") {
		t.Errorf("error limit: %v", err)
	}
}

func itoa(i int) string {
	if i < 10 {
		return string(rune('0' + i))
	}
	return itoa(i/10) + string(rune('0'+i%10))
}

// Names from the file reach messages made printable: a control character
// shows as an escape, never reaches a terminal.
func TestMessagesPrintable(t *testing.T) {
	_, err := cardfile.Read("t.sp", []byte(".subckt c a\nm1 a a 0 0 \x1b[31mzz\n.ends\n"), cardfile.Options{})
	if err == nil || strings.ContainsRune(err.Error(), 0x1b) || !strings.Contains(err.Error(), `\x1b[31mzz`) {
		t.Errorf("error %q: want the escape written out", err)
	}
	d := read(t, "title\n.subckt c a\nm1 a a 0 0 n\x1b]0;x\x07ch\n.ends\n", cardfile.Options{})
	if n := notes(d); strings.ContainsAny(n, "\x1b\x07") {
		t.Errorf("notes %q hold control characters", n)
	}
}
