package cardfile

import (
	"os"
	"testing"
)

func TestSmokeTmp(t *testing.T) {
	src, _ := os.ReadFile("/tmp/ct/latch.sp")
	d, err := Read("latch.sp", src, Options{})
	if err != nil {
		t.Fatal(err)
	}
	nl := d.Netlist
	for n := 0; n < nl.NumNodes(); n++ {
		t.Log(nl.NodeName(n), nl.DisplayName(n), nl.NodeKind(n))
	}
	for i := 0; i < nl.NumDevices(); i++ {
		t.Logf("%+v %s", nl.Device(i), nl.DeviceDisplayName(i))
	}
	t.Log(d.Notes)
}
