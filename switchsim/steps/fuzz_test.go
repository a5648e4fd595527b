package steps_test

import (
	"testing"

	"railyard/designs"
	"railyard/switchsim/diag"
	"railyard/switchsim/netfile"
	"railyard/switchsim/steps"
)

// FuzzRead reads arbitrary steps against the static latch: no panic, and
// a file that reads has rows of the right widths.
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
	f.Fuzz(func(t *testing.T, src []byte) {
		st, err := steps.ReadLimits("f.steps", src, d.Netlist, steps.Limits{FileSize: 64 << 10})
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
