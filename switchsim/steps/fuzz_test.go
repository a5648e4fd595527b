package steps_test

import (
	"slices"
	"testing"

	"railyard/designs"
	"railyard/switchsim/diag"
	"railyard/switchsim/netfile"
	"railyard/switchsim/steps"
)

// FuzzRead reads arbitrary steps against the static latch, with names
// exact and in any case: no panic, a file that reads has rows of the right
// widths, and one that reads with exact names reads the same in any case.
func FuzzRead(f *testing.F) {
	for _, e := range designs.List() {
		st, _ := designs.FS.ReadFile(e.Name + ".steps")
		f.Add(st)
	}
	f.Add([]byte("apply clk d\ncheck s q\n1 0 | 0 0 # x\n0|L -\n"))
	f.Add([]byte("apply clk d\ncheck s q\n1 0 | 0 0 | 1\nX Z\n0 1 0 | - - -\n"))
	sw, err := designs.FS.ReadFile("static_latch.sw")
	if err != nil {
		f.Fatal(err)
	}
	d, err := netfile.Read("static_latch.sw", sw)
	if err != nil {
		f.Fatal(err)
	}
	f.Add([]byte("apply CLK D\ncheck S q\n1 0 | 0 0\n"))
	f.Fuzz(func(t *testing.T, src []byte) {
		folded, ferr := steps.ReadWith("f.steps", src, d.Netlist, steps.Options{Limits: steps.Limits{FileSize: 64 << 10}, FoldCase: true})
		if ferr != nil {
			if _, ok := ferr.(diag.List); !ok {
				t.Fatalf("error %T: %v", ferr, ferr)
			}
		}
		st, err := steps.ReadLimits("f.steps", src, d.Netlist, steps.Limits{FileSize: 64 << 10})
		if err == nil && (ferr != nil || !slices.Equal(folded.Apply, st.Apply) || !slices.Equal(folded.Check, st.Check)) {
			t.Fatalf("exact names read (%v %v), in any case they read otherwise: %v", st.Apply, st.Check, ferr)
		}
		if err != nil {
			if _, ok := err.(diag.List); !ok {
				t.Fatalf("error %T: %v", err, err)
			}
			return
		}
		for _, r := range st.Rows {
			if len(r.Drives) != len(st.Apply) || (len(st.Check) > 0 && len(r.Wants) != len(st.Check)) {
				t.Fatalf("row %d: %d drives %d wants for %d/%d columns", r.Line, len(r.Drives), len(r.Wants), len(st.Apply), len(st.Check))
			}
		}
	})
}
