package tui

import (
	"io"
	"sync"
	"sync/atomic"
	"testing"
	"time"

	tea "github.com/charmbracelet/bubbletea"
	"github.com/charmbracelet/lipgloss"
	"github.com/muesli/termenv"

	"railyard/switchsim"
	"railyard/switchsim/gen"
	"railyard/switchsim/netfile"
	"railyard/switchsim/session"
)

// bigSession is a 200-node datapath block (operand selector slices with a
// pipeline flip-flop each) from switchsim/gen.
func bigSession(tb testing.TB) *session.Session {
	tb.Helper()
	nl, err := gen.Sized(200).Compile()
	if err != nil {
		tb.Fatal(err)
	}
	if nl.NumNodes() != 200 {
		tb.Fatalf("gen.Sized(200) has %d nodes", nl.NumNodes())
	}
	d := &netfile.Design{Name: nl.Name, Desc: nl.Desc, Netlist: nl}
	s := session.New(d, "gen:sized200", nil, session.Options{})
	// definite operands, so that a select line moves every slice
	for n := 0; n < nl.NumNodes(); n++ {
		name := nl.NodeName(n)
		if nl.NodeKind(n) != switchsim.Input {
			continue
		}
		dr := switchsim.Drive0
		switch name[0] {
		case 'a', 'c':
			dr = switchsim.Drive1
		}
		if name == "clkb" {
			dr = switchsim.Drive1
		}
		if _, err := s.SetInput(n, dr); err != nil {
			tb.Fatal(err)
		}
	}
	return s
}

// BenchmarkView draws the whole 120x40 screen of a 200-node design, in
// colour (256 colours), on each view.
func BenchmarkView(b *testing.B) {
	s := bigSession(b)
	r := lipgloss.NewRenderer(io.Discard)
	r.SetColorProfile(termenv.ANSI256) // explicit: a renderer on a non-terminal detects no colour
	m := New(s, 120, 40, Options{Renderer: r})
	press(m, "space", "tab", "down", "down", "m")
	for _, v := range []struct {
		name, key string
	}{{"rounds", "r"}, {"why", "w"}, {"devices", "d"}, {"timeline", "t"}} {
		press(m, v.key)
		b.Run(v.name, func(b *testing.B) {
			b.ReportAllocs()
			for i := 0; i < b.N; i++ {
				_ = m.View()
			}
		})
	}
}

// countingWriter counts the bytes the program writes to the terminal.
type countingWriter struct{ n atomic.Int64 }

func (c *countingWriter) Write(p []byte) (int, error) { c.n.Add(int64(len(p))); return len(p), nil }

// BenchmarkToggleBytes measures the bytes written to the terminal for one
// toggle of an input of the 200-node design at 120x40, in 256 colours,
// through bubbletea's renderer (which repaints only the lines that changed).
func BenchmarkToggleBytes(b *testing.B) {
	s := bigSession(b)
	out := &countingWriter{}
	r := lipgloss.NewRenderer(io.Discard)
	r.SetColorProfile(termenv.ANSI256) // explicit: a renderer on a non-terminal detects no colour
	in, feed := io.Pipe()
	p := tea.NewProgram(New(s, 120, 40, Options{Renderer: r}), tea.WithInput(in), tea.WithOutput(out), tea.WithoutSignals())
	var wg sync.WaitGroup
	wg.Add(1)
	go func() { defer wg.Done(); p.Run() }()
	settle := func() { time.Sleep(60 * time.Millisecond) } // a few frames at 60 fps
	settle()
	var total int64
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		before := out.n.Load()
		p.Send(keyMsg("space"))
		settle()
		total += out.n.Load() - before
	}
	b.StopTimer()
	b.ReportMetric(float64(total)/float64(b.N), "bytes/toggle")
	p.Quit()
	feed.Close()
	wg.Wait()
	if got := len(s.History()); got < 1+4*0+b.N { // the sets of bigSession plus one per toggle
		b.Fatalf("the toggles did not reach the session: %d actions", got)
	}
	if last := s.Last(); len(last.Changes) < 10 {
		b.Fatalf("a toggle of sel0 changed only %d nodes: the benchmark measures too little", len(last.Changes))
	}
}
