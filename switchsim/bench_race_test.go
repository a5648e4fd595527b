package switchsim_test

// Benchmarks of race analysis and case analysis: what they cost against
// the plain unit-delay settle of the same step. Run with
//
//	go test -run '^$' -bench 'RaceAnalysis|CaseAnalysis' ./switchsim/
//
// and compare the plain and analysed lines of one run.

import (
	"path/filepath"
	"strings"
	"testing"

	sw "railyard/switchsim"
	"railyard/switchsim/gen"
)

// BenchmarkRaceAnalysis: one step with and without race analysis.
//   - mux: a 4096:1 transmission-gate tree whose two lowest select lines
//     change together (a multi-input step: analysed when needed);
//   - invchain: 10,000 inverters, the input toggled (analysed only when
//     asked, RacesEveryStep; glitches: phase A alone, RacesGlitches).
func BenchmarkRaceAnalysis(b *testing.B) {
	for _, c := range []struct {
		name  string
		races sw.RaceMode
	}{{"plain", sw.RacesOff}, {"analysed", sw.RacesWhenNeeded}} {
		b.Run("mux4096/"+c.name, func(b *testing.B) {
			nl, err := gen.MuxTree(12).Compile()
			if err != nil {
				b.Fatal(err)
			}
			s := sw.NewSim(nl, sw.Options{Mode: sw.Ideal, Races: c.races})
			for i := 0; i < 4096; i++ {
				n, _ := nl.Lookup("d" + itoa(i))
				s.SetInput(n, sw.Drive(i%3%2))
			}
			var sel [12]int
			for l := range sel {
				sel[l], _ = nl.Lookup("s" + itoa(l))
				s.SetInput(sel[l], sw.Drive0)
			}
			s.Settle()
			step := func(i int) *sw.Result {
				s.SetInput(sel[0], sw.Drive(i%2)) // both lines toggle every step
				s.SetInput(sel[1], sw.Drive(i%2))
				return s.Settle()
			}
			for i := 0; i < 4; i++ {
				step(i)
			}
			if r := step(4); r.Analysis.Ran != (c.races != sw.RacesOff) {
				b.Fatalf("analysis ran %v", r.Analysis.Ran)
			}
			b.ReportAllocs()
			b.ResetTimer()
			for i := 0; i < b.N; i++ {
				step(i + 1)
			}
		})
	}
	for _, c := range []struct {
		name  string
		races sw.RaceMode
	}{{"plain", sw.RacesOff}, {"glitches", sw.RacesGlitches}, {"analysed", sw.RacesEveryStep}} {
		b.Run("invchain10k/"+c.name, func(b *testing.B) {
			nl, err := gen.InverterChain(10000).Compile()
			if err != nil {
				b.Fatal(err)
			}
			s := sw.NewSim(nl, sw.Options{Mode: sw.Ideal, Races: c.races})
			in, _ := nl.Lookup("in")
			s.SetInput(in, sw.Drive0)
			s.Settle()
			b.ReportAllocs()
			b.ResetTimer()
			for i := 0; i < b.N; i++ {
				s.SetInput(in, sw.Drive((i+1)%2))
				s.Settle()
			}
		})
	}
}

func itoa(i int) string {
	if i == 0 {
		return "0"
	}
	var d []byte
	for ; i > 0; i /= 10 {
		d = append([]byte{byte('0' + i%10)}, d...)
	}
	return string(d)
}

// BenchmarkCaseAnalysis: the gallery's cells (and the cross-coupled full
// adder, which needs case analysis from the start), each op the first
// settle with every input 0 followed by one step per input, with case
// analysis at its default bound and off, in physical mode.
func BenchmarkCaseAnalysis(b *testing.B) {
	files, _ := filepath.Glob("testdata/gallery/*.sw")
	files = append(files, "testdata/fa_xcouple.sw")
	for _, f := range files {
		nl := readGallery(b, f)
		name := strings.TrimSuffix(filepath.Base(f), ".sw")
		for _, c := range []struct {
			name   string
			splits int
		}{{"on", 0}, {"off", -1}} {
			b.Run(name+"/"+c.name, func(b *testing.B) {
				ins := nl.Inputs()
				splits := 0
				b.ReportAllocs()
				for i := 0; i < b.N; i++ {
					s := sw.NewSim(nl, sw.Options{Mode: sw.Physical, CaseSplits: c.splits})
					for _, n := range ins {
						s.SetInput(n, sw.Drive0)
					}
					splits += s.Settle().Analysis.Splits
					for _, n := range ins {
						s.SetInput(n, sw.Drive1)
						splits += s.Settle().Analysis.Splits
					}
				}
				b.ReportMetric(float64(splits)/float64(b.N), "splits/op")
			})
		}
	}
}
