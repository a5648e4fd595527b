package vfile

import "testing"

func TestSmokeTmp(t *testing.T) {
	src := []byte(`// tgate selector
module sel2 (input a, input b, input s, output y);
  supply1 vdd; supply0 gnd;
  wire sb;
  pmos (sb, vdd, s);
  nmos (sb, gnd, s);
  cmos ta (y, a, sb, s);
  cmos tb (y, b, s, sb);
endmodule
`)
	d, err := Read("sel.v", src, Options{})
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
	t.Log(d.Notes, nl.Inputs(), nl.Outputs())
}
