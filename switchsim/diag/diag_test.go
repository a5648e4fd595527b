package diag

import (
	"strings"
	"testing"
)

func TestPosString(t *testing.T) {
	for _, c := range []struct {
		p    Pos
		want string
	}{
		{Pos{"a.sw", 3, 7}, "a.sw:3:7"},
		{Pos{"a.sw", 3, 0}, "a.sw:3"},
		{Pos{"a.sw", 0, 0}, "a.sw"},
	} {
		if got := c.p.String(); got != c.want {
			t.Errorf("%#v: got %q, want %q", c.p, got, c.want)
		}
	}
}

func TestSinkSortsAndCaps(t *testing.T) {
	s := NewSink(2)
	s.Add(Pos{"f", 9, 1}, "late")
	s.Add(Pos{"f", 2, 4}, "early")
	s.Add(Pos{"f", 5, 1}, "dropped")
	s.Add(Pos{"f", 6, 1}, "dropped too")
	err := s.Err()
	want := "f:2:4: early\nf:9:1: late\nf:9:1: too many errors: 2 more not shown"
	if err == nil || err.Error() != want {
		t.Fatalf("got %v, want\n%s", err, want)
	}
}

func TestCheckTextAndSize(t *testing.T) {
	if e := CheckText("f", []byte("ab\ncd\x00")); e == nil || e.Error() != "f:2:3: not a text file: NUL byte" {
		t.Errorf("NUL: got %v", e)
	}
	if e := CheckText("f", []byte("ok\n\xff")); e == nil || !strings.Contains(e.Error(), "f:2:1: not a text file: invalid UTF-8") {
		t.Errorf("invalid UTF-8: got %v", e)
	}
	if e := CheckText("f", []byte("µm ok\n")); e != nil {
		t.Errorf("valid UTF-8 refused: %v", e)
	}
	if e := CheckSize("f", []byte("abc\ndef"), 5); e == nil || e.Error() != "f:2:2: file is longer than the limit of 5 bytes" {
		t.Errorf("size: got %v", e)
	}
}

// TestPrintable: the escape sequences a hostile file could carry (ECMA-48
// CSI and OSC, C1 controls, bidirectional overrides) come out as visible
// text; ordinary text is unchanged.
func TestPrintable(t *testing.T) {
	for _, c := range []struct{ in, want string }{
		{"latch q", "latch q"},
		{"µm «ok»", "µm «ok»"},
		{"\x1b]0;TITLE\x07x", `\x1b]0;TITLE\x07x`},
		{"\x1b[2J", `\x1b[2J`},
		{"a\u009bb", `a\u009bb`},
		{"a\u202eb", `a\u202eb`},
		{"bad\xffbyte", `bad\xffbyte`},
		{"tab\there", `tab\x09here`},
	} {
		if got := Printable(c.in); got != c.want {
			t.Errorf("Printable(%q) = %q, want %q", c.in, got, c.want)
		}
	}
}

func TestCount(t *testing.T) {
	for n, want := range map[int]string{0: "0 steps", 1: "1 step", 2: "2 steps"} {
		if got := Count(n, "step"); got != want {
			t.Errorf("Count(%d) = %q, want %q", n, got, want)
		}
	}
}

// TestSuggest: edit distances worked by hand (Levenshtein 1966): invv ->
// inv is one deletion, nmoss -> nmos one, nand3 -> nand2 one substitution,
// pulldwn -> pulldown one insertion; xyz is three edits from every cell.
func TestSuggest(t *testing.T) {
	cells := []string{"inv", "nand2", "nor2", "tinv"}
	for _, c := range []struct{ word, want string }{
		{"invv", "inv"}, {"nand3", "nand2"}, {"nor", "nor2"}, {"xyz", ""}, {"inv", ""},
		{"Inv", "inv"}, {"tinvv", "tinv"},
	} {
		if got := Suggest(c.word, cells); got != c.want {
			t.Errorf("Suggest(%q) = %q, want %q", c.word, got, c.want)
		}
	}
	kinds := []string{"nmos", "pmos", "pulldown", "pullup"}
	if got := Suggest("nmoss", kinds); got != "nmos" {
		t.Errorf("nmoss: %q", got)
	}
	if got := Suggest("pulldwn", kinds); got != "pulldown" {
		t.Errorf("pulldwn: %q", got)
	}
	if got := Suggest("x", []string{"w", "l"}); got != "" {
		t.Errorf("x: %q (a one-byte word is no typo of another)", got)
	}
	if got := DidYouMean("invv", cells); got != ": did you mean inv?" {
		t.Errorf("DidYouMean: %q", got)
	}
	if got := DidYouMean("zzzzzzzz", cells); got != "" {
		t.Errorf("DidYouMean far: %q", got)
	}
	if d := distance("kitten", "sitting", 10); d != 3 {
		t.Errorf("kitten/sitting: %d, want 3 (the textbook example)", d)
	}
}
