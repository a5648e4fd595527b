package designs

import (
	"sort"
	"testing"
)

func TestList(t *testing.T) {
	list := List()
	if !sort.SliceIsSorted(list, func(i, j int) bool { return list[i].Name < list[j].Name }) {
		t.Errorf("not sorted: %v", list)
	}
	seen := map[string]bool{}
	for _, e := range list {
		if e.Desc == "" {
			t.Errorf("%s has no description", e.Name)
		}
		sw, err1 := FS.ReadFile(e.Name + ".sw")
		st, err2 := FS.ReadFile(e.Name + ".steps")
		if err1 != nil || err2 != nil || len(sw) == 0 || len(st) == 0 {
			t.Errorf("%s: source %d bytes, steps %d bytes (%v, %v)", e.Name, len(sw), len(st), err1, err2)
		}
		seen[e.Name] = true
	}
	// The demos the project promises (issue 4), the default among them.
	for _, n := range []string{Default, "mux2_pass", "mux2_tgate", "mux4_tgate", "static_latch", "dynamic_latch",
		"flipflop", "xor_tgate", "lost_level", "strong_keeper"} {
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
