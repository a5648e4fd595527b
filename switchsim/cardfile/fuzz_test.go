package cardfile_test

import (
	"bytes"
	"errors"
	"railyard/switchsim/internal/simtest"
	"strings"
	"testing"

	sw "railyard/switchsim"
	"railyard/switchsim/cardfile"
	"railyard/switchsim/diag"
	"railyard/switchsim/netfile"
	"railyard/switchsim/steps"
)

var fuzzLimits = cardfile.Limits{FileSize: 64 << 10, LineLen: 4 << 10, CardWords: 512, Depth: 8, Devices: 5000, Elements: 10000, Errors: 20, Notes: 20}

func seedCards(f *testing.F) {
	f.Add([]byte(mirrorAdder))
	f.Add([]byte(tgateLatch))
	f.Add([]byte(extractedSelector(".option scale=5n\n", "72", "720", "30", 20)))
	f.Add([]byte(".param w=1u\n.subckt c a y wn={2*w}\nmn y a 0 0 nch w=wn m=2\nr1 a y 1k\nc1 y 0 2f\n.ends\n"))
	f.Add([]byte(".subckt a x\nx1 x b\n.ends\n.subckt b y\nx1 y a\n.ends\n"))
	f.Add([]byte("title\n.model n1 nmos (vto=0.4 u0=400 tox=5n)\nm1 y a 0 0 n1\nva a 0 dc 0\n.end\n"))
}

// FuzzReadCards: no input panics; every error is a diag.List whose entries
// carry a position in the file; a deck that reads converts to .sw, whose
// reading is the same netlist (names, shown names, kinds, resistances,
// technology); and for cells of plain strong transistors a testbench
// written for it reads back as the same cell.
func FuzzReadCards(f *testing.F) {
	seedCards(f)
	f.Fuzz(func(t *testing.T, src []byte) {
		d, err := cardfile.Read("f.sp", src, cardfile.Options{Limits: fuzzLimits})
		if err != nil {
			var l diag.List
			if !errors.As(err, &l) || len(l) == 0 {
				t.Fatalf("error %T: %v", err, err)
			}
			for _, e := range l {
				if e.Pos.File != "f.sp" {
					t.Fatalf("error without a position in f.sp: %v", e)
				}
			}
			return
		}
		nl := d.Netlist
		var buf bytes.Buffer
		if err := netfile.WriteConverted(&buf, d); err != nil {
			t.Fatalf("convert: %v", err)
		}
		// read(convert(x)) is x, shown names included.
		sw, err := netfile.Read("f.sw", buf.Bytes())
		if err != nil {
			t.Fatalf("the conversion does not read: %v\n%s", err, buf.String())
		}
		if diff := simtest.Diff(nl, sw.Netlist, false); len(diff) > 0 {
			t.Fatalf("read(convert(x)) differs:\n%s\n%s", strings.Join(diff, "\n"), buf.String())
		}
		if !plainCell(nl) {
			return
		}
		if len(nl.Inputs()) == 0 || nl.Name == "" || !foldedNames(nl) {
			return
		}
		var in []string
		for _, n := range nl.Inputs() {
			in = append(in, nl.NodeName(n))
		}
		st, err := steps.Read("f.steps", []byte("apply "+strings.Join(in, " ")+"\n"+strings.Repeat("1 ", len(in))+"\n"), nl)
		if err != nil {
			return // an input name the steps format does not take
		}
		buf.Reset()
		if err := cardfile.WriteDeck(&buf, nl, st, cardfile.DeckOptions{}); err != nil {
			return // names that differ only in case
		}
		var ins []string
		for _, n := range nl.Inputs() {
			ins = append(ins, nl.NodeName(n))
		}
		back, err := cardfile.Read("deck.sp", buf.Bytes(), cardfile.Options{Top: nl.Name, Inputs: ins, Limits: fuzzLimits})
		if err != nil {
			t.Fatalf("the deck does not read back: %v\n%s", err, buf.String())
		}
		if diff := simtest.Diff(nl, back.Netlist, true); len(diff) > 0 {
			t.Fatalf("the deck reads back differently:\n%s\n%s", strings.Join(diff, "\n"), buf.String())
		}
	})
}

// foldedNames: every name the deck falls back to (the railyard name, where
// the shown spelling is none the card format can write) is lower case, so
// the format's case folding gives it back; made-up names with upper-case
// escapes (X15, xQ2) read back folded.
func foldedNames(nl *sw.Netlist) bool {
	ok := func(shown, name string) bool {
		writable := shown != "" && shown != "0" && shown != "$" && !strings.ContainsAny(shown, "=(),{}'\";")
		for i := 0; i < len(shown); i++ {
			writable = writable && shown[i] > ' ' && shown[i] != 0x7f
		}
		return (writable && shown != name) || strings.ToLower(name) == name
	}
	for n := 0; n < nl.NumNodes(); n++ {
		if !ok(nl.DisplayName(n), nl.NodeName(n)) {
			return false
		}
	}
	for d := 0; d < nl.NumDevices(); d++ {
		if !ok(nl.DeviceDisplayName(d), nl.Device(d).Name) {
			return false
		}
	}
	return true
}

// plainCell: only strong nMOS and pMOS, every node a device touches, rails
// named as the readers' defaults, and outputs that are not inputs.
func plainCell(nl *sw.Netlist) bool {
	for d := 0; d < nl.NumDevices(); d++ {
		if dv := nl.Device(d); dv.Kind > sw.PMOS || dv.Strength != sw.Strong || dv.Resistive {
			return false
		}
	}
	return true
}
