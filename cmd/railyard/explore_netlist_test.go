package main

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	tea "github.com/charmbracelet/bubbletea"

	"railyard/switchsim"
	"railyard/switchsim/load"
	"railyard/switchsim/session"
	"railyard/tui"
)

// press gives the explorer a key, then what its commands send (the
// panels' intents), as the program would.
func press(m tea.Model, key string) tea.Model {
	var cmd tea.Cmd
	m, cmd = m.Update(tea.KeyMsg{Type: tea.KeyRunes, Runes: []rune(key)})
	for pending := []tea.Cmd{cmd}; len(pending) > 0; {
		c := pending[0]
		pending = pending[1:]
		if c == nil {
			continue
		}
		switch msg := c().(type) {
		case nil, tea.QuitMsg:
		case tea.BatchMsg:
			pending = append(pending, msg...)
		default:
			m, cmd = m.Update(msg)
			pending = append(pending, cmd)
		}
	}
	return m
}

// A netlist cell opened in the explorer shows what its conversion shows:
// after every step, and in the why, devices and rounds views, the frames
// of the netlist and of what `railyard convert` made of it are the same
// (the names shown are the netlist's spellings in both, through the
// conversion's alias lines), at a wide and a narrow size.
func TestExploreNetlistAsConversion(t *testing.T) {
	for _, c := range netlistCells(t) {
		for _, size := range [][2]int{{120, 40}, {80, 24}} {
			// The same file names in two folders, so that the frames may
			// name them.
			dirN, dirS := filepath.Join(t.TempDir(), "cell"), filepath.Join(t.TempDir(), "cell")
			check(t, os.Mkdir(dirN, 0o755))
			check(t, os.Mkdir(dirS, 0o755))
			netlist := c.put(t, dirN)
			sw := convertCell(t, c, netlist, dirS)
			open := func(p string) tea.Model {
				s, err := session.OpenFrom(load.Host(load.Options{}), p, "", session.Options{Mode: switchsim.Physical})
				if err != nil {
					t.Fatal(err)
				}
				return tui.New(s, size[0], size[1], tui.Options{NoColor: true})
			}
			mn, ms := open(netlist), open(sw)
			frame := func(m tea.Model, dir, file string) string {
				v := strings.ReplaceAll(m.View(), dir, "DIR")
				return strings.ReplaceAll(v, file, "DESIGN")
			}
			steps := strings.Count(string(c.steps), "|")
			for i := 0; i <= steps; i++ {
				for _, view := range []string{"", "w", "d", "r"} {
					if view != "" {
						mn, ms = press(mn, view), press(ms, view)
					}
					fn, fs := frame(mn, dirN, c.file), frame(ms, dirS, c.base()+".sw")
					if fn != fs {
						t.Fatalf("%s at %dx%d, step %d, view %q: the frames differ\n--- netlist\n%s\n--- conversion\n%s", c.file, size[0], size[1], i, view, fn, fs)
					}
					if view != "" {
						mn, ms = press(mn, view), press(ms, view) // close it again
					}
				}
				fn := frame(mn, dirN, c.file)
				if i > 0 && !strings.Contains(fn, fmt.Sprintf("step %d/%d", i, steps)) {
					t.Errorf("%s: after %d steps the frame does not say step %d/%d:\n%s", c.file, i, i, steps, fn)
				}
				if c.file == "oplat.sp" && (!strings.Contains(fn, "Q<0>") || !strings.Contains(fn, "s$1")) {
					t.Errorf("%s: the frame does not show the netlist's spellings Q<0> and s$1:\n%s", c.file, fn)
				}
				mn, ms = press(mn, "n"), press(ms, "n")
			}
		}
	}
}
