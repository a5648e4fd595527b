package netfile_test

import (
	"fmt"
	"runtime"
	"strings"
	"testing"

	"railyard/switchsim/netfile"
)

// allocated returns the bytes allocated while fn ran (runtime.MemStats
// TotalAlloc: every allocation counted, whatever the collector did).
func allocated(fn func()) uint64 {
	var before, after runtime.MemStats
	runtime.GC()
	runtime.ReadMemStats(&before)
	fn()
	runtime.ReadMemStats(&after)
	return after.TotalAlloc - before.TotalAlloc
}

// chain writes n cells, each using the next, the deepest (c[n-1], a pull)
// defined first when deepestFirst, and a top-level use of c0.
func chain(n int, deepestFirst bool) string {
	var b strings.Builder
	cell := func(i int) {
		if i == n-1 {
			fmt.Fprintf(&b, "cell c%d A\n  pullup p A\nend\n", i)
		} else {
			fmt.Fprintf(&b, "cell c%d A\n  use c%d u A\nend\n", i, i+1)
		}
	}
	if deepestFirst {
		for i := n - 1; i >= 0; i-- {
			cell(i)
		}
	} else {
		for i := 0; i < n; i++ {
			cell(i)
		}
	}
	b.WriteString("input a\nuse c0 top a\n")
	return b.String()
}

// The nesting limit holds whatever order the cells are defined in (issue
// 17 item 1: defined deepest first, 5,000 levels took 138 MB and 40,000 ran
// out of memory), and the check is linear in the file: eight times the
// levels allocate at most about eight times the memory.
func TestDepthLimitAnyOrder(t *testing.T) {
	for _, deepest := range []bool{false, true} {
		_, err := netfile.Read("t.sw", []byte(chain(100, deepest)))
		if err == nil || !strings.Contains(err.Error(), "instances nest more than 64 deep (c0 -> c1 -> c2 -> ... -> c62 -> c63 -> c64)") {
			t.Errorf("deepest first %v: %v", deepest, err)
		}
		if _, err := netfile.Read("t.sw", []byte(chain(64, deepest))); err != nil {
			t.Errorf("64 levels, deepest first %v: %v", deepest, err)
		}
	}
	var err5, err40 error
	src5, src40 := []byte(chain(5000, true)), []byte(chain(40000, true))
	a5 := allocated(func() { _, err5 = netfile.Read("t.sw", src5) })
	a40 := allocated(func() { _, err40 = netfile.Read("t.sw", src40) })
	for _, err := range []error{err5, err40} {
		if err == nil || !strings.Contains(err.Error(), "instances nest more than 64 deep") {
			t.Fatalf("want the depth error, got %v", err)
		}
	}
	t.Logf("5,000 levels (%d KB): %.1f MB allocated; 40,000 levels (%d KB): %.1f MB", len(src5)>>10, float64(a5)/1e6, len(src40)>>10, float64(a40)/1e6)
	if a40 > 128<<20 {
		t.Errorf("40,000 levels allocate %d MB, want under 128 MB", a40>>20)
	}
	if float64(a40) > 12*float64(a5) {
		t.Errorf("8 times the levels allocate %.1f times the memory: not linear", float64(a40)/float64(a5))
	}
}

// Flattening is linear in the flattened size: a tree of instances with 16
// times the devices allocates about 16 times the memory.
func TestFlattenLinear(t *testing.T) {
	tree := func(levels int) []byte {
		var b strings.Builder
		b.WriteString("cell c0 A Y\n  nmos n A Y gnd\nend\n")
		for i := 1; i <= levels; i++ {
			fmt.Fprintf(&b, "cell c%d A Y\n  use c%d x A m\n  use c%d y m Y\nend\n", i, i-1, i-1)
		}
		fmt.Fprintf(&b, "input a\noutput y\nuse c%d top a y\n", levels)
		return []byte(b.String())
	}
	small, big := tree(10), tree(14)
	var ds, db *netfile.Design
	as := allocated(func() { ds, _ = netfile.Read("t.sw", small) })
	ab := allocated(func() { db, _ = netfile.Read("t.sw", big) })
	if ds == nil || db == nil || ds.Netlist.NumDevices() != 1<<10 || db.Netlist.NumDevices() != 1<<14 {
		t.Fatalf("trees did not read")
	}
	t.Logf("1,024 devices: %.1f MB; 16,384 devices: %.1f MB", float64(as)/1e6, float64(ab)/1e6)
	if float64(ab) > 24*float64(as) {
		t.Errorf("16 times the devices allocate %.1f times the memory", float64(ab)/float64(as))
	}
}

// Long names (issue 17 item 2): each level using the next twice with
// 60,000-byte instance names, 1.3 MB of text for 2,048 devices, took 3.4 GB.
// A name is at most 1 KiB; the flattened names of a whole design at most
// 256 MiB, which names within the bound can still pass when nested.
func TestNameBounds(t *testing.T) {
	nested := func(levels, nameLen int) []byte {
		var b strings.Builder
		b.WriteString("cell c0 A\n  pullup p A\nend\n")
		for i := 1; i <= levels; i++ {
			n1 := "x" + strings.Repeat("a", nameLen-1)
			n2 := "y" + strings.Repeat("a", nameLen-1)
			fmt.Fprintf(&b, "cell c%d A\n  use c%d %s A\n  use c%d %s A\nend\n", i, i-1, n1, i-1, n2)
		}
		fmt.Fprintf(&b, "input a\nuse c%d top a\n", levels)
		return []byte(b.String())
	}
	src := nested(11, 60000)
	var err error
	a := allocated(func() { _, err = netfile.Read("t.sw", src) })
	if err == nil || !strings.Contains(err.Error(), "t.sw:5:10: instance name is longer than the limit of 1024 bytes") {
		t.Errorf("60,000-byte names: %v", firstLines(err))
	}
	t.Logf("%d KB of 60,000-byte names: %.1f MB allocated", len(src)>>10, float64(a)/1e6)
	if a > 64<<20 {
		t.Errorf("refusing long names allocated %d MB", a>>20)
	}

	// Names of 1,000 bytes, 20 levels: a million devices (within the
	// device limit) whose names would take 20 GB.
	src = nested(20, 1000)
	a = allocated(func() { _, err = netfile.Read("t.sw", src) })
	if err == nil || !strings.Contains(err.Error(), "node and device names, once its cells are expanded, take more than the limit of 256 MiB") {
		t.Errorf("nested 1,000-byte names: %v", firstLines(err))
	}
	if a > 64<<20 {
		t.Errorf("refusing nested names allocated %d MB", a>>20)
	}

	// The count, by hand: use inv u a y names devices u.p and u.n (6 bytes)
	// and nodes a and y (2 bytes): 8 bytes pass a limit of 8, not of 7.
	lim := netfile.DefaultLimits()
	lim.NameBytes = 8
	if _, err := netfile.ReadLimits("t.sw", []byte("input a\nuse inv u a y\n"), lim); err != nil {
		t.Errorf("8 bytes of names within 8: %v", err)
	}
	lim.NameBytes = 7
	wantErrors(t, "input a\nuse inv u a y\n", &lim, "2:1: the design's node and device names")
}

func firstLines(err error) string {
	if err == nil {
		return "no error"
	}
	lines := strings.SplitN(err.Error(), "\n", 4)
	if len(lines) > 3 {
		lines = lines[:3]
	}
	return strings.Join(lines, "\n")
}

// A design with no devices is an error (issue 17 item 9); one with a
// device is not, and a design whose devices all had errors is not told it
// has none.
func TestEmptyDesign(t *testing.T) {
	for _, src := range []string{"", "# only a comment\n", "design x\ninput a\n", "cell c A\n  pullup p A\nend\n"} {
		wantErrors(t, src, nil, "1: the design has no devices")
	}
	mustRead(t, "input a\npullup p a\n")
	list := wantErrors(t, "input a\nnmos n a\n", nil, "2:1: wrong number of terminals")
	if len(list) != 1 {
		t.Errorf("want only the device's error, got:\n%v", list)
	}
}
