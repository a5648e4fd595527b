package load

import (
	"io/fs"
	"os"
	"path"
	"path/filepath"
	"strings"

	"railyard/designs"
)

// Entry is one design found by Walk.
type Entry struct {
	Design string // its name, as the loader takes it
	Format string // the format its extension chooses
	Steps  string // its default steps, "" when it has none
}

// Walk calls fn for every design under dir, in lexical order: each file
// whose extension is a design format's, with its default steps. Hidden
// files and folders (a name starting with '.') are passed over, and
// symbolic links to folders are not followed, so a walk ends. dir is a
// path on the host, a name inside the loader's folder ("." for all of
// it), or demo: for the embedded demos. An error from fn, or a folder
// that cannot be read, stops the walk and is returned.
func (l *Loader) Walk(dir string, fn func(Entry) error) error {
	visit := func(p string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		if strings.HasPrefix(d.Name(), ".") && d.Name() != "." && d.Name() != ".." {
			if d.IsDir() {
				return fs.SkipDir
			}
			return nil
		}
		if d.IsDir() || !Known(p) {
			return nil
		}
		e := Entry{Design: p}
		if f, ok := byExt(path.Ext(filepath.ToSlash(p))); ok {
			e.Format = f.Name
		}
		if st, ok := l.DefaultSteps(p); ok {
			e.Steps = st
		}
		return fn(e)
	}
	if demo, ok := CutDemo(dir); ok {
		if demo == "" {
			demo = "."
		}
		return fs.WalkDir(designs.FS, demo, func(p string, d fs.DirEntry, err error) error {
			return visit(DemoPrefix+p, d, err)
		})
	}
	switch l.where {
	case onHost:
		return filepath.WalkDir(dir, visit)
	case inRoot:
		return fs.WalkDir(l.root.FS(), dir, visit)
	}
	return fs.WalkDir(l.fsys, dir, visit)
}

// ReadDir lists one folder (not its subfolders) of the loader's file
// system, sorted by name: a host path, or a name inside the folder.
func (l *Loader) ReadDir(dir string) ([]fs.DirEntry, error) {
	switch l.where {
	case onHost:
		return os.ReadDir(dir)
	case inRoot:
		return fs.ReadDir(l.root.FS(), dir)
	}
	return fs.ReadDir(l.fsys, dir)
}
