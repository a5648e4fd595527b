package timeline

import (
	"strings"
	"testing"

	"github.com/charmbracelet/x/ansi"

	"railyard/switchsim"
	"railyard/tui/panel"
	"railyard/tui/theme"
)

func TestWaveform(t *testing.T) {
	b := switchsim.NewBuilder()
	if err := b.Input("a"); err != nil {
		t.Fatal(err)
	}
	if err := b.NMOS("t", "a", "a", "y", switchsim.DeviceOpts{}); err != nil {
		t.Fatal(err)
	}
	nl, err := b.Compile()
	if err != nil {
		t.Fatal(err)
	}
	a, _ := nl.Lookup("a")
	th := theme.New(nil, true, true)
	m := New(panel.NewNames(nl), DefaultStyles(th))
	m.SetSize(40, 8)
	col := func(s switchsim.State) Column {
		return Column{Mark: "+", States: []switchsim.State{s}} // one per watched node
	}
	m.SetColumns([]Column{col(switchsim.StateX), col(switchsim.State0), col(switchsim.State1), col(switchsim.StateZ), {Mark: "+"}})
	m.SetWatched([]int{a})
	var row string
	for _, l := range strings.Split(ansi.Strip(m.View()), "\n") {
		if strings.HasPrefix(strings.TrimSpace(l), "a ") {
			row = l
		}
	}
	// X, 0, 1, Z two cells each in the ASCII glyphs, then a column without states: blank
	if !strings.Contains(row, "xx__##--   ?") {
		t.Fatalf("waveform row %q, want xx__##-- then a blank column (two cells) and ?", row)
	}
}
