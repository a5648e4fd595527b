package sshserve

import (
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
	"time"
	"unicode"

	"railyard/switchsim/diag"
	"railyard/tui"
)

// saves is where one session's files go: Traces/USER/, under names the
// server chooses, never a path the user types. Both of a session's files
// are named DESIGN-DATE-TIME-ID (the time it opened, UTC; the joinable
// session id), with .trace or .vcd. A session has one trace, which each
// save and the session's end rewrite (it always holds the whole session),
// and one VCD, which a later save replaces (the status line says so): so a
// session puts at most two files on the server's disk.
type saves struct {
	srv     *Server
	v       *visit
	user    string // the SSH user, already a plain file name (validUser)
	session string // the joinable id
	dir     string // Traces/USER; empty when the server keeps no files
	stem    string
	written map[tui.SaveKind]bool
}

// errNoFiles is what a user who saves on a server without --traces reads.
var errNoFiles = errors.New("this server keeps no files")

// newSaves prepares user's folder for session id on design; with no Traces
// folder every save is refused with errNoFiles.
func (s *Server) newSaves(v *visit, user, design, id string, opened time.Time) (*saves, error) {
	f := &saves{srv: s, v: v, user: user, session: id, written: map[tui.SaveKind]bool{},
		stem: fmt.Sprintf("%s-%s-%s", fileStem(design), opened.UTC().Format("20060102-150405"), id)}
	if s.cfg.Traces == "" {
		return f, nil
	}
	dir := filepath.Join(s.cfg.Traces, user)
	if err := os.MkdirAll(dir, 0o750); err != nil {
		s.log.Error("traces folder", "path", dir, "error", err.Error())
		return nil, errors.New("cannot keep files for this user; ask the server's keeper")
	}
	f.dir = dir
	return f, nil
}

// fileStem is a design's name made into the start of a file name: demo:NAME
// becomes demo-NAME, and anything but letters, digits, '.', '_' and '-'
// (spaces, and characters that reorder or hide text) becomes '_'.
func fileStem(design string) string {
	return strings.Map(func(r rune) rune {
		switch {
		case r == ':':
			return '-'
		case r == '.' || r == '_' || r == '-', unicode.IsLetter(r), unicode.IsDigit(r):
			return r
		}
		return '_'
	}, design)
}

// name is the file name for kind, inside dir.
func (f *saves) name(kind tui.SaveKind) string { return f.stem + kind.Ext() }

// shown is how the user and the log read a file: USER/NAME, relative to
// the traces folder (the server's own paths are never shown).
func (f *saves) shown(kind tui.SaveKind) string {
	return diag.Printable(f.user) + "/" + f.name(kind)
}

// save is the explorer's tui.SaveFunc, and what keeps the trace at the end.
func (f *saves) save(kind tui.SaveKind, write func(io.Writer) error) (string, error) {
	if f.dir == "" {
		return "", errNoFiles
	}
	shown := f.shown(kind)
	var werr error
	_, err := tui.SaveInDir(f.dir, f.name)(kind, func(w io.Writer) error {
		werr = write(w)
		return werr
	})
	if err != nil {
		if werr != nil {
			err = werr
		}
		f.srv.log.Error("save failed", "user", diag.Printable(f.user), "session", f.session,
			"kind", kind.String(), "file", shown, "error", err.Error())
		return "", errors.New("the server could not write it")
	}
	replaced := f.written[kind]
	f.written[kind] = true
	f.v.set(func(v *visit) {
		if kind == tui.SaveVCD {
			v.vcd = shown
		} else {
			v.trace = shown
		}
	})
	f.srv.log.Info("file saved", "user", diag.Printable(f.user), "session", f.session,
		"kind", kind.String(), "file", shown)
	if replaced && kind == tui.SaveVCD {
		shown += " (replacing the one saved before)"
	}
	return shown, nil
}
