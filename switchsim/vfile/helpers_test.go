package vfile_test

import (
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

var modes = []sw.Mode{sw.Ideal, sw.Physical}

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
