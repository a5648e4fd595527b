package trace

import (
	"bytes"
	"errors"
	"os"
	"strings"
	"testing"

	"railyard/switchsim/diag"
)

// FuzzRead: no input panics; an error is a diag.List of at most a few
// errors, each with a position in the file; a trace that reads holds as
// many actions as its end line says, numbered from 0, the first a start.
func FuzzRead(f *testing.F) {
	for _, p := range []string{"../../cmd/railyard/testdata/trace_plat_v1.trace", "../../cmd/railyard/testdata/trace_plat_ideal.golden"} {
		if b, err := os.ReadFile(p); err == nil {
			f.Add(b)
		}
	}
	f.Add([]byte("railyard-trace 2\n"))
	f.Add([]byte("railyard-trace 2\ndesign a.sw\nend 0\n"))
	f.Add([]byte("railyard-trace 1\naction 0 start\n  rounds 1\n  r 1 y X X strong - -\nend 1\n"))
	f.Add([]byte("railyard-trace 2\ndesign a.sp\ndesign-sha256 " + strings.Repeat("0", 64) + "\nsteps -\nmode ideal\nfull-swing no\ntech vdd=1.8\n" +
		"format netlist\nread top=a power=vp,vq nmos-models=n*\ninputs D \"e\\x20f\"\naction 0 start\n  rounds 0\nend 1\n"))
	f.Fuzz(func(t *testing.T, src []byte) {
		info, acts, err := ReadAll("f.trace", src)
		if err != nil {
			var list diag.List
			if !errors.As(err, &list) || len(list) == 0 || len(list) > maxErrors+2 {
				t.Fatalf("error %T with %d entries: %v", err, len(list), err)
			}
			for _, e := range list {
				if e.Pos.File != "f.trace" || e.Pos.Line < 1 {
					t.Fatalf("error without a position in f.trace: %v", e)
				}
			}
			return
		}
		if info.Actions != len(acts) || len(acts) == 0 || acts[0].Seq != 0 {
			t.Fatalf("read %d actions, end says %d", len(acts), info.Actions)
		}
		for i, a := range acts {
			if a.Seq != i || a.Pos.Line < 1 || !bytes.Contains(src, []byte("action")) {
				t.Fatalf("action %d has number %d at line %d", i, a.Seq, a.Pos.Line)
			}
		}
	})
}
