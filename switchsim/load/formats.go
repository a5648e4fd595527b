package load

import (
	"fmt"
	"path"
	"path/filepath"
	"strings"

	"railyard/switchsim/cardfile"
	"railyard/switchsim/netfile"
	"railyard/switchsim/vfile"
)

// Reader reads one format's bytes into a design; file names the bytes in
// positions. Errors are a diag.List. A reader never opens files: the
// includes it needs come through opt.Include.
type Reader func(file string, src []byte, opt netfile.ReadOptions) (*netfile.Design, error)

// Format is a design file format.
type Format struct {
	Name string   // as --format takes it
	Desc string   // what it is, for messages
	Exts []string // the extensions that choose it, lower case, with the dot
	Read Reader   // nil: no reader yet
}

// formats is the registry of design readers. A reader plugs in here: its
// entry's Read is set to the reader's function (for example
// cardfile.Read), which takes the ReadOptions the loader fills.
var formats = []Format{
	{Name: "sw", Desc: "railyard designs", Exts: []string{".sw"}, Read: readSW},
	{Name: "netlist", Desc: "transistor netlist cards", Exts: []string{".sp", ".spice", ".cir", ".cdl", ".net", ".ckt"}, Read: cardfile.ReadWith},
	{Name: "verilog", Desc: "IEEE 1364 switch-level modules", Exts: []string{".v", ".vg"}, Read: vfile.ReadWith},
}

func readSW(file string, src []byte, _ netfile.ReadOptions) (*netfile.Design, error) {
	return netfile.Read(file, src)
}

// Formats lists the design formats in the order --format names them.
func Formats() []Format { return append([]Format(nil), formats...) }

// FormatNames lists the names --format takes.
func FormatNames() []string {
	var names []string
	for _, f := range formats {
		names = append(names, f.Name)
	}
	return names
}

// byExt finds the format an extension (with its dot, any case) chooses.
func byExt(ext string) (*Format, bool) {
	ext = strings.ToLower(ext)
	for i := range formats {
		for _, e := range formats[i].Exts {
			if e == ext {
				return &formats[i], true
			}
		}
	}
	return nil, false
}

// FormatOf is the format name's extension chooses.
func FormatOf(name string) (Format, bool) {
	f, ok := byExt(path.Ext(filepath.ToSlash(name)))
	if !ok {
		return Format{}, false
	}
	return *f, true
}

// Known reports whether name's extension is that of a design format
// (whether or not its reader is there yet).
func Known(name string) bool {
	_, ok := byExt(path.Ext(filepath.ToSlash(name)))
	return ok
}

// format picks name's reader: --format if given, else by extension, else
// the .sw reader (a design named without an extension is read as .sw).
func (l *Loader) format(name string) (*Format, error) {
	if l.opt.Format != "" {
		for i := range formats {
			if formats[i].Name == l.opt.Format {
				return &formats[i], nil
			}
		}
		return nil, fmt.Errorf("unknown format %q (want %s)", l.opt.Format, strings.Join(FormatNames(), ", "))
	}
	if f, ok := byExt(path.Ext(filepath.ToSlash(name))); ok {
		return f, nil
	}
	return &formats[0], nil
}

// CheckFormat reports an unknown --format name, so a command can refuse
// it before reading anything.
func CheckFormat(name string) error {
	_, err := (&Loader{opt: Options{Format: name}}).format("")
	return err
}
