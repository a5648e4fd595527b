package netfile

import (
	_ "embed"
	"sync"

	"railyard/switchsim/diag"
)

// LibraryFile is the name the built-in library's positions are given in.
const LibraryFile = "builtin:cells.sw"

//go:embed lib/cells.sw
var librarySource []byte

var library = sync.OnceValues(func() (map[string]*cellDef, error) {
	lim := DefaultLimits()
	errs := diag.NewSink(lim.Errors)
	t := parseTree(LibraryFile, scanLines(LibraryFile, librarySource, lim.LineLen, errs), errs)
	c := &checker{file: LibraryFile, lim: lim, errs: errs, lib: true}
	p := c.check(t)
	for _, s := range t.Stmts {
		if s.Kind != "" && s.Kind != "cell" {
			errs.Add(at(LibraryFile, s.Line, s.Col), "the library holds only cells")
		}
	}
	if errs.Any() {
		return nil, errs.Err()
	}
	return p.cells, nil
})

// LibrarySource returns the built-in cell library's text.
func LibrarySource() []byte { return append([]byte(nil), librarySource...) }

// LibraryCells lists the built-in cells by name with their ports.
func LibraryCells() map[string][]string {
	cells, err := library()
	if err != nil {
		return nil
	}
	out := make(map[string][]string, len(cells))
	for n, cd := range cells {
		out[n] = append([]string(nil), cd.ports...)
	}
	return out
}
