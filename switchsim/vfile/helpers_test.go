package vfile_test

import (
	"fmt"
	"strings"
	"testing"

	sw "railyard/switchsim"
	"railyard/switchsim/netfile"
	"railyard/switchsim/vfile"
)

func read(t *testing.T, src string, opt vfile.Options) *netfile.Design {
	t.Helper()
	d, err := vfile.Read("t.v", []byte(src), opt)
	if err != nil {
		t.Fatalf("read: %v", err)
	}
	return d
}

func readErr(t *testing.T, src string) string {
	t.Helper()
	_, err := vfile.Read("t.v", []byte(src), vfile.Options{})
	if err == nil {
		t.Fatalf("read succeeded; want errors:\n%s", src)
	}
	return err.Error()
}

func notes(d *netfile.Design) string {
	var b strings.Builder
	for _, n := range d.Notes {
		b.WriteString(n.Error() + "\n")
	}
	return b.String()
}

type sim struct {
	t  *testing.T
	s  *sw.Sim
	nl *sw.Netlist
}

func newSim(t *testing.T, nl *sw.Netlist, mode sw.Mode) *sim {
	s := &sim{t, sw.NewSim(nl, sw.Options{Mode: mode}), nl}
	s.s.Settle()
	return s
}

func (s *sim) apply(assign string) {
	s.t.Helper()
	for _, f := range strings.Fields(assign) {
		name, d, _ := strings.Cut(f, "=")
		n, ok := s.nl.Lookup(name)
		dr, ok2 := sw.ParseDrive(d)
		if !ok || !ok2 {
			s.t.Fatalf("bad assignment %q", f)
		}
		if err := s.s.SetInput(n, dr); err != nil {
			s.t.Fatalf("%s: %v", name, err)
		}
	}
	s.s.Settle()
}

func (s *sim) node(name string) sw.NodeState {
	s.t.Helper()
	n, ok := s.nl.Lookup(name)
	if !ok {
		s.t.Fatalf("no node %s", name)
	}
	return s.s.Node(n)
}

func device(t *testing.T, nl *sw.Netlist, name string) sw.Device {
	t.Helper()
	d, ok := nl.LookupDevice(name)
	if !ok {
		var names []string
		for i := 0; i < nl.NumDevices(); i++ {
			names = append(names, nl.Device(i).Name)
		}
		t.Fatalf("no device %s (devices: %s)", name, strings.Join(names, " "))
	}
	return nl.Device(d)
}

var modes = []sw.Mode{sw.Ideal, sw.Physical}

var _ = fmt.Sprintf
