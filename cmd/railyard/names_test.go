package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// A netlist's own spelling of a name ($ and <> are common in extracted and
// schematic netlists) is what a person reads everywhere: the text reports of
// run and check, their JSON, and the sequences check saves. railyard's
// internal spelling (the name made safe for the .sw format) never shows.
func TestNetlistNamesAsWritten(t *testing.T) {
	dir := t.TempDir()
	sp := filepath.Join(dir, "pz.sp")
	if err := os.WriteFile(sp, []byte(`* a degraded high through a bare nMOS, on a node named as a schematic tool names it
.subckt pz a en s$1 vdd gnd
M0 s$1 en a gnd nmos w=0.5u l=0.15u
Mi net<3> s$1 gnd gnd nmos w=0.5u l=0.15u
Mj net<3> s$1 vdd vdd pmos w=1u l=0.15u
.ends
`), 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(dir, "pz.steps"), []byte("apply a en\ncheck s$1\n1 1 | 1\n1 0 | 1\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	saved := filepath.Join(dir, "found")
	runs := [][]string{
		{"run", sp},
		{"run", sp, "--json"},
		{"check", sp, "--exhaustive", "--save-steps", saved},
		{"check", sp, "--exhaustive", "--json"},
	}
	for _, args := range runs {
		_, out, errs := call(args...)
		all := out + errs
		if !strings.Contains(all, "s$1") {
			t.Errorf("%v: the node's own name s$1 is not in the output:\n%s", args, all)
		}
		for _, internal := range []string{"sX24", "net[3]"} {
			if strings.Contains(all, internal) {
				t.Errorf("%v: railyard's internal spelling %q shows:\n%s", args, internal, all)
			}
		}
	}
	files, _ := filepath.Glob(filepath.Join(saved, "*.steps"))
	if len(files) == 0 {
		t.Fatal("check --save-steps wrote no sequence")
	}
	for _, f := range files {
		if code, out, errs := call("run", sp, "--steps", f); code == 2 {
			t.Errorf("a saved sequence does not read back: %s\n%s%s", f, out, errs)
		}
	}
}
