package netbuild

import "testing"

func TestEscape(t *testing.T) {
	for _, c := range []struct{ in, want string }{
		{"a", "a"}, {"net[3]", "net[3]"}, {"net<3>", "net[3]"}, {"a_193_47#", "a_193_47X23"}, {"vdd!", "vddX21"},
		{"x1/mn3", "x1.mn3"}, {"12", "N12"}, {"x1.00", "x1.N00"}, {"x1/00", "x1.N00"}, {".a", "N.a"}, {"a.", "a.N"},
		{"", "N"}, {"#", "X23"}, {"a b", "aX20b"}, {"[3]", "N[3]"}, {"a..b", "a.N.b"}, {"é", "XC3XA9"},
	} {
		got := Escape(c.in)
		if got != c.want {
			t.Errorf("Escape(%q) = %q, want %q", c.in, got, c.want)
		}
		if !IsName(got) {
			t.Errorf("Escape(%q) = %q is not a railyard name", c.in, got)
		}
	}
}

func TestNamer(t *testing.T) {
	var n Namer
	if a, b, c := n.Name("x"), n.Name("x"), n.Name("x"); a != "x" || b != "xQ2" || c != "xQ3" {
		t.Errorf("Namer gave %s %s %s", a, b, c)
	}
	n.Reserve("yQ2")
	if a, b := n.Name("y"), n.Name("y"); a != "y" || b != "yQ3" {
		t.Errorf("Namer gave %s %s", a, b)
	}
}
