package sshserve

import (
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"unicode"

	"railyard/switchsim/load"
	"railyard/switchsim/netfile"
)

// DesignExt is the suffix of the design files served from the folder; a
// name given without an extension is looked up with it.
const DesignExt = ".sw"

// catalog resolves the names a client may ask for: files in one folder, and
// the embedded demos. Every file is opened through an os.Root of the
// folder (the loader's Root), so that no name and no symbolic link leads
// out of it, and what resolve looked at is what the session reads: there
// is no gap between a check of a path and its open.
type catalog struct {
	root     string       // the folder, with symlinks resolved (for logs; stripped from messages)
	files    *load.Loader // the folder, opened
	demos    func() []string
	maxBytes int64
}

// target is a resolved design.
type target struct {
	Name   string       // as listed: a file name without .sw, or demo:NAME
	Design string       // the name to open through Files: a file inside the folder, or demo:NAME
	Steps  string       // the default steps, a file inside the folder; empty for none
	Files  *load.Loader // what Design and Steps are opened through
}

func newCatalog(dir string, demos func() []string, maxBytes int64, read netfile.ReadOptions) (*catalog, error) {
	abs, err := filepath.Abs(dir)
	if err != nil {
		return nil, err
	}
	root, err := filepath.EvalSymlinks(abs)
	if err != nil {
		return nil, err
	}
	fi, err := os.Stat(root)
	if err != nil {
		return nil, err
	}
	if !fi.IsDir() {
		return nil, fmt.Errorf("%s: not a folder", dir)
	}
	r, err := os.OpenRoot(root)
	if err != nil {
		return nil, err
	}
	files := load.Root(r, load.Options{MaxBytes: int(min(maxBytes, 1<<30)), ReadOptions: read})
	return &catalog{root: root, files: files, demos: demos, maxBytes: maxBytes}, nil
}

// errRefused marks a name refused for where it points, not for being absent.
var errRefused = errors.New("refused")

// resolve turns a requested name into a design to open. File names are
// looked up in the folder only: no separators, no "..", no absolute paths,
// and no symbolic link out of the folder (the root refuses it).
func (c *catalog) resolve(name string) (target, error) {
	if demo, ok := load.CutDemo(name); ok {
		if slices.Contains(c.demos(), demo) {
			return target{Name: name, Design: name, Files: c.files}, nil
		}
		return target{}, fmt.Errorf("%q: no such demo (try one listed by the picker)", name)
	}
	if err := plainName(name); err != nil {
		return target{}, err
	}
	file := name
	if !load.Known(file) {
		file += DesignExt
	}
	if err := c.inside(file); err != nil {
		if errors.Is(err, fs.ErrNotExist) {
			return target{}, fmt.Errorf("%q: no such design here", name)
		}
		return target{}, fmt.Errorf("%q: %w", name, err)
	}
	t := target{Name: strings.TrimSuffix(file, DesignExt), Design: file, Files: c.files}
	// The default steps are found the way the session finds them (beside
	// the design, through the same root); they too must stay inside.
	if st, ok := c.files.DefaultSteps(file); ok {
		if err := c.inside(st); err != nil {
			return target{}, fmt.Errorf("%q: its steps file: %w", name, err)
		}
		t.Steps = st
	}
	return t, nil
}

// plainName refuses anything but a bare file name.
func plainName(name string) error {
	switch {
	case name == "":
		return errors.New("no design named")
	case len(name) > 255:
		return fmt.Errorf("%w: a design name is at most 255 bytes", errRefused)
	case filepath.IsAbs(name) || strings.HasPrefix(name, "/") || strings.HasPrefix(name, `\`):
		return fmt.Errorf("%w: %q is an absolute path; give a name from the list", errRefused, name)
	case strings.Contains(name, ".."):
		return fmt.Errorf("%w: %q leaves the designs folder; give a name from the list", errRefused, name)
	case strings.ContainsAny(name, `/\`) || strings.ContainsRune(name, filepath.Separator):
		return fmt.Errorf("%w: %q has a path separator; give a name from the list", errRefused, name)
	case strings.HasPrefix(name, "."):
		return fmt.Errorf("%w: %q is a hidden file", errRefused, name)
	}
	for _, r := range name {
		if unicode.IsControl(r) {
			return fmt.Errorf("%w: a design name holds no control characters", errRefused)
		}
	}
	return nil
}

// inside opens file through the root and checks that what it opened is a
// regular file within the size bound.
func (c *catalog) inside(file string) error {
	fi, err := c.files.Stat(file)
	if err != nil {
		if errors.Is(err, fs.ErrNotExist) {
			return err
		}
		return fmt.Errorf("%w: it points outside the designs folder or cannot be opened", errRefused)
	}
	if !fi.Mode().IsRegular() {
		return fmt.Errorf("%w: not a regular file", errRefused)
	}
	if fi.Size() > c.maxBytes {
		return fmt.Errorf("%w: %d bytes, over the served limit of %d", errRefused, fi.Size(), c.maxBytes)
	}
	return nil
}

// list is what the picker offers: the folder's designs that resolve, then the demos.
func (c *catalog) list() []string {
	var names []string
	entries, _ := c.files.ReadDir(".")
	for _, e := range entries {
		n := e.Name()
		if !load.Known(n) || strings.HasPrefix(n, ".") {
			continue
		}
		if t, err := c.resolve(n); err == nil {
			names = append(names, t.Name)
		}
	}
	slices.Sort(names)
	for _, d := range c.demos() {
		names = append(names, load.DemoPrefix+d)
	}
	return names
}
