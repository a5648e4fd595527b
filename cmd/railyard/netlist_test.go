package main

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"railyard/designs"
	"railyard/switchsim/cardfile"
	"railyard/switchsim/netfile"
	"railyard/switchsim/vfile"
)

// A netlist cell behaves as its .sw conversion does: run --json in both
// modes and check --exhaustive give the same output for the netlist demos
// and for their flat .sw conversions (netfile.WriteConverted), the steps
// beside each. The names of these demos are their own spellings, so the
// conversion needs no alias lines.
func TestNetlistBehavesAsConversion(t *testing.T) {
	for _, demo := range []struct {
		file string
		read func(string, []byte) (*netfile.Design, error)
	}{
		{"opsel_latch.sp", func(f string, b []byte) (*netfile.Design, error) { return cardfile.Read(f, b, cardfile.Options{}) }},
		{"imm_select.v", func(f string, b []byte) (*netfile.Design, error) { return vfile.Read(f, b, vfile.Options{}) }},
	} {
		dir := t.TempDir()
		src, _ := designs.FS.ReadFile(demo.file)
		base := strings.TrimSuffix(demo.file, filepath.Ext(demo.file))
		st, _ := designs.FS.ReadFile(base + ".steps")
		netlist := filepath.Join(dir, demo.file)
		os.WriteFile(netlist, src, 0o644)
		os.WriteFile(filepath.Join(dir, base+".steps"), st, 0o644)
		d, err := demo.read(netlist, src)
		if err != nil {
			t.Fatal(err)
		}
		var conv bytes.Buffer
		if err := netfile.WriteConverted(&conv, d); err != nil {
			t.Fatal(err)
		}
		if strings.Contains(conv.String(), "\nalias ") {
			t.Fatalf("%s: the conversion has alias lines; this test expects none:\n%s", demo.file, conv.String())
		}
		swDir := filepath.Join(dir, "sw")
		os.Mkdir(swDir, 0o755)
		sw := filepath.Join(swDir, base+".sw")
		os.WriteFile(sw, conv.Bytes(), 0o644)
		os.WriteFile(filepath.Join(swDir, base+".steps"), st, 0o644)
		for _, args := range [][]string{{"run", "--json"}, {"run", "--json", "--ideal"}, {"check", "--exhaustive"}} {
			c1, out1, _ := call(append([]string{args[0], netlist}, args[1:]...)...)
			c2, out2, _ := call(append([]string{args[0], sw}, args[1:]...)...)
			out1 = strings.ReplaceAll(out1, netlist, "DESIGN")
			out2 = strings.ReplaceAll(out2, sw, "DESIGN")
			if c1 != c2 || out1 != out2 {
				t.Errorf("%s %v: netlist exit %d, conversion exit %d\n--- netlist\n%s\n--- conversion\n%s", demo.file, args, c1, c2, out1, out2)
			}
			if c1 == 2 {
				t.Errorf("%s %v: exit 2", demo.file, args)
			}
		}
	}
}

// Bad netlists exit 2 with FILE:LINE:COL and write nothing.
func TestBadNetlistExit2(t *testing.T) {
	dir := t.TempDir()
	for name, src := range map[string]string{
		"model.sp":  ".model n1 nmosx\n.subckt c a\nm1 a a 0 0 n1\n.ends\n",
		"ends.sp":   ".subckt c a\nm1 a a 0 0 nch\n",
		"terms.sp":  ".subckt c a\nm1 a a 0 nch\n.ends\n",
		"sub.sp":    ".subckt c a\nx1 a zz\n.ends\n",
		"rec.sp":    ".subckt c a\nx1 a c\n.ends\n",
		"inc.sp":    ".include ../../outside.sp\n.subckt c a\nm1 a a 0 0 nch\n.ends\n",
		"binary.sp": "\x00\x01",
		"gate.v":    "module m (input a, output y);\n  not (y, a);\nendmodule\n",
	} {
		p := filepath.Join(dir, name)
		os.WriteFile(p, []byte(src), 0o644)
		trace := filepath.Join(dir, name+".trace")
		code, out, errOut := call("run", p, "--trace", trace)
		if code != 2 || out != "" || !strings.HasPrefix(errOut, p+":") {
			t.Errorf("%s: exit %d, stdout %q, stderr %q", name, code, out, errOut)
		}
		if _, err := os.Stat(trace); err == nil {
			t.Errorf("%s: a trace was written", name)
		}
	}
}
