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

// errWaveCap is what writing a VCD past the server's cap meets.
var errWaveCap = errors.New("the VCD passed the server's cap")

// capWriter passes at most left bytes on, then fails with errWaveCap.
type capWriter struct {
	w    io.Writer
	left int64
}

func (c *capWriter) Write(p []byte) (int, error) {
	if int64(len(p)) > c.left {
		c.left = -1
		return 0, errWaveCap
	}
	c.left -= int64(len(p))
	return c.w.Write(p)
}

// save is the explorer's tui.SaveFunc, and what keeps the trace at the end.
// A VCD is written from the session's whole history and grows with it, so
// it is capped (Config.MaxWave): past the cap the save is refused, and
// nothing is written (the temporary file is removed); the trace has a cap
// of its own and is always saved.
func (f *saves) save(kind tui.SaveKind, write func(io.Writer) error) (string, error) {
	if f.dir == "" {
		return "", errNoFiles
	}
	shown := f.shown(kind)
	var werr error
	_, err := tui.SaveInDir(f.dir, f.name)(kind, func(w io.Writer) error {
		if kind == tui.SaveVCD {
			w = &capWriter{w: w, left: f.srv.cfg.MaxWave}
		}
		werr = write(w)
		return werr
	})
	if err != nil && errors.Is(werr, errWaveCap) {
		max := f.srv.cfg.MaxWave
		f.srv.log.Warn("save refused", "event", "wave-cap", "user", diag.Printable(f.user), "session", f.session,
			"kind", kind.String(), "size", max)
		return "", fmt.Errorf("it would pass this server's cap of %s for a VCD, so nothing was written (s saves the trace, which replays the session)",
			diag.SizeString(int(max)))
	}
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
		switch kind {
		case tui.SaveVCD:
			v.vcd = shown
		case tui.SaveTrace:
			v.trace = shown
		} // a design with sizes tried (tui.SaveDesign) is neither
	})
	f.srv.log.Info("file saved", "user", diag.Printable(f.user), "session", f.session,
		"kind", kind.String(), "file", shown)
	if replaced && kind == tui.SaveVCD {
		shown += " (replacing the one saved before)"
	}
	return shown, nil
}
