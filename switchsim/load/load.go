// Package load opens railyard's input files, and is the only place that
// does. It resolves a name to bytes over one of three file systems: the
// command line's (paths as given, Host), a folder (an fs.FS such as
// os.DirFS, or an os.Root, which no name and no symbolic link can leave:
// what the SSH server serves), and the embedded demos (designs.FS), named
// demo:NAME wherever a name is taken. Every read is bounded in size and
// never waits on a pipe or a device for long. The design reader is picked
// by the file's extension or by --format (Formats), a design's default
// steps is the .steps file of the same base name beside it, and Walk lists
// the designs of a folder with their steps.
//
// Readers take bytes and a name for positions; they never open files. A
// netlist's include statements are read through the loader too, confined
// to where the netlist came from (netfile.ReadOptions.Include).
package load

import (
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path"
	"path/filepath"
	"strings"
	"time"

	"railyard/designs"
	"railyard/switchsim/diag"
	"railyard/switchsim/netfile"
	"railyard/switchsim/steps"
)

// DemoPrefix names an embedded demo: demo:NAME.
const DemoPrefix = "demo:"

// CutDemo reports whether name names an embedded demo and returns the
// demo's file name without the prefix. It is the one place the prefix is
// parsed.
func CutDemo(name string) (string, bool) { return strings.CutPrefix(name, DemoPrefix) }

// BaseName is a design's name without its folders, its demo: prefix and its
// extension: the stem of the files railyard makes from it (NAME.trace).
func BaseName(name string) string {
	if demo, ok := CutDemo(name); ok {
		name = demo
	}
	b := filepath.Base(filepath.FromSlash(name))
	return strings.TrimSuffix(b, filepath.Ext(b))
}

// Limits of a read (README, "Errors and limits").
const (
	DefaultMaxBytes = 4 << 20  // bytes of one file: the readers' own limit
	MaxIncludes     = 64       // files one design may include, in all
	MaxIncludeBytes = 16 << 20 // bytes of the files one design includes, in all
)

// pipeWait is how long a pipe or a device may keep a read waiting (a
// variable so that the tests need not wait that long).
var pipeWait = 10 * time.Second

// Options choose how designs are read: the format (else by extension),
// the reader options of netlists from elsewhere, and the size bound of a
// file. The loader sets ReadOptions.Include itself.
type Options struct {
	Format string // sw, netlist or verilog; "" chooses by extension
	netfile.ReadOptions
	MaxBytes int // bytes of one file; 0 means DefaultMaxBytes
}

// where a loader's names resolve
const (
	onHost = iota // paths of the file system, as a command line gives them
	inFS          // names inside an fs.FS
	inRoot        // names inside an os.Root
)

// Loader resolves names to files and reads them. A Loader is safe for
// concurrent use by several goroutines (the server shares one).
type Loader struct {
	opt   Options
	where int
	fsys  fs.FS
	root  *os.Root
	label string // what names inside fsys are shown under ("" for none)
}

// Host is the loader of the command line: names are paths of the file
// system as given (relative to the working directory), or demo:NAME. A
// pipe or device is read too (so --steps <(...) works), within the size
// bound and the time bound.
func Host(opt Options) *Loader { return &Loader{opt: opt, where: onHost} }

// FS is a loader of names inside fsys (slash-separated, no "..", as
// fs.ValidPath demands), or demo:NAME; label, when not empty, is the
// folder shown before the names in messages. Only regular files are read.
func FS(fsys fs.FS, label string, opt Options) *Loader {
	return &Loader{opt: opt, where: inFS, fsys: fsys, label: label}
}

// Root is a loader of names inside root, or demo:NAME: every file is opened
// through root, so that no name and no symbolic link leads out of it, and
// what was checked is what is read (there is no gap between a check of
// the path and the open). Messages show the names under root.Name(). Only
// regular files are read.
func Root(root *os.Root, opt Options) *Loader {
	return &Loader{opt: opt, where: inRoot, root: root, label: root.Name()}
}

// Options returns the loader's options.
func (l *Loader) Options() Options { return l.opt }

// WithOptions is a loader over the same files with other options (a
// replay reads a netlist with the reader options its trace records).
func (l *Loader) WithOptions(opt Options) *Loader {
	c := *l
	c.opt = opt
	return &c
}

func (l *Loader) maxBytes() int {
	if l.opt.MaxBytes > 0 {
		return l.opt.MaxBytes
	}
	return DefaultMaxBytes
}

// Path is how a name is shown in messages and recorded in traces: the name
// itself on the host and for demos, else the name under the loader's folder.
func (l *Loader) Path(name string) string {
	if _, ok := CutDemo(name); ok || l.where == onHost || l.label == "" {
		return name
	}
	return filepath.Join(l.label, filepath.FromSlash(name))
}

// fail is a read error for the whole of file: FILE: cannot read: why.
func fail(file, format string, args ...any) error {
	return diag.List{{Pos: diag.Pos{File: file}, Msg: fmt.Sprintf(format, args...)}}
}

// reason words an open or read error without repeating the path.
func reason(err error) string {
	var pe *fs.PathError
	if errors.As(err, &pe) {
		err = pe.Err
	}
	switch {
	case errors.Is(err, fs.ErrNotExist):
		return "no such file"
	case strings.Contains(err.Error(), "escapes from parent"), strings.Contains(err.Error(), "outside"):
		return "it points outside the folder"
	}
	return err.Error()
}

// open opens a name for reading, without waiting on a pipe that has no
// writer; regular says whether only a regular file may be read.
func (l *Loader) open(name string) (f fs.File, regular bool, err error) {
	if demo, ok := CutDemo(name); ok {
		if !fs.ValidPath(demo) {
			return nil, true, fs.ErrNotExist
		}
		f, err := designs.FS.Open(demo)
		return f, true, err
	}
	switch l.where {
	case onHost:
		f, err := os.OpenFile(name, os.O_RDONLY|openNonblock, 0)
		return f, false, err
	case inRoot:
		if !filepath.IsLocal(filepath.FromSlash(name)) {
			return nil, true, errors.New("it points outside the folder")
		}
		f, err := l.root.OpenFile(filepath.FromSlash(name), os.O_RDONLY|openNonblock, 0)
		return f, true, err
	}
	if !fs.ValidPath(name) {
		return nil, true, errors.New("it points outside the folder")
	}
	// An fs.FS cannot be asked not to wait on a pipe: look first.
	if st, err := fs.Stat(l.fsys, name); err != nil {
		return nil, true, err
	} else if !st.Mode().IsRegular() && !st.IsDir() {
		return nil, true, errors.New("not a regular file")
	}
	f, err = l.fsys.Open(name)
	return f, true, err
}

// Reader opens a file to be read as a stream of at most max bytes (a
// trace, which may be larger than a design), with ReadFile's errors for a
// file that cannot be opened. Reading past max fails with an error at the
// position where the bound was passed.
func (l *Loader) Reader(name string, max int64) (io.ReadCloser, error) {
	label := l.Path(name)
	f, regular, err := l.open(name)
	if err != nil {
		return nil, fail(label, "cannot read: %s", reason(err))
	}
	if err := l.checkKind(f, label, regular); err != nil {
		f.Close()
		return nil, err
	}
	return &bounded{f: f, label: label, left: max, max: max, line: 1, col: 1}, nil
}

// bounded reads at most max bytes of f, keeping the position it reached.
type bounded struct {
	f         fs.File
	label     string
	left, max int64
	line, col int
}

func (b *bounded) Read(p []byte) (int, error) {
	if b.left <= 0 {
		// One byte more tells a file that ends at the bound from a longer one.
		var one [1]byte
		if n, _ := b.f.Read(one[:]); n == 0 {
			return 0, io.EOF
		}
		return 0, diag.List{{Pos: diag.Pos{File: b.label, Line: b.line, Col: b.col},
			Msg: "file is longer than the limit of " + diag.SizeString(int(b.max))}}
	}
	if int64(len(p)) > b.left {
		p = p[:b.left]
	}
	n, err := b.f.Read(p)
	b.left -= int64(n)
	for _, c := range p[:n] {
		if c == '\n' {
			b.line, b.col = b.line+1, 1
		} else {
			b.col++
		}
	}
	if errors.Is(err, os.ErrDeadlineExceeded) {
		err = fail(b.label, "cannot read: nothing more came within %s (a pipe or device that does not end)", pipeWait)
	}
	return n, err
}

func (b *bounded) Close() error { return b.f.Close() }

// checkKind refuses a folder, and anything but a regular file where only
// those are read; a pipe or device gets its time bound.
func (l *Loader) checkKind(f fs.File, label string, regular bool) error {
	st, err := f.Stat()
	if err != nil {
		return fail(label, "cannot read: %s", reason(err))
	}
	if st.IsDir() {
		return fail(label, "cannot read: it is a folder, not a file")
	}
	if !st.Mode().IsRegular() {
		if regular {
			return fail(label, "cannot read: not a regular file")
		}
		if d, ok := f.(interface{ SetReadDeadline(time.Time) error }); ok {
			d.SetReadDeadline(time.Now().Add(pipeWait))
		}
	}
	return nil
}

// ReadFile reads a file of at most the loader's size bound. An error is a
// diag.List naming the file: FILE: cannot read: why, or, past the bound,
// FILE:LINE:COL where the bound was passed.
func (l *Loader) ReadFile(name string) ([]byte, error) {
	label := l.Path(name)
	if name == "" {
		return nil, fail(label, "no file named")
	}
	f, regular, err := l.open(name)
	if err != nil {
		if _, ok := CutDemo(name); ok && errors.Is(err, fs.ErrNotExist) {
			return nil, fail(label, "no demo file named %q (the demos: %s)", strings.TrimPrefix(name, DemoPrefix), strings.Join(demoNames(), ", "))
		}
		return nil, fail(label, "cannot read: %s", reason(err))
	}
	defer f.Close()
	if err := l.checkKind(f, label, regular); err != nil {
		return nil, err
	}
	max := l.maxBytes()
	src, err := io.ReadAll(io.LimitReader(f, int64(max)+1))
	if err != nil {
		if errors.Is(err, os.ErrDeadlineExceeded) {
			return nil, fail(label, "cannot read: nothing more came within %s (a pipe or device that does not end)", pipeWait)
		}
		return nil, fail(label, "cannot read: %s", reason(err))
	}
	if e := diag.CheckSize(label, src, max); e != nil {
		return nil, diag.List{e}
	}
	return src, nil
}

// Stat opens a name as ReadFile would and describes what was opened, so a
// caller can refuse a file for its kind or size before it is read.
func (l *Loader) Stat(name string) (fs.FileInfo, error) {
	f, _, err := l.open(name)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	return f.Stat()
}

func demoNames() []string {
	var names []string
	for _, e := range designs.All() {
		names = append(names, e.Name)
	}
	return names
}

// demoFile finds a demo's design file: NAME as given when it has a known
// extension, else NAME.sw, else NAME with another known extension.
func demoFile(demo string) (string, bool) {
	if _, ok := byExt(path.Ext(demo)); ok {
		return demo, true
	}
	for _, f := range formats {
		for _, ext := range f.Exts {
			if _, err := fs.Stat(designs.FS, demo+ext); err == nil && fs.ValidPath(demo+ext) {
				return demo + ext, true
			}
		}
	}
	return "", false
}

// Design reads and compiles a design. A netlist's inputs come from
// Options.Inputs, else from the apply line of the design's default steps.
func (l *Loader) Design(name string) (*netfile.Design, error) {
	var inputs []string
	if l.opt.Inputs == nil && l.needsInputs(name) {
		if st, ok := l.DefaultSteps(name); ok {
			if src, err := l.ReadFile(st); err == nil {
				inputs = steps.ApplyNames(src)
			}
		}
	}
	return l.design(name, inputs)
}

// needsInputs reports whether name's reader takes its inputs from outside.
func (l *Loader) needsInputs(name string) bool {
	f, err := l.format(name)
	return err == nil && f.Name != "sw"
}

func (l *Loader) design(name string, inputs []string) (*netfile.Design, error) {
	if demo, ok := CutDemo(name); ok {
		file, found := demoFile(demo)
		if !found {
			return nil, fail(name, "no demo design named %q (the demos: %s)", demo, strings.Join(demoNames(), ", "))
		}
		if file != demo {
			name = DemoPrefix + file
		}
	}
	label := l.Path(name)
	f, err := l.format(name)
	if err != nil {
		return nil, fail(label, "%v", err)
	}
	src, err := l.ReadFile(name)
	if err != nil {
		return nil, err
	}
	if f.Read == nil {
		return nil, fail(label, "no reader for %s (%s) yet: railyard reads .sw designs; convert it by hand for now", f.Desc, f.Name)
	}
	opt := l.opt.ReadOptions
	if opt.Inputs == nil {
		opt.Inputs = inputs
	}
	inc := l.includer(label, name)
	var included []string
	opt.Include = func(file, name string) (string, []byte, error) {
		tl, src, err := inc(file, name)
		if err == nil {
			included = append(included, tl)
		}
		return tl, src, err
	}
	d, err := f.Read(label, src, opt)
	if err != nil {
		return nil, err
	}
	d.File, d.Format, d.Includes = label, f.Name, included
	d.Options, d.Options.Include = opt, nil
	return d, nil
}

// DefaultSteps finds a design's default steps: the file of the same base
// name with the extension .steps beside it (demo:NAME.steps for a demo).
// A steps file that is there but cannot be read (it leads out of the
// served folder, say) is still named, so that opening it reports why.
func (l *Loader) DefaultSteps(design string) (string, bool) {
	if demo, ok := CutDemo(design); ok {
		if file, found := demoFile(demo); found {
			demo = file
		}
		st := strings.TrimSuffix(demo, path.Ext(demo)) + ".steps"
		if _, err := fs.Stat(designs.FS, st); err == nil && fs.ValidPath(st) {
			return DemoPrefix + st, true
		}
		return "", false
	}
	ext := path.Ext(design)
	if l.where == onHost {
		ext = filepath.Ext(design)
	}
	if ext == ".steps" {
		return "", false
	}
	st := strings.TrimSuffix(design, ext) + ".steps"
	var info fs.FileInfo
	var err error
	switch l.where {
	case onHost:
		info, err = os.Stat(st)
	case inRoot:
		p := filepath.FromSlash(st)
		if !filepath.IsLocal(p) {
			return "", false
		}
		// A link that leads out is named (and refused when read); one
		// that leads nowhere is no steps file.
		info, err = l.root.Lstat(p)
		if err == nil && info.Mode()&fs.ModeSymlink != 0 {
			if _, e := l.root.Stat(p); errors.Is(e, fs.ErrNotExist) {
				return "", false
			}
		}
	default:
		if !fs.ValidPath(st) {
			return "", false
		}
		info, err = fs.Stat(l.fsys, st)
	}
	if err != nil || info.IsDir() {
		return "", false
	}
	return st, true
}

// Loaded is a design with its steps, as Open read them.
type Loaded struct {
	Design      *netfile.Design
	Steps       *steps.Steps // nil without steps
	StepsName   string       // the steps as given or found ("" without); shown as Path(StepsName)
	StepsSource []byte
}

// Open reads a design and its steps: stepsName if given, else the
// design's default steps if it has any. Problems with both files are
// reported together where both can be found.
func (l *Loader) Open(design, stepsName string) (*Loaded, error) {
	out := &Loaded{StepsName: stepsName}
	if stepsName == "" {
		if st, ok := l.DefaultSteps(design); ok {
			out.StepsName = st
		}
	}
	var stepsErr error
	if out.StepsName != "" {
		out.StepsSource, stepsErr = l.ReadFile(out.StepsName)
	}
	var inputs []string
	if stepsErr == nil && out.StepsSource != nil && l.opt.Inputs == nil && l.needsInputs(design) {
		inputs = steps.ApplyNames(out.StepsSource)
	}
	d, err := l.design(design, inputs)
	if err != nil {
		return nil, join(err, stepsErr)
	}
	if stepsErr != nil {
		return nil, stepsErr
	}
	out.Design = d
	if out.StepsSource != nil {
		st, err := readSteps(l.Path(out.StepsName), out.StepsSource, d)
		if err != nil {
			return nil, err
		}
		out.Steps = st
	}
	return out, nil
}

// Steps reads a steps file against a design: its names exact, or in any
// case for a design whose names are case-insensitive (netlist cards).
func (l *Loader) Steps(name string, d *netfile.Design) (*steps.Steps, []byte, error) {
	src, err := l.ReadFile(name)
	if err != nil {
		return nil, nil, err
	}
	st, err := readSteps(l.Path(name), src, d)
	return st, src, err
}

func readSteps(label string, src []byte, d *netfile.Design) (*steps.Steps, error) {
	return steps.ReadWith(label, src, d.Netlist, steps.Options{FoldCase: d.FoldCase})
}

// join puts two errors' lists together, in order of position.
func join(a, b error) error {
	var la, lb diag.List
	if b == nil || !errors.As(a, &la) || !errors.As(b, &lb) {
		return a
	}
	all := append(append(diag.List(nil), la...), lb...)
	return all.Err()
}

// includer gives a netlist's reader its include statements' files: each
// relative to the file that includes it, inside the loader's file system
// (never out of a served folder), within MaxIncludes and MaxIncludeBytes.
func (l *Loader) includer(label, name string) func(file, inc string) (string, []byte, error) {
	opened := map[string]string{label: name} // every file read for this design, by label
	count, bytes := 0, 0
	return func(file, inc string) (string, []byte, error) {
		from, ok := opened[file]
		if !ok {
			return "", nil, fail(file, "cannot include %q: this file was not read through the loader", inc)
		}
		target, err := l.relative(from, inc)
		if err != nil {
			return "", nil, fail(file, "cannot include %q: %v", inc, err)
		}
		tl := l.Path(target)
		if count++; count > MaxIncludes {
			return tl, nil, fail(file, "cannot include %q: more than the limit of %d included files", inc, MaxIncludes)
		}
		src, err := l.ReadFile(target)
		if err != nil {
			return tl, nil, err
		}
		if bytes += len(src); bytes > MaxIncludeBytes {
			return tl, nil, fail(file, "cannot include %q: the included files pass the limit of %s in all", inc, diag.SizeString(MaxIncludeBytes))
		}
		opened[tl] = target
		return tl, src, nil
	}
}

// relative resolves an include's name against the file that includes it.
func (l *Loader) relative(from, inc string) (string, error) {
	if inc == "" {
		return "", errors.New("no file named")
	}
	if demo, ok := CutDemo(from); ok {
		p := path.Join(path.Dir(demo), filepath.ToSlash(inc))
		if path.IsAbs(inc) || !fs.ValidPath(p) {
			return "", errors.New("it leads out of the embedded demos")
		}
		return DemoPrefix + p, nil
	}
	if l.where == onHost {
		if filepath.IsAbs(inc) {
			return inc, nil
		}
		return filepath.Join(filepath.Dir(from), inc), nil
	}
	slashed := filepath.ToSlash(inc)
	p := path.Join(path.Dir(from), slashed)
	if path.IsAbs(slashed) || filepath.IsAbs(inc) || !fs.ValidPath(p) {
		return "", errors.New("it leads out of the folder the design was loaded from")
	}
	return p, nil
}
