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

	"railyard/switchsim/steps"
)

// DesignExt is the suffix of the design files served from the folder.
const DesignExt = ".sw"

// catalog resolves the names a client may ask for: files in one folder, and
// the embedded demos.
type catalog struct {
	root     string // the folder, with symlinks resolved
	demos    func() []string
	maxBytes int64
}

// target is a resolved design.
type target struct {
	Name   string // as listed: a file name without .sw, or demo:NAME
	Design string // a real path inside the folder, or demo:NAME
	Steps  string // the default steps, a real path inside the folder; empty for none
}

func newCatalog(dir string, demos func() []string, maxBytes int64) (*catalog, error) {
	abs, err := filepath.Abs(dir)
	if err != nil {
		return nil, fmt.Errorf("--designs: %w", err)
	}
	root, err := filepath.EvalSymlinks(abs)
	if err != nil {
		return nil, fmt.Errorf("--designs: %w", err)
	}
	fi, err := os.Stat(root)
	if err != nil {
		return nil, fmt.Errorf("--designs: %w", err)
	}
	if !fi.IsDir() {
		return nil, fmt.Errorf("--designs %s: not a folder", dir)
	}
	return &catalog{root: root, demos: demos, maxBytes: maxBytes}, nil
}

// errRefused marks a name refused for where it points, not for being absent.
var errRefused = errors.New("refused")

// resolve turns a requested name into a design to open. File names are
// looked up in the folder only: no separators, no "..", no absolute paths,
// and after following symlinks the file must still lie inside the folder.
func (c *catalog) resolve(name string) (target, error) {
	if demo, ok := strings.CutPrefix(name, "demo:"); ok {
		if slices.Contains(c.demos(), demo) {
			return target{Name: name, Design: name}, nil
		}
		return target{}, fmt.Errorf("%q: no such demo (try one listed by the picker)", name)
	}
	if err := plainName(name); err != nil {
		return target{}, err
	}
	file := name
	if !strings.HasSuffix(file, DesignExt) {
		file += DesignExt
	}
	real, err := c.inside(filepath.Join(c.root, file))
	if err != nil {
		if errors.Is(err, fs.ErrNotExist) {
			return target{}, fmt.Errorf("%q: no such design here", name)
		}
		return target{}, fmt.Errorf("%q: %w", name, err)
	}
	t := target{Name: strings.TrimSuffix(file, DesignExt), Design: real}
	// The default steps are found the way the session finds them (beside
	// the design as opened); they too must stay inside.
	if p, ok := steps.Default(real); ok {
		if t.Steps, err = c.inside(p); err != nil {
			return target{}, fmt.Errorf("%q: its steps file: %w", name, err)
		}
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

// inside resolves p's symlinks and checks that the result is a regular file
// inside the folder, within the size bound.
func (c *catalog) inside(p string) (string, error) {
	real, err := filepath.EvalSymlinks(p)
	if err != nil {
		if errors.Is(err, fs.ErrNotExist) {
			return "", err
		}
		return "", fmt.Errorf("%w: cannot be resolved", errRefused)
	}
	rel, err := filepath.Rel(c.root, real)
	if err != nil || rel == "." || rel == ".." || strings.HasPrefix(rel, ".."+string(filepath.Separator)) || filepath.IsAbs(rel) {
		return "", fmt.Errorf("%w: it points outside the designs folder", errRefused)
	}
	fi, err := os.Stat(real)
	if err != nil {
		return "", err
	}
	if !fi.Mode().IsRegular() {
		return "", fmt.Errorf("%w: not a regular file", errRefused)
	}
	if fi.Size() > c.maxBytes {
		return "", fmt.Errorf("%w: %d bytes, over the served limit of %d", errRefused, fi.Size(), c.maxBytes)
	}
	return real, nil
}

// list is what the picker offers: the folder's designs that resolve, then the demos.
func (c *catalog) list() []string {
	var names []string
	entries, _ := os.ReadDir(c.root)
	for _, e := range entries {
		n := e.Name()
		if !strings.HasSuffix(n, DesignExt) || strings.HasPrefix(n, ".") {
			continue
		}
		if t, err := c.resolve(n); err == nil {
			names = append(names, t.Name)
		}
	}
	slices.Sort(names)
	for _, d := range c.demos() {
		names = append(names, "demo:"+d)
	}
	return names
}
