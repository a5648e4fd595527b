package vfile_test

import (
	"strings"

	"bytes"
	"errors"
	"railyard/switchsim/internal/simtest"
	"testing"

	"railyard/switchsim/diag"
	"railyard/switchsim/netfile"
	"railyard/switchsim/vfile"
)

var fuzzLimits = vfile.Limits{FileSize: 64 << 10, Tokens: 1 << 16, Depth: 8, Devices: 5000, VectorBits: 64, Terms: 256, Errors: 20, Notes: 20}

// FuzzReadModule: no input panics; every error is a diag.List with
// positions in the file; a module that reads converts to .sw.
func FuzzReadModule(f *testing.F) {
	f.Add([]byte(latchModule))
	f.Add([]byte(selectorModule))
	f.Add([]byte("module m (input a, output y);\n  rtran (a, y);\n  pullup (weak1) (y);\n  trireg (small) s;\n  tranif0 #(1:2:3) (y, s, a);\nendmodule\n"))
	f.Add([]byte("`timescale 1ns/1ps\nmodule a (input [3:0] x, output y); b u (.x(x[2]), .y(y)); endmodule\nmodule b (input x, output y); nmos (y, 1'b0, x); endmodule\n"))
	f.Fuzz(func(t *testing.T, src []byte) {
		d, err := vfile.Read("f.v", src, vfile.Options{Limits: fuzzLimits})
		if err != nil {
			var l diag.List
			if !errors.As(err, &l) || len(l) == 0 {
				t.Fatalf("error %T: %v", err, err)
			}
			for _, e := range l {
				if e.Pos.File != "f.v" {
					t.Fatalf("error without a position in f.v: %v", e)
				}
			}
			return
		}
		var buf bytes.Buffer
		if err := netfile.WriteConverted(&buf, d); err != nil {
			t.Fatalf("convert: %v", err)
		}
		// read(convert(x)) is x, shown names included.
		back, err := netfile.Read("f.sw", buf.Bytes())
		if err != nil {
			t.Fatalf("the conversion does not read: %v\n%s", err, buf.String())
		}
		if diff := simtest.Diff(d.Netlist, back.Netlist, false); len(diff) > 0 {
			t.Fatalf("read(convert(x)) differs:\n%s\n%s", strings.Join(diff, "\n"), buf.String())
		}
	})
}
