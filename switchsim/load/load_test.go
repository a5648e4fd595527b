package load

import (
	"errors"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"runtime"
	"strings"
	"testing"
	"testing/fstest"
	"time"

	"railyard/switchsim/diag"
	"railyard/switchsim/netfile"
)

const latch = "design l\ninput d en\noutput q\nnmos pass en d q\nnode q cap=2f\n"

func write(t *testing.T, dir, name, text string) string {
	t.Helper()
	p := filepath.Join(dir, name)
	if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

// wantErr checks that err is a diag.List whose text starts with prefix.
func wantErr(t *testing.T, what string, err error, prefix string) {
	t.Helper()
	var list diag.List
	if !errors.As(err, &list) {
		t.Fatalf("%s: error %T %v, want a diag.List", what, err, err)
	}
	if !strings.HasPrefix(err.Error(), prefix) {
		t.Errorf("%s: got %q, want it to start %q", what, err, prefix)
	}
}

func TestCutDemoAndBaseName(t *testing.T) {
	if d, ok := CutDemo("demo:static_latch"); !ok || d != "static_latch" {
		t.Errorf("CutDemo: %q %v", d, ok)
	}
	if _, ok := CutDemo("cells/demo:x.sw"); ok {
		t.Error("a path holding demo: is not a demo")
	}
	for in, want := range map[string]string{"demo:static_latch": "static_latch", "cells/opsel.sw": "opsel",
		"/a/b/latch.sp": "latch", "demo:nand.v": "nand", "plain": "plain"} {
		if got := BaseName(in); got != want {
			t.Errorf("BaseName(%q) = %q, want %q", in, got, want)
		}
	}
}

// The command line's files: errors name the file (FILE: cannot read: ...),
// a folder is no file, a demo resolves in the embedded demos.
func TestHostReads(t *testing.T) {
	dir := t.TempDir()
	sw := write(t, dir, "l.sw", latch)
	l := Host(Options{})
	d, err := l.Design(sw)
	if err != nil || d.Name != "l" || d.File != sw {
		t.Fatalf("design: %v %+v", err, d)
	}
	_, err = l.Design(filepath.Join(dir, "missing.sw"))
	wantErr(t, "missing", err, filepath.Join(dir, "missing.sw")+": cannot read: no such file")
	_, err = l.ReadFile(dir)
	wantErr(t, "folder", err, dir+": cannot read: it is a folder")
	if _, err := l.Design("demo:static_latch"); err != nil {
		t.Errorf("demo: %v", err)
	}
	_, err = l.Design("demo:no_such")
	wantErr(t, "unknown demo", err, `demo:no_such: no demo design named "no_such" (the demos: `)
	_, err = l.ReadFile("demo:../go.mod")
	wantErr(t, "demo escape", err, "demo:../go.mod: no demo file named")
}

// A file past the bound is refused at the byte where it passes it, with
// that position, and only the bound (and one byte) is read.
func TestSizeBound(t *testing.T) {
	dir := t.TempDir()
	p := write(t, dir, "big.sw", "input a\n"+strings.Repeat("# padding\n", 20))
	_, err := Host(Options{MaxBytes: 30}).ReadFile(p)
	// Lines of 8, 10 and 10 bytes: byte 30 (0-based), the first past the
	// bound, is the third of line 4.
	wantErr(t, "bound", err, p+":4:3: file is longer than the limit of 30 bytes")
}

// `--steps /dev/zero` (issue 17): refused at the limit with a position,
// after reading no more than the limit: the heap grows by about the bound,
// not until memory runs out.
func TestDevZeroRefusedAtTheLimit(t *testing.T) {
	if _, err := os.Stat("/dev/zero"); err != nil {
		t.Skip("no /dev/zero")
	}
	var before, after runtime.MemStats
	runtime.GC()
	runtime.ReadMemStats(&before)
	_, err := Host(Options{}).ReadFile("/dev/zero")
	runtime.ReadMemStats(&after)
	wantErr(t, "/dev/zero", err, "/dev/zero:1:4194305: file is longer than the limit of 4 MiB")
	if got := after.TotalAlloc - before.TotalAlloc; got > 4*DefaultMaxBytes && !raceEnabled {
		t.Errorf("reading /dev/zero allocated %d bytes, want at most %d (four times the bound)", got, 4*DefaultMaxBytes)
	}
	// Opened as steps, the same refusal comes back from Open.
	dir := t.TempDir()
	sw := write(t, dir, "l.sw", latch)
	_, err = Host(Options{}).Open(sw, "/dev/zero")
	wantErr(t, "steps /dev/zero", err, "/dev/zero:1:4194305: file is longer than the limit")
}

// A FIFO with no writer does not hang the open, and one whose writer never
// writes nor closes ends at the time bound (issue 17 item 5).
func TestFIFODoesNotHang(t *testing.T) {
	dir := t.TempDir()
	fifo := filepath.Join(dir, "f.steps")
	if err := mkfifo(fifo); err != nil {
		t.Skipf("no FIFOs here: %v", err)
	}
	done := make(chan error, 1)
	go func() {
		_, err := Host(Options{}).ReadFile(fifo)
		done <- err
	}()
	select {
	case err := <-done:
		if err != nil {
			t.Errorf("FIFO without a writer: %v (want it read as empty)", err)
		}
	case <-time.After(5 * time.Second):
		t.Fatal("reading a FIFO without a writer hangs")
	}

	defer func(w time.Duration) { pipeWait = w }(pipeWait)
	pipeWait = 100 * time.Millisecond
	w, err := os.OpenFile(fifo, os.O_RDWR, 0) // a writer that never writes
	if err != nil {
		t.Fatal(err)
	}
	defer w.Close()
	go func() {
		_, err := Host(Options{}).ReadFile(fifo)
		done <- err
	}()
	select {
	case err := <-done:
		wantErr(t, "silent writer", err, fifo+": cannot read: nothing more came within 100ms")
	case <-time.After(5 * time.Second):
		t.Fatal("a FIFO whose writer never writes hangs the read")
	}
}

// The default steps: the same base name with .steps beside the design
// (README, "Steps files"); a demo's is demo:NAME.steps.
func TestDefaultSteps(t *testing.T) {
	dir := t.TempDir()
	sw := write(t, dir, "latch.sw", latch)
	l := Host(Options{})
	if p, ok := l.DefaultSteps(sw); ok {
		t.Errorf("no steps file yet, got %s", p)
	}
	want := write(t, dir, "latch.steps", "apply d en\n1 1\n")
	if p, ok := l.DefaultSteps(sw); !ok || p != want {
		t.Errorf("DefaultSteps(%s) = %s %v, want %s", sw, p, ok, want)
	}
	if p, ok := l.DefaultSteps(filepath.Join(dir, "latch")); !ok || p != want {
		t.Errorf("no extension: %s %v", p, ok)
	}
	if p, ok := l.DefaultSteps(want); ok {
		t.Errorf("a steps file is not its own default: %s", p)
	}
	if p, ok := l.DefaultSteps("demo:static_latch"); !ok || p != "demo:static_latch.steps" {
		t.Errorf("demo: %s %v", p, ok)
	}
	if _, ok := l.DefaultSteps("demo:nothing_here"); ok {
		t.Error("unknown demo has default steps")
	}
	ld, err := l.Open(sw, "")
	if err != nil || ld.Steps == nil || ld.StepsName != want || len(ld.Steps.Rows) != 1 || string(ld.StepsSource) != "apply d en\n1 1\n" {
		t.Fatalf("open with default steps: %v %+v", err, ld)
	}
	ld, err = l.Open("demo:static_latch", "demo:static_latch.steps")
	if err != nil || ld.Steps == nil || len(ld.Steps.Rows) == 0 {
		t.Errorf("demo steps: %v", err)
	}
}

// A missing steps file is an error naming it (issue 17 item 15: not a bare
// open error), and a bad design and a missing steps file are reported
// together.
func TestOpenErrorsTogether(t *testing.T) {
	dir := t.TempDir()
	sw := write(t, dir, "l.sw", latch)
	_, err := Host(Options{}).Open(sw, filepath.Join(dir, "none.steps"))
	wantErr(t, "missing steps", err, filepath.Join(dir, "none.steps")+": cannot read: no such file")
	bad := write(t, dir, "bad.sw", "input a\nnmoss n a x gnd\n")
	_, err = Host(Options{}).Open(bad, filepath.Join(dir, "none.steps"))
	if err == nil || !strings.Contains(err.Error(), `bad.sw:2:1: unknown statement "nmoss"`) ||
		!strings.Contains(err.Error(), "none.steps: cannot read") {
		t.Errorf("want both files' errors, got %v", err)
	}
}

// A served folder: names stay inside, symbolic links may not lead out,
// and only regular files are read; messages name the folder's path.
func TestRootStaysInside(t *testing.T) {
	base := t.TempDir()
	dir := filepath.Join(base, "designs")
	if err := os.Mkdir(dir, 0o755); err != nil {
		t.Fatal(err)
	}
	secret := write(t, base, "secret.sw", latch)
	write(t, dir, "l.sw", latch)
	write(t, dir, "l.steps", "apply d en\n0 1\n")
	os.Symlink(secret, filepath.Join(dir, "abs.sw"))
	os.Symlink("../secret.sw", filepath.Join(dir, "rel.sw"))
	os.Symlink("l.sw", filepath.Join(dir, "alias.sw"))
	os.Symlink("../secret.sw", filepath.Join(dir, "leaky.steps"))
	write(t, dir, "leaky.sw", latch)
	r, err := os.OpenRoot(dir)
	if err != nil {
		t.Fatal(err)
	}
	defer r.Close()
	l := Root(r, Options{})
	ld, err := l.Open("l.sw", "")
	if err != nil || ld.Steps == nil || ld.Design.File != filepath.Join(dir, "l.sw") {
		t.Fatalf("inside: %v %+v", err, ld)
	}
	if _, err := l.Design("alias.sw"); err != nil {
		t.Errorf("a link that stays inside: %v", err)
	}
	for _, name := range []string{"abs.sw", "rel.sw", "../secret.sw", secret, "/etc/passwd", "sub/../../secret.sw"} {
		if _, err := l.Design(name); err == nil {
			t.Errorf("%s was read", name)
		} else if strings.Contains(err.Error(), "design l") {
			t.Errorf("%s: the secret shows in the error: %v", name, err)
		}
	}
	if st, ok := l.DefaultSteps("leaky.sw"); !ok || st != "leaky.steps" {
		t.Errorf("a steps link that leads out must be named, to be refused: %q %v", st, ok)
	}
	if _, err := l.Open("leaky.sw", ""); err == nil {
		t.Error("a design whose steps lead out opened")
	}
	if fi, err := l.Stat("l.sw"); err != nil || !fi.Mode().IsRegular() {
		t.Errorf("Stat: %v", err)
	}
	fifo := filepath.Join(dir, "pipe.sw")
	if mkfifo(fifo) == nil {
		_, err := l.ReadFile("pipe.sw")
		wantErr(t, "served FIFO", err, fifo+": cannot read: not a regular file")
	}
}

// An fs.FS folder: only valid names, and includes confined to it.
func TestFSAndIncludes(t *testing.T) {
	fsys := fstest.MapFS{
		"cells/top.sp":      {Data: []byte("top")},
		"cells/sub/a.inc":   {Data: []byte("a")},
		"models/typ.lib":    {Data: []byte("lib")},
		"cells/top.steps":   {Data: []byte("apply a b\n")},
		"cells/.hidden.sw":  {Data: []byte(latch)},
		".git/x.sw":         {Data: []byte(latch)},
		"cells/notes.txt":   {Data: []byte("x")},
		"cells/latch.sw":    {Data: []byte(latch)},
		"cells/sub/nand.v":  {Data: []byte("v")},
		"cells/sub/nand.vg": {Data: []byte("vg")},
	}
	l := FS(fsys, "/srv", Options{})
	if got := l.Path("cells/latch.sw"); got != filepath.Join("/srv", "cells", "latch.sw") {
		t.Errorf("Path: %s", got)
	}
	if _, err := l.ReadFile("../etc/passwd"); err == nil {
		t.Error("a name out of the folder was read")
	}
	inc := l.includer(l.Path("cells/top.sp"), "cells/top.sp")
	file, src, err := inc(l.Path("cells/top.sp"), "sub/a.inc")
	if err != nil || string(src) != "a" || file != l.Path("cells/sub/a.inc") {
		t.Errorf("include beside: %q %q %v", file, src, err)
	}
	// An include of an include resolves from the included file.
	if _, src, err := inc(file, "../../models/typ.lib"); err != nil || string(src) != "lib" {
		t.Errorf("include from an include: %q %v", src, err)
	}
	for _, bad := range []string{"../../outside.lib", "/etc/passwd", "../../../x"} {
		if _, _, err := inc(l.Path("cells/top.sp"), bad); err == nil || !strings.Contains(err.Error(), "leads out of the folder") {
			t.Errorf("include %q: %v, want a refusal", bad, err)
		}
	}
	if _, _, err := inc("elsewhere.sp", "sub/a.inc"); err == nil {
		t.Error("an include from a file the loader did not read was allowed")
	}
	for i := 0; i < MaxIncludes; i++ {
		inc(l.Path("cells/top.sp"), "sub/a.inc")
	}
	if _, _, err := inc(l.Path("cells/top.sp"), "sub/a.inc"); err == nil || !strings.Contains(err.Error(), "more than the limit of 64 included files") {
		t.Errorf("include count: %v", err)
	}

	// Walk lists the designs of every known extension, with their steps,
	// in lexical order, passing over hidden files and other files.
	var got []string
	if err := l.Walk(".", func(e Entry) error {
		got = append(got, e.Design+"|"+e.Format+"|"+e.Steps)
		return nil
	}); err != nil {
		t.Fatal(err)
	}
	want := "cells/latch.sw|sw|,cells/sub/nand.v|verilog|,cells/sub/nand.vg|verilog|,cells/top.sp|netlist|cells/top.steps"
	if strings.Join(got, ",") != want {
		t.Errorf("Walk:\n got %s\nwant %s", strings.Join(got, ","), want)
	}
	stop := errors.New("stop")
	if err := l.Walk(".", func(Entry) error { return stop }); err != stop {
		t.Errorf("Walk does not stop on fn's error: %v", err)
	}
	var demos int
	Host(Options{}).Walk("demo:", func(e Entry) error {
		if !strings.HasPrefix(e.Design, "demo:") || e.Steps == "" {
			t.Errorf("demo entry %+v", e)
		}
		demos++
		return nil
	})
	if demos < 9 {
		t.Errorf("Walk of the demos found %d", demos)
	}
}

// Readers plug in by extension or --format: a netlist goes to the card
// reader, a module to the IEEE 1364 reader, whose errors come back; an
// unknown extension is read as .sw.
func TestFormats(t *testing.T) {
	dir := t.TempDir()
	sp := write(t, dir, "inv.sp", "* an inverter\n")
	_, err := Host(Options{}).Design(sp)
	wantErr(t, ".sp", err, sp+": the deck has no devices and no subcircuit")
	_, err = Host(Options{}).Design(write(t, dir, "inv.V", "module inv;\n"))
	wantErr(t, ".V", err, filepath.Join(dir, "inv.V")+":1:1: module inv has no endmodule")
	d, err := Host(Options{}).Design(write(t, dir, "inv2.sp", ".subckt inv a y\nmn y a 0 0 nch\nmp y a vdd vdd pch\n.ends\n"))
	if err != nil || d.Netlist.NumDevices() != 2 {
		t.Errorf("a netlist through the card reader: %v", err)
	}
	d, err = Host(Options{}).Design(write(t, dir, "inv3.v", "module inv (input a, output y);\n  supply1 vdd; supply0 gnd;\n  pmos (y, vdd, a); nmos (y, gnd, a);\nendmodule\n"))
	if err != nil || d.Netlist.NumDevices() != 2 {
		t.Errorf("a module through the IEEE 1364 reader: %v", err)
	}
	txt := write(t, dir, "latch.txt", latch)
	if _, err := Host(Options{}).Design(txt); err != nil {
		t.Errorf(".txt read as .sw: %v", err)
	}
	if _, err := Host(Options{Format: "sw"}).Design(write(t, dir, "l.sp", latch)); err != nil {
		t.Errorf("--format sw on a .sp file: %v", err)
	}
	if err := CheckFormat("spice"); err == nil || !strings.Contains(err.Error(), "want sw, netlist, verilog") {
		t.Errorf("unknown format: %v", err)
	}
	for _, n := range []string{"a.sp", "a.SPICE", "a.cir", "a.cdl", "a.net", "a.ckt", "a.v", "a.vg", "a.sw"} {
		if !Known(n) {
			t.Errorf("%s not known", n)
		}
	}
	if Known("a.steps") || Known("a.txt") {
		t.Error("steps or text known as designs")
	}
}

// A netlist reader gets the reader options, the steps' apply names as its
// inputs when --inputs is not given, and an include opener: shown with a
// stand-in reader registered the way the real ones are.
func TestReaderGetsOptions(t *testing.T) {
	saved := formats[1].Read
	defer func() { formats[1].Read = saved }()
	var got netfile.ReadOptions
	formats[1].Read = func(file string, src []byte, opt netfile.ReadOptions) (*netfile.Design, error) {
		got = opt
		if opt.Include != nil {
			if _, inc, err := opt.Include(file, "models.lib"); err != nil || string(inc) != "models" {
				return nil, errors.New("include failed")
			}
		}
		return netfile.Read(file, []byte(latch))
	}
	dir := t.TempDir()
	sp := write(t, dir, "cell.sp", "cards")
	write(t, dir, "models.lib", "models")
	write(t, dir, "cell.steps", "apply d en\n1 1\n")
	opt := Options{ReadOptions: netfile.ReadOptions{Top: "cell", Power: []string{"vcc"}, NMOSModels: []string{"n*"}}}
	ld, err := Host(opt).Open(sp, "")
	if err != nil || ld.Steps == nil {
		t.Fatalf("open: %v", err)
	}
	if got.Top != "cell" || got.Power[0] != "vcc" || got.NMOSModels[0] != "n*" || strings.Join(got.Inputs, ",") != "d,en" {
		t.Errorf("options reached the reader as %+v", got)
	}
	if _, err := Host(opt).Design(sp); err != nil || strings.Join(got.Inputs, ",") != "d,en" {
		t.Errorf("Design alone: inputs %v, %v", got.Inputs, err)
	}
	opt.Inputs = []string{"en"}
	if _, err := Host(opt).Open(sp, ""); err != nil || strings.Join(got.Inputs, ",") != "en" {
		t.Errorf("--inputs wins: %v %v", got.Inputs, err)
	}
}

// Reader streams a file within a bound, reporting where it passed it.
func TestReaderBound(t *testing.T) {
	dir := t.TempDir()
	p := write(t, dir, "t.trace", "ab\ncdef\n")
	r, err := Host(Options{}).Reader(p, 5)
	if err != nil {
		t.Fatal(err)
	}
	b, err := io.ReadAll(r)
	r.Close()
	if string(b) != "ab\ncd" {
		t.Errorf("read %q", b)
	}
	wantErr(t, "stream", err, p+":2:3: file is longer than the limit of 5 bytes")
	r, _ = Host(Options{}).Reader(p, 8)
	if b, err := io.ReadAll(r); err != nil || len(b) != 8 {
		t.Errorf("a file of exactly the bound: %q %v", b, err)
	}
	_, err = Host(Options{}).Reader(dir, 8)
	wantErr(t, "stream folder", err, dir+": cannot read: it is a folder")
	_, err = Host(Options{}).Reader(filepath.Join(dir, "no.trace"), 8)
	if !errors.Is(err, fs.ErrNotExist) && !strings.Contains(err.Error(), "no such file") {
		t.Errorf("missing: %v", err)
	}
}
