package cardfile_test

import (
	"errors"
	"fmt"
	"strings"
	"testing"
	"testing/fstest"

	sw "railyard/switchsim"
	"railyard/switchsim/cardfile"
	"railyard/switchsim/diag"
	"railyard/switchsim/netfile"
)

func read(t *testing.T, src string, opt cardfile.Options) *netfile.Design {
	t.Helper()
	d, err := cardfile.Read("t.sp", []byte(src), opt)
	if err != nil {
		t.Fatalf("read: %v", err)
	}
	return d
}

// readErr reads src expecting errors and returns them printed, one a line.
func readErr(t *testing.T, src string, opt cardfile.Options) string {
	t.Helper()
	_, err := cardfile.Read("t.sp", []byte(src), opt)
	if err == nil {
		t.Fatalf("read succeeded; want errors")
	}
	var l diag.List
	if !errors.As(err, &l) {
		t.Fatalf("error %T is not a diag.List: %v", err, err)
	}
	return err.Error()
}

func notes(d *netfile.Design) string {
	var b strings.Builder
	for _, n := range d.Notes {
		b.WriteString(n.Error() + "\n")
	}
	return b.String()
}

// mapOpener opens includes from an in-memory folder, relative to the
// including file.
func mapOpener(files fstest.MapFS) cardfile.Opener {
	return func(from, name string) (string, []byte, error) {
		p := name
		if i := strings.LastIndexByte(from, '/'); i >= 0 {
			p = from[:i+1] + name
		}
		b, err := files.ReadFile(p)
		return p, b, err
	}
}

var modes = []sw.Mode{sw.Ideal, sw.Physical}

func sprintf(f string, a ...any) string { return fmt.Sprintf(f, a...) }
