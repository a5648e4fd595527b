package tui

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"railyard/switchsim"
	"railyard/switchsim/netfile"
	"railyard/switchsim/session"
)

// Control codes from a file never reach the terminal (issue 17 item 10):
// a description holding an OSC title sequence (ESC ] 0 ; TITLE BEL) and a
// clear-screen (ESC [ 2 J, ECMA-48 ED), and a step label with both, are
// drawn escaped. With colour off (TestMain's ASCII profile) lipgloss writes
// no sequence of its own, so the frame must hold no ESC byte at all, on
// every view, in the help, the prompts and the status line.
func TestControlCodesAreNeverDrawn(t *testing.T) {
	dir := t.TempDir()
	sw := "design esc \"evil \x1b]0;TITLE\x07 and \x1b[2J here\"\n" +
		"input sel a b\noutput y\nuse inv selinv sel sel_b\n" +
		"tgate ta sel_b sel a y\ntgate tb sel sel_b b y\n"
	st := "apply sel a b\ncheck y\n0 1 0 | 1 # pick \x1b[2J a \x1b]0;T\x07\n1 1 0 | 1 # wrong \x1b[31m\n"
	must := func(err error) {
		t.Helper()
		if err != nil {
			t.Fatal(err)
		}
	}
	must(os.WriteFile(filepath.Join(dir, "esc.sw"), []byte(sw), 0o644))
	must(os.WriteFile(filepath.Join(dir, "esc.steps"), []byte(st), 0o644))
	s, err := session.Open(filepath.Join(dir, "esc.sw"), filepath.Join(dir, "esc.steps"), session.Options{Mode: switchsim.Physical})
	must(err)
	if !strings.Contains(s.Design().Desc, "\x1b") || !strings.Contains(s.Steps().Rows[0].Label, "\x1b") {
		t.Fatal("the fixture lost its escapes on reading: the test would prove nothing")
	}
	checkNoESC(t, s, []string{"n", "n", "v", "up"}, "\\x1b]0;TITLE\\x07", "pick \\x1b[2J")
}

// Names with control codes (a netlist's original spelling, kept by
// Builder.Original and shown by DisplayName) are escaped too.
func TestControlCodesInNamesAreNeverDrawn(t *testing.T) {
	b := switchsim.NewBuilder()
	b.SetName("names", "")
	for _, in := range []string{"a", "en"} {
		if err := b.Input(in); err != nil {
			t.Fatal(err)
		}
	}
	if err := b.NMOS("pass", "en", "a", "y", switchsim.DeviceOpts{}); err != nil {
		t.Fatal(err)
	}
	if err := b.Output("y"); err != nil {
		t.Fatal(err)
	}
	for name, orig := range map[string]string{"y": "y\x1b[2J", "a": "a\x1b]0;T\x07", "pass": "pass\x1b[5m"} {
		if err := b.Original(name, orig); err != nil {
			t.Fatal(err)
		}
	}
	nl, err := b.Compile()
	if err != nil {
		t.Fatal(err)
	}
	d := &netfile.Design{Name: nl.Name, Desc: nl.Desc, Netlist: nl}
	s := session.New(d, "names.sw", nil, session.Options{Mode: switchsim.Physical})
	checkNoESC(t, s, []string{"1", "down", "1", "tab", "enter"}, "y\\x1b[2J", "a\\x1b]0;T\\x07")
}

// checkNoESC drives a model through keys, then draws every view, the help
// and the save prompt at 80x24 and 120x40, and asserts no ESC byte is
// drawn and that the escaped forms of what the files held are.
func checkNoESC(t *testing.T, s *session.Session, keys []string, escaped ...string) {
	t.Helper()
	for _, sz := range [][2]int{{80, 24}, {120, 40}} {
		m := New(s, sz[0], sz[1], Options{NoColor: true})
		press(m, keys...)
		all := ""
		for _, k := range []string{"r", "v", "w", "d", "t", "l", "?", "esc", "s"} {
			press(m, k)
			v := m.View()
			if i := strings.IndexByte(v, 0x1b); i >= 0 {
				t.Fatalf("%dx%d view after %q draws an ESC byte near %q", sz[0], sz[1], k, v[max(i-30, 0):min(i+30, len(v))])
			}
			all += v
		}
		press(m, "esc")
		for _, e := range escaped {
			if !strings.Contains(all, e) {
				t.Errorf("%dx%d: no view shows %q (the escaped form)", sz[0], sz[1], e)
			}
		}
	}
}
