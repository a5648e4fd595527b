package main

import (
	"bytes"
	"os"
	"path/filepath"
	"reflect"
	"regexp"
	"strings"
	"testing"

	"railyard/designs"
	"railyard/switchsim"
	"railyard/switchsim/load"
	"railyard/switchsim/netfile"
)

// netlistCell is a netlist a test opens, copied into a folder of its own
// with its steps beside it.
type netlistCell struct {
	file  string // the netlist's file name
	src   []byte
	steps []byte
	extra map[string][]byte // files it includes
}

// netlistCells are the netlists the command tests open: the two demos,
// and the fixtures of testdata/netlist: a card latch with names the .sw
// format spells otherwise (Q<0>, s$1, clk_b#), its models in an included
// file, a resistor between nodes and one to ground, and C cards; and an
// IEEE 1364 latch of resistive switches (rcmos, rtran), a tran, a weak
// pullup, a trireg and an escaped identifier.
func netlistCells(t *testing.T) []netlistCell {
	t.Helper()
	read := func(fsys func(string) ([]byte, error), name string) []byte {
		b, err := fsys(name)
		if err != nil {
			t.Fatal(err)
		}
		return b
	}
	td := func(n string) ([]byte, error) { return os.ReadFile(filepath.Join("testdata", "netlist", n)) }
	return []netlistCell{
		{file: "opsel_latch.sp", src: read(designs.FS.ReadFile, "opsel_latch.sp"), steps: read(designs.FS.ReadFile, "opsel_latch.steps")},
		{file: "imm_select.v", src: read(designs.FS.ReadFile, "imm_select.v"), steps: read(designs.FS.ReadFile, "imm_select.steps")},
		{file: "oplat.sp", src: read(td, "oplat.sp"), steps: read(td, "oplat.steps"),
			extra: map[string][]byte{"oplat_models.inc": read(td, "oplat_models.inc")}},
		{file: "rlatch.v", src: read(td, "rlatch.v"), steps: read(td, "rlatch.steps")},
	}
}

func (c netlistCell) base() string { return strings.TrimSuffix(c.file, filepath.Ext(c.file)) }

// put writes the cell and its steps (and includes) into dir; it returns
// the netlist's path.
func (c netlistCell) put(t *testing.T, dir string) string {
	t.Helper()
	p := filepath.Join(dir, c.file)
	check(t, os.WriteFile(p, c.src, 0o644))
	check(t, os.WriteFile(filepath.Join(dir, c.base()+".steps"), c.steps, 0o644))
	for n, b := range c.extra {
		check(t, os.WriteFile(filepath.Join(dir, n), b, 0o644))
	}
	return p
}

// convertCell converts the netlist at p with `railyard convert -o` into
// dir/BASE.sw, with the steps beside it, and returns the .sw path.
func convertCell(t *testing.T, c netlistCell, p, dir string) string {
	t.Helper()
	sw := filepath.Join(dir, c.base()+".sw")
	code, out, errs := call("convert", p, "-o", sw)
	if code != 0 || out != "" {
		t.Fatalf("convert %s: exit %d, stdout %q, stderr %s", p, code, out, errs)
	}
	check(t, os.WriteFile(filepath.Join(dir, c.base()+".steps"), c.steps, 0o644))
	return sw
}

// A netlist cell behaves as its conversion does: `run` (the text report,
// and --json in both modes) and `check --exhaustive` print the same for
// the netlist and for what `railyard convert` made of it, the same steps
// beside each. The text report shows the netlist's own spellings for
// both (the conversion's alias lines).
func TestNetlistBehavesAsConversion(t *testing.T) {
	for _, c := range netlistCells(t) {
		dir := t.TempDir()
		netlist := c.put(t, dir)
		swDir := filepath.Join(dir, "sw")
		check(t, os.Mkdir(swDir, 0o755))
		sw := convertCell(t, c, netlist, swDir)
		for _, args := range [][]string{{"run"}, {"run", "--json"}, {"run", "--json", "--ideal"}, {"check", "--exhaustive"}, {"check", "--exhaustive", "--ideal"}} {
			c1, out1, _ := call(append([]string{args[0], netlist}, args[1:]...)...)
			c2, out2, _ := call(append([]string{args[0], sw}, args[1:]...)...)
			out1 = strings.ReplaceAll(strings.ReplaceAll(out1, filepath.Join(dir, c.base()+".steps"), "STEPS"), netlist, "DESIGN")
			out2 = strings.ReplaceAll(strings.ReplaceAll(out2, filepath.Join(swDir, c.base()+".steps"), "STEPS"), sw, "DESIGN")
			if c1 != c2 || out1 != out2 {
				t.Errorf("%s %v: netlist exit %d, conversion exit %d\n--- netlist\n%s\n--- conversion\n%s", c.file, args, c1, c2, out1, out2)
			}
			if c1 == 2 || out1 == "" {
				t.Errorf("%s %v: exit %d, output %q", c.file, args, c1, out1)
			}
		}
	}
}

// flat is a netlist written flat by the .sw writer: every node and device
// with its kind, terminals, sizes, strength, resistance, capacitance,
// charge and shown spelling, the technology, the rails and the ports. Two
// netlists with the same flat text are the same netlist.
func flat(t *testing.T, nl *switchsim.Netlist) string {
	t.Helper()
	var b bytes.Buffer
	check(t, netfile.WriteNetlist(&b, nl))
	return b.String()
}

// railyard convert writes the .sw equivalent: reading it gives the same
// netlist as reading the netlist, for both forms (names, the original
// spellings through alias lines, kinds, terminals, sizes, capacitances,
// resistances, the technology); stdout without -o holds the same; the
// reader's notes head the file and go to stderr.
func TestConvertCommand(t *testing.T) {
	for _, c := range netlistCells(t) {
		dir := t.TempDir()
		p := c.put(t, dir)
		orig, err := load.Host(load.Options{}).Design(p)
		if err != nil {
			t.Fatal(err)
		}
		out := filepath.Join(dir, "out.sw")
		code, stdout, stderr := call("convert", p, "-o", out)
		if code != 0 || stdout != "" {
			t.Fatalf("%s: exit %d, stdout %q, stderr %s", c.file, code, stdout, stderr)
		}
		for _, l := range strings.Split(strings.TrimSpace(stderr), "\n") {
			if l != "" && !strings.Contains(l, ": note: ") {
				t.Errorf("%s: stderr line %q is not a note", c.file, l)
			}
		}
		written, _ := os.ReadFile(out)
		code, stdout, _ = call("convert", p)
		if code != 0 || stdout != string(written) {
			t.Errorf("%s: stdout (exit %d) differs from the -o file", c.file, code)
		}
		if !strings.HasPrefix(stdout, "# converted from "+p+": every instance expanded\n") {
			t.Errorf("%s: the file does not say where it came from:\n%s", c.file, stdout)
		}
		back, err := netfile.Read(out, written)
		if err != nil {
			t.Fatalf("%s: the conversion does not read: %v\n%s", c.file, err, written)
		}
		if a, b := flat(t, orig.Netlist), flat(t, back.Netlist); a != b {
			t.Errorf("%s: the conversion is another netlist:\n--- netlist\n%s\n--- conversion\n%s", c.file, a, b)
		}
	}
}

// What the fixtures' conversions hold, read by hand from the netlists: the
// resistor between Q<0> and QR is an rtran of 200 ohm, the leak to ground
// a pulldown of 1 Mohm, the C cards node capacitances, the pMOS model's
// KP = U0 eps_ox / TOX = 140e-4 x 3.9 x 8.854e-12 / 8e-9 = 60.43 uA/V^2
// (the level-1 definition), and each name the .sw format spells otherwise
// has its alias; the module's rcmos is two resistive transistors, its
// keeper two rtran, its tran a tran, its weak pullup a weak pull, its
// trireg (small) a small-charge node.
func TestConvertHolds(t *testing.T) {
	dir := t.TempDir()
	var conv = map[string]string{}
	for _, c := range netlistCells(t)[2:] {
		_, out, errs := call("convert", c.put(t, dir))
		if out == "" {
			t.Fatalf("%s: %s", c.file, errs)
		}
		conv[c.file] = out
	}
	for file, wants := range map[string][]string{
		"oplat.sp": {"\nrtran rq q[0] qr r=200\n", "\npulldown rk sX241 r=1M\n", "\nnode sX241 cap=3.5f\n", "\nnode q[0] cap=1.25f\n",
			"\nnode qr cap=0.5f\n", "\nground vss\n", " kp=60.4285", "\nalias q[0] \"Q<0>\"\n", "\nalias sX241 \"s$1\"\n", "\nalias clk_bX23 \"clk_b#\"\n",
			"\nnmos mn1 clk d sX241 w=400n l=180n\n"},
		"rlatch.v": {"\nrnmos t1.n en d s w=360n l=180n\n", "\nrpmos t1.p enX23b d s w=720n l=180n\n", "\nrtran k1 q m\n", "\nrtran k2 m s\n",
			"\ntran w q y\n", "\npullup pu d strength=weak\n", "\nnode s charge=small\n", "\nalias enX23b \"en#b\"\n"},
	} {
		for _, w := range wants {
			if !strings.Contains(conv[file], w) {
				t.Errorf("%s: the conversion lacks %q:\n%s", file, w, conv[file])
			}
		}
	}
}

// -o never replaces the design, its steps, a file it includes, or
// anything that is not a regular file; a bad netlist writes nothing. Each
// refusal exits 2 and leaves the path as it was.
func TestConvertRefuses(t *testing.T) {
	dir := t.TempDir()
	c := netlistCells(t)[2] // oplat.sp, with its include
	p := c.put(t, dir)
	steps := filepath.Join(dir, "oplat.steps")
	inc := filepath.Join(dir, "oplat_models.inc")
	for _, cmd := range []string{"convert", "export"} {
		for _, target := range []string{p, steps, inc, dir, os.DevNull, filepath.Join(dir, "no", "such", "x")} {
			before, _ := os.ReadFile(target)
			code, out, errs := call(cmd, p, "-o", target)
			after, _ := os.ReadFile(target)
			if code != 2 || out != "" || !strings.Contains(errs, "-o: "+target+": ") || !bytes.Equal(before, after) {
				t.Errorf("%s -o %s: exit %d, stdout %q, stderr %q, changed %v", cmd, target, code, out, errs, !bytes.Equal(before, after))
			}
		}
	}
}

var errAtLine = regexp.MustCompile(`^(.+?):(\d+)(:\d+)?: `)

// Bad netlists exit 2 with FILE:LINE:COL in every command that opens a
// design, print nothing on stdout, and write nothing: no trace, no saved
// steps, no JUnit report, no converted design, no deck. The netlists are
// each built to have one fault: a model of an unknown type, a missing
// .ends, an M card with a terminal missing, an instance of a subcircuit
// nobody defines, a subcircuit that instantiates itself, an include of a
// file outside (here: none there; served, outside the folder, see
// tui/sshserve), a file that is not text, and a gate primitive outside the
// IEEE 1364 switch-level subset.
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
		check(t, os.WriteFile(p, []byte(src), 0o644))
		steps := filepath.Join(dir, strings.TrimSuffix(name, filepath.Ext(name))+".steps")
		check(t, os.WriteFile(steps, []byte("apply a\n1\n"), 0o644))
		out := filepath.Join(dir, "out")
		for _, args := range [][]string{
			{"run", p, "--trace", out},
			{"run", p, "--vcd", out},
			{"check", p, "--exhaustive", "--save-steps", out},
			{"check", p, "--junit", out},
			{"explore", p, "--trace", out},
			{"convert", p, "-o", out},
			{"export", p, "-o", out},
		} {
			code, stdout, stderr := call(args...)
			m := errAtLine.FindStringSubmatch(stderr)
			if code != 2 || stdout != "" || m == nil || m[1] != p {
				t.Errorf("%v: exit %d, stdout %q, stderr %q", args, code, stdout, stderr)
			}
			if _, err := os.Stat(out); err == nil {
				t.Errorf("%v: %s was written", args, out)
				os.RemoveAll(out)
			}
		}
	}
}

// replay of a trace whose netlist has since gone bad exits 2 with the
// netlist's FILE:LINE:COL.
func TestReplayOfABadNetlistExit2(t *testing.T) {
	dir := t.TempDir()
	c := netlistCells(t)[2]
	p := c.put(t, dir)
	tr := filepath.Join(dir, "s.trace")
	if code, _, errs := call("run", p, "--trace", tr); code != 0 {
		t.Fatalf("run: exit %d: %s", code, errs)
	}
	bad := strings.Replace(string(c.src), "RK s$1 VSS 1meg\n", "RK s$1 VSS 1meg\nM9 D CLK s$1 nch\n", 1) // a terminal short
	check(t, os.WriteFile(p, []byte(bad), 0o644))
	code, _, errs := call("replay", tr)
	if code != 2 || !strings.Contains(errs, p+":") || !errAtLine.MatchString(errs) {
		t.Errorf("replay: exit %d, stderr %q", code, errs)
	}
}

// railyard export writes a deck that reads back as the same cell: the
// deck's subcircuit, read with --top and the same steps, runs to the same
// JSON report in both modes as the netlist it was exported from (sizes,
// capacitances, the resistor between nodes and the one to ground, the
// technology's level-1 values). Without -o the deck goes to stdout.
func TestExportReadsBack(t *testing.T) {
	dir := t.TempDir()
	c := netlistCells(t)[2] // oplat.sp
	p := c.put(t, dir)
	deck := filepath.Join(dir, "tb.sp")
	code, out, errs := call("export", p, "-o", deck)
	if code != 0 || out != "" {
		t.Fatalf("export: exit %d, stdout %q, stderr %s", code, out, errs)
	}
	written, _ := os.ReadFile(deck)
	if _, out, _ = call("export", p); out != string(written) {
		t.Error("export to stdout differs from the -o file")
	}
	steps := filepath.Join(dir, "oplat.steps")
	for _, mode := range [][]string{nil, {"--ideal"}} {
		_, want, _ := call(append([]string{"run", p, "--json"}, mode...)...)
		code, got, errs := call(append([]string{"run", deck, "--top", "oplatch", "--steps", steps, "--json"}, mode...)...)
		if code != 0 {
			t.Fatalf("run on the deck: exit %d: %s", code, errs)
		}
		if !reflect.DeepEqual(jsonLines(t, got), jsonLines(t, want)) {
			t.Errorf("%v: the deck runs otherwise than the netlist:\n--- deck\n%s\n--- netlist\n%s", mode, got, want)
		}
	}
}

// The deck of a dynamic latch whose data input is released, read by hand
// (testdata/export_plat_release.golden): three steps of 5 ns (the
// transient stops at 15 ns, its step the smaller of edge/4 = 12.5 ps and
// period/50); clk is 1, 0, 1 with 50 ps edges from 5 and 10 ns; d's
// driver holds 1.8 V through the released step and ramps to 0 at 10 ns,
// cut off by the switch sd while d_en is low from 5 to 10 ns; each check
// is a measure at the end of its step, the inner node st through xdut.;
// the pass device's bulk at ground, the inverter's pMOS at vdd; sizes the
// technology's defaults; the level-1 cards carry generic's vtn, kn, vtp
// (negative for pMOS), kp, gamma, phi.
func TestExportGolden(t *testing.T) {
	code, out, errs := call("export", "testdata/plat.sw", "--steps", "testdata/plat_release.steps", "--period", "5ns", "--edge", "50p")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	golden(t, "export_plat_release", out)
}

// export refuses what cannot make a deck, exit 2 and nothing written: no
// steps, a time that does not read, an edge no shorter than the period,
// model lists of patterns only.
func TestExportRefuses(t *testing.T) {
	dir := t.TempDir()
	out := filepath.Join(dir, "tb.sp")
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{"testdata/bus.sw"}, "a testbench needs steps"},
		{[]string{"testdata/plat.sw", "--period", "5x"}, "--period 5x: want a time such as 5n"},
		{[]string{"testdata/plat.sw", "--period", "-5n"}, "--period -5n: want a time above 0"},
		{[]string{"testdata/plat.sw", "--edge", "20n"}, "the edge time (20n) must be shorter than the period (10n)"},
		{[]string{"testdata/plat.sw", "--nmos-models", "nch*"}, `--nmos-models: the deck needs a model's name, and "nch*" holds only patterns`},
	} {
		code, stdout, stderr := call(append(append([]string{"export"}, c.args...), "-o", out)...)
		if code != 2 || stdout != "" || !strings.Contains(stderr, c.want) {
			t.Errorf("%v: exit %d, stdout %q, stderr %q, want %q", c.args, code, stdout, stderr, c.want)
		}
		if _, err := os.Stat(out); err == nil {
			t.Errorf("%v: a deck was written", c.args)
		}
	}
	// The first plain name of a list names the deck's models.
	code, deck, _ := call("export", "testdata/plat.sw", "--nmos-models", "n*,nch", "--pmos-models", "pch")
	if code != 0 || !strings.Contains(deck, " nch w=") || !strings.Contains(deck, " pch w=") || strings.Contains(deck, ".model nfet_l1") {
		t.Errorf("named models: exit %d:\n%s", code, deck)
	}
}

// A run of a netlist read with flags and a steps file of another name
// records what the reading needs: `replay` with no flags repeats it and
// matches; a flag given to replay replaces the trace's (here one that
// breaks the reading, so the replay does not match).
func TestReplayNetlistWithItsReading(t *testing.T) {
	dir := t.TempDir()
	src := strings.NewReplacer("VDD", "VP", "VSS", "VN").Replace(string(netlistCells(t)[2].src))
	p := filepath.Join(dir, "lat.sp")
	check(t, os.WriteFile(p, []byte(src), 0o644))
	models, _ := os.ReadFile(filepath.Join("testdata", "netlist", "oplat_models.inc"))
	check(t, os.WriteFile(filepath.Join(dir, "oplat_models.inc"), models, 0o644))
	steps := filepath.Join(dir, "write-then-hold.steps")
	check(t, os.WriteFile(steps, netlistCells(t)[2].steps, 0o644))
	tr := filepath.Join(dir, "lat.trace")
	if code, _, errs := call("run", p, "--steps", steps, "--power", "vp", "--ground", "vn", "--trace", tr); code != 0 {
		t.Fatalf("run: exit %d: %s", code, errs)
	}
	b, _ := os.ReadFile(tr)
	for _, want := range []string{"\nformat netlist\n", "\nread power=vp ground=vn\n", "\ninputs D CLK\n"} {
		if !strings.Contains(string(b), want) {
			t.Errorf("the trace lacks %q", want)
		}
	}
	if code, out, errs := call("replay", tr); code != 0 || !strings.Contains(out, "everything matches") {
		t.Errorf("replay: exit %d\n%s%s", code, out, errs)
	}
	if code, out, _ := call("replay", tr, "--inputs", "D"); code == 0 {
		t.Errorf("replay --inputs D (CLK no longer an input) still matches:\n%s", out)
	}
}

// The check's cache knows a netlist by what it reads as: a change to a
// file it includes, or to the reader's options, checks it again.
func TestCheckCacheSeesIncludesAndOptions(t *testing.T) {
	dir := t.TempDir()
	c := netlistCells(t)[2] // oplat.sp, its models in oplat_models.inc
	p := c.put(t, dir)
	cache := filepath.Join(t.TempDir(), "cache")
	cached := func(args ...string) bool {
		t.Helper()
		code, out, errs := call(append([]string{"check", p, "--exhaustive", "--cache", cache}, args...)...)
		if code == 2 {
			t.Fatalf("check: %s", errs)
		}
		return strings.Contains(out, "(cached result)")
	}
	if cached() || !cached() {
		t.Fatal("the second run of an unchanged netlist is not the cached one")
	}
	inc := filepath.Join(dir, "oplat_models.inc")
	models, _ := os.ReadFile(inc)
	check(t, os.WriteFile(inc, bytes.Replace(models, []byte("vto=0.42"), []byte("vto=0.47"), 1), 0o644))
	if cached() {
		t.Error("a changed include gave the cached result")
	}
	if cached("--inputs", "D") {
		t.Error("other inputs gave the cached result")
	}
}

// export --corner writes the deck at one of the design's corners: the
// supply and the level-1 models from that corner's technology (the
// design's tech with the corner's keys replaced), the rest as nominal. An
// unknown corner is refused, naming the design's.
func TestExportAtACorner(t *testing.T) {
	dir := t.TempDir()
	src, _ := os.ReadFile(filepath.Join("testdata", "plat.sw"))
	p := filepath.Join(dir, "plat.sw")
	check(t, os.WriteFile(p, append(src, []byte("corner slow vdd=1.62 vtn=0.5 kn=150u\n")...), 0o644))
	steps, _ := os.ReadFile(filepath.Join("testdata", "plat.steps"))
	check(t, os.WriteFile(filepath.Join(dir, "plat.steps"), steps, 0o644))
	_, nominal, _ := call("export", p)
	code, slow, errs := call("export", p, "--corner", "slow")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	for _, want := range []string{"vvdd vdd 0 dc 1.62\n", ".model nfet_l1 nmos (level=1 vto=500m kp=150u ", "at corner slow"} {
		if !strings.Contains(slow, want) {
			t.Errorf("the slow deck lacks %q:\n%s", want, slow)
		}
	}
	if !strings.Contains(nominal, "vvdd vdd 0 dc 1.8\n") || !strings.Contains(nominal, "vto=450m kp=170u") {
		t.Errorf("the nominal deck is not at the nominal tech:\n%s", nominal)
	}
	if pm := ".model pfet_l1 pmos (level=1 vto=-450m kp=60u"; !strings.Contains(slow, pm) || !strings.Contains(nominal, pm) {
		t.Errorf("the pMOS model should be the same at both:\n%s", slow)
	}
	code, _, errs = call("export", p, "--corner", "fast")
	if code != 2 || !strings.Contains(errs, `no corner "fast" (the design's: slow)`) {
		t.Errorf("unknown corner: exit %d, %s", code, errs)
	}
}

// convert says when the steps a netlist was read with spell a node in a
// case only the netlist takes (its names match in any case, the .sw
// conversion's exactly), and says nothing when they are spelt as the
// conversion spells them.
func TestConvertNotesStepsCase(t *testing.T) {
	dir := t.TempDir()
	c := netlistCells(t)[2]
	p := c.put(t, dir)
	odd := filepath.Join(dir, "odd.steps")
	check(t, os.WriteFile(odd, []byte("apply Clk D\ncheck q<0>\n1 1 | 1\n"), 0o644))
	const note = "names nodes in a case the .sw design does not"
	if code, _, errs := call("convert", p, "--steps", odd); code != 0 || !strings.Contains(errs, odd+" "+note) {
		t.Errorf("odd case: exit %d, stderr %q", code, errs)
	}
	if code, _, errs := call("convert", p); code != 0 || strings.Contains(errs, note) {
		t.Errorf("the fixture's own steps: exit %d, stderr %q", code, errs)
	}
}
