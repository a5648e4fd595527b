// Package outfile writes the files railyard produces (traces, waveforms)
// so that they cannot hurt: a path is checked before anything is simulated
// (never one of the run's own inputs, never anything but a regular file,
// its folder must exist), the content goes to a temporary file beside the
// path, and only a complete file is renamed into place. A temporary file is
// removed on error, and on SIGINT or SIGTERM once HandleSignals is in
// force. Every error names the user's path, never the temporary file.
package outfile

import (
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"os/signal"
	"path/filepath"
	"sync"
	"syscall"

	"railyard/switchsim/load"
)

// Keep is a file an output must not replace: one of the run's inputs or
// another of its outputs. What words it for the error ("the design").
type Keep struct {
	Path string
	What string
}

// Error is a refused or failed output, naming the user's path.
type Error struct {
	Path string
	Msg  string
}

func (e *Error) Error() string { return e.Path + ": " + e.Msg }

// Check reports why path must not be written, or nil: it is empty, it is
// one of keep (the same file by name or by identity), it exists and is not
// a regular file (a symbolic link, a device, a folder, a pipe), or its
// folder does not exist. Names of the form demo:NAME in keep are embedded
// files and never collide.
func Check(path string, keep ...Keep) error {
	if path == "" {
		return &Error{path, "no file named"}
	}
	if isDemo(path) {
		return &Error{path, "demo: names an embedded design, not a file to write"}
	}
	fi, err := os.Lstat(path)
	switch {
	case err == nil:
		if kind := notRegular(fi.Mode()); kind != "" {
			return &Error{path, "is " + kind + ", not a regular file: refusing to replace it"}
		}
	case errors.Is(err, fs.ErrNotExist):
		dir := filepath.Dir(path)
		di, derr := os.Stat(dir)
		if derr != nil {
			return &Error{path, "its folder " + dir + " does not exist"}
		}
		if !di.IsDir() {
			return &Error{path, dir + " is not a folder"}
		}
	default:
		return &Error{path, "cannot check it: " + cause(err)}
	}
	for _, k := range keep {
		if same(path, k.Path) {
			return &Error{path, "is " + k.What + " (" + k.Path + "): refusing to write over it"}
		}
	}
	return nil
}

// notRegular words a file mode that is not a regular file, or "".
func notRegular(m fs.FileMode) string {
	switch {
	case m.IsRegular():
		return ""
	case m&fs.ModeSymlink != 0:
		return "a symbolic link"
	case m.IsDir():
		return "a folder"
	case m&fs.ModeCharDevice != 0:
		return "a character device"
	case m&fs.ModeDevice != 0:
		return "a device"
	case m&fs.ModeNamedPipe != 0:
		return "a named pipe"
	case m&fs.ModeSocket != 0:
		return "a socket"
	}
	return "not a regular file"
}

// same reports whether a and b name one file: the same cleaned absolute
// path, or (when both exist) the same file by identity, which catches hard
// links and other spellings through symbolic links of folders.
func same(a, b string) bool {
	if b == "" || isDemo(b) {
		return false
	}
	aa, err1 := filepath.Abs(a)
	bb, err2 := filepath.Abs(b)
	if err1 == nil && err2 == nil && aa == bb {
		return true
	}
	fa, err1 := os.Stat(a)
	fb, err2 := os.Stat(b)
	return err1 == nil && err2 == nil && os.SameFile(fa, fb)
}

// cause strips the path from an *fs.PathError, so that a message never
// names a temporary file.
func cause(err error) string {
	var pe *fs.PathError
	if errors.As(err, &pe) {
		return pe.Err.Error()
	}
	var le *os.LinkError
	if errors.As(err, &le) {
		return le.Err.Error()
	}
	return err.Error()
}

// File is an output being written: a temporary file beside its path until
// Commit renames it into place.
type File struct {
	path string
	tmp  string
	f    *os.File
	keep []Keep
	done bool
	err  error // the first write error
}

// Create checks path (as Check) and opens a temporary file beside it.
func Create(path string, keep ...Keep) (*File, error) {
	if err := Check(path, keep...); err != nil {
		return nil, err
	}
	f, err := os.CreateTemp(filepath.Dir(path), "."+filepath.Base(path)+".tmp*")
	if err != nil {
		return nil, &Error{path, "cannot write in its folder: " + cause(err)}
	}
	o := &File{path: path, tmp: f.Name(), f: f, keep: keep}
	register(o)
	return o, nil
}

// Path is the path the file will have.
func (o *File) Path() string { return o.path }

// Write writes to the temporary file; an error names the path.
func (o *File) Write(p []byte) (int, error) {
	if o.err != nil {
		return 0, o.err
	}
	n, err := o.f.Write(p)
	if err != nil {
		o.err = &Error{o.path, "writing: " + cause(err)}
		return n, o.err
	}
	return n, nil
}

// Commit syncs the temporary file and renames it over the path, which is
// checked again first (it may have become a link or a device meanwhile).
// On any error the temporary file is removed and the path left as it was.
func (o *File) Commit() error {
	if o.done {
		return &Error{o.path, "already closed"}
	}
	o.done = true
	defer unregister(o)
	fail := func(err error) error {
		o.f.Close()
		os.Remove(o.tmp)
		return err
	}
	if o.err != nil {
		return fail(o.err)
	}
	if err := o.f.Sync(); err != nil {
		return fail(&Error{o.path, "writing: " + cause(err)})
	}
	if err := o.f.Close(); err != nil {
		return fail(&Error{o.path, "writing: " + cause(err)})
	}
	if err := os.Chmod(o.tmp, 0o644); err != nil {
		return fail(&Error{o.path, "writing: " + cause(err)})
	}
	if err := Check(o.path, o.keep...); err != nil {
		return fail(err)
	}
	mu.Lock() // a signal arriving now waits for the rename, then finds nothing to remove
	err := os.Rename(o.tmp, o.path)
	mu.Unlock()
	if err != nil {
		os.Remove(o.tmp)
		return &Error{o.path, "cannot put it in place: " + cause(err)}
	}
	return nil
}

// Abort removes the temporary file and leaves the path as it was. It is
// harmless after Commit.
func (o *File) Abort() {
	if o.done {
		return
	}
	o.done = true
	o.f.Close()
	os.Remove(o.tmp)
	unregister(o)
}

// Write creates path through fn atomically: path is either left as it
// was or replaced whole by what fn wrote.
func Write(path string, keep []Keep, fn func(io.Writer) error) error {
	o, err := Create(path, keep...)
	if err != nil {
		return err
	}
	if err := fn(o); err != nil {
		o.Abort()
		var oe *Error
		if errors.As(err, &oe) {
			return err
		}
		return &Error{path, cause(err)}
	}
	return o.Commit()
}

// The temporary files in progress, removed by the signal handler.
var (
	mu      sync.Mutex
	pending = map[*File]bool{}
)

func register(o *File) {
	mu.Lock()
	pending[o] = true
	mu.Unlock()
}

func unregister(o *File) {
	mu.Lock()
	delete(pending, o)
	mu.Unlock()
}

// pendingFiles is the number of temporary files in progress (for tests).
func pendingFiles() int {
	mu.Lock()
	defer mu.Unlock()
	return len(pending)
}

// HandleSignals removes every temporary file in progress when SIGINT or
// SIGTERM arrives, then exits with 128 plus the signal's number (130,
// 143: common practice for shells). A command calls it before writing and
// calls the returned stop when done; stop restores the default handling.
func HandleSignals() (stop func()) {
	ch := make(chan os.Signal, 1)
	signal.Notify(ch, os.Interrupt, syscall.SIGTERM)
	quit := make(chan struct{})
	go func() {
		select {
		case sig := <-ch:
			mu.Lock() // held until exit: no rename can follow the removal
			for o := range pending {
				os.Remove(o.tmp)
			}
			code := 130
			if sig == syscall.SIGTERM {
				code = 143
			}
			fmt.Fprintf(os.Stderr, "railyard: %s: stopped, nothing written\n", sig)
			os.Exit(code)
		case <-quit:
		}
	}()
	return func() {
		signal.Stop(ch)
		close(quit)
	}
}

// isDemo reports whether a name is an embedded demo (load.CutDemo).
func isDemo(name string) bool {
	_, ok := load.CutDemo(name)
	return ok
}
