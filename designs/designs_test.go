package designs

import (
	"sort"
	"testing"
)

func TestList(t *testing.T) {
	for _, e := range List() {
		if e.File != e.Name+".sw" {
			t.Errorf("List holds %s, which is no .sw demo", e.File)
		}
	}
	list := All()
	if !sort.SliceIsSorted(list, func(i, j int) bool { return list[i].Name < list[j].Name }) {
		t.Errorf("not sorted: %v", list)
	}
	seen := map[string]bool{}
	for _, e := range list {
		if e.Desc == "" {
			t.Errorf("%s has no description", e.Name)
		}
		sw, err1 := FS.ReadFile(e.File)
		st, err2 := FS.ReadFile(e.Name + ".steps")
		if err1 != nil || err2 != nil || len(sw) == 0 || len(st) == 0 {
			t.Errorf("%s: source %d bytes, steps %d bytes (%v, %v)", e.Name, len(sw), len(st), err1, err2)
		}
		seen[e.Name] = true
	}
	// The demos the project promises (issue 4), the default among them.
	for _, n := range []string{Default, "mux2_pass", "mux2_tgate", "mux4_tgate", "static_latch", "dynamic_latch",
		"flipflop", "xor_tgate", "lost_level", "strong_keeper", "opsel_latch", "imm_select"} {
		if !seen[n] {
			t.Errorf("no demo %s", n)
		}
	}
}

func TestDescription(t *testing.T) {
	cases := map[string]string{
		"# c\n\ndesign x \"a \\\"b\\\"\"\n": `a "b"`,
		"design x\n":                        "",
		"input a\ndesign x \"late\"\n":      "",
		"designer x \"no\"\n":               "",
	}
	for src, want := range cases {
		if got := description([]byte(src)); got != want {
			t.Errorf("description(%q) = %q, want %q", src, got, want)
		}
	}
}

// A netlist demo's description is its deck's title (the card format's
// first line, or the first comment when the deck starts with one) or a
// module's first comment line.
func TestNetlistDescriptions(t *testing.T) {
	for src, want := range map[string]string{
		"operand latch\n.subckt a x\n":        "operand latch",
		"\n* a comment first\nm1 a b c d n\n": "a comment first",
		".subckt a x\n":                       "",
	} {
		if got := titleLine([]byte(src)); got != want {
			t.Errorf("titleLine(%q) = %q, want %q", src, got, want)
		}
	}
	for src, want := range map[string]string{
		"// a selector\n// more\nmodule m;\n": "a selector",
		"module m; // late\n":                 "",
	} {
		if got := firstComment([]byte(src)); got != want {
			t.Errorf("firstComment(%q) = %q, want %q", src, got, want)
		}
	}
	for _, e := range All() {
		if e.Name == "opsel_latch" && (e.File != "opsel_latch.sp" || e.Desc != "operand-select latch: the register or the immediate operand, held for the ALU") {
			t.Errorf("opsel_latch: %+v", e)
		}
	}
}
