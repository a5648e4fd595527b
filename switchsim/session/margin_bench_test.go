package session

import (
	"io"
	"strings"
	"testing"

	"railyard/switchsim"
	"railyard/switchsim/netfile"
	"railyard/switchsim/steps"
)

// What margins cost in a report (the README's performance note): the
// chain of chainDesign (21,507 nodes, 43,008 devices) run for 20 one-input
// steps in physical mode, reported as JSON lines, which give every node's
// state and, since margins, its margin. BenchmarkReportMargins/report is
// the whole report; /margins is only the margin of every node at every
// step, the part margins added, on top of /walk, the re-simulation that
// both do; /settle is the session's own run.
//
//	go test ./switchsim/session -run XXX -bench ReportMargins -benchtime 3x
func BenchmarkReportMargins(b *testing.B) {
	d, err := netfile.Read("chain.sw", []byte(chainDesign()))
	if err != nil {
		b.Fatal(err)
	}
	var src strings.Builder
	src.WriteString("apply a\n")
	for i := 0; i < 20; i++ {
		src.WriteString([]string{"0\n", "1\n"}[i%2])
	}
	st, err := steps.Read("chain.steps", []byte(src.String()), d.Netlist)
	if err != nil {
		b.Fatal(err)
	}
	run := func() *Session {
		s := New(d, "chain.sw", st, Options{Mode: switchsim.Physical})
		s.RunToEnd(false)
		return s
	}
	b.Run("settle", func(b *testing.B) {
		for i := 0; i < b.N; i++ {
			run()
		}
	})
	s := run()
	b.Run("report", func(b *testing.B) {
		for i := 0; i < b.N; i++ {
			if err := s.WriteJSON(io.Discard); err != nil {
				b.Fatal(err)
			}
		}
	})
	b.Run("walk", func(b *testing.B) {
		for i := 0; i < b.N; i++ {
			s.WalkStates(func(e *Event, rd Reader) error { return nil })
		}
	})
	b.Run("margins", func(b *testing.B) {
		for i := 0; i < b.N; i++ {
			s.WalkStates(func(e *Event, rd Reader) error {
				for n := 0; n < d.Netlist.NumNodes(); n++ {
					rd.Margin(n)
				}
				return nil
			})
		}
	})
}
