package switchsim_test

import (
	"fmt"
	"strings"
	"testing"

	sw "railyard/switchsim"
	"railyard/switchsim/netfile"
)

// Level warnings are given where a level matters (DEVELOPERS.md (physical mode): nodes that
// gate a device, outputs, checked nodes): the built-in cells, whose inner
// nodes (a series stack's middle, a clocked inverter's) gate nothing, give
// none in any input state reached from any other, in physical mode.
func TestPhysBuiltinCellsNoLevelWarnings(t *testing.T) {
	for cell, ports := range map[string][]string{
		"inv":   {"a", "y"},
		"nand2": {"a", "b", "y"},
		"nor2":  {"a", "b", "y"},
		"tinv":  {"a", "en", "enb", "y"},
	} {
		ins := ports[:len(ports)-1]
		src := fmt.Sprintf("input %s\noutput y\nuse %s g1 %s\n", join(ins), cell, join(ports))
		d, err := netfile.Read(cell+".sw", []byte(src))
		if err != nil {
			t.Fatalf("%s: %v", cell, err)
		}
		nl := d.Netlist
		states := 1 << len(ins)
		for from := 0; from < states; from++ {
			for to := 0; to < states; to++ {
				s := sw.NewSim(nl, sw.Options{Mode: sw.Physical})
				for _, st := range []int{from, to} {
					for i, name := range ins {
						n, _ := nl.Lookup(name)
						s.SetInput(n, sw.Drive(st>>i&1))
					}
					for _, w := range s.Settle().Warnings {
						switch w.Kind {
						case sw.WarnDegraded, sw.WarnLevelLost, sw.WarnPartialOn:
							t.Errorf("%s, inputs %0*b then %0*b: %s", cell, len(ins), from, len(ins), to, s.Message(w))
						}
					}
				}
			}
		}
	}
}

func join(names []string) string {
	out := ""
	for i, n := range names {
		if i > 0 {
			out += " "
		}
		out += n
	}
	return out
}

// Technology values out of their physical ranges are refused by the design
// reader with a position (switchsim/FORMATS.md), naming the key.
func TestTechRangesThroughReader(t *testing.T) {
	for _, c := range []struct{ opt, key string }{
		{"kn=1e-320", "kn"}, {"vdd=1e308", "vdd"}, {"vdd=0.8", "vdd"}, {"cnode=5k", "cnode"}, {"w=0", ""},
	} {
		src := "tech generic " + c.opt + "\ninput a\noutput y\nuse inv i a y\n"
		_, err := netfile.Read("t.sw", []byte(src))
		if c.key == "" { // not a technology key: the reader's own error
			if err == nil {
				t.Errorf("%s accepted", c.opt)
			}
			continue
		}
		if err == nil || !strings.HasPrefix(err.Error(), "t.sw:1:") || !strings.Contains(err.Error(), c.key+"=") {
			t.Errorf("%s: error %v, want one at t.sw:1 naming %s", c.opt, err, c.key)
		}
	}
}
