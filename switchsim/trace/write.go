package trace

import (
	"bufio"
	"bytes"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"runtime"
	"strconv"
	"strings"
	"sync"
	"time"

	"railyard/switchsim/diag"
	"railyard/switchsim/load"
	"railyard/switchsim/outfile"
	"railyard/switchsim/session"
)

// Options set what a Writer records.
type Options struct {
	// MaxBytes caps the trace's size: once the actions written would pass
	// it, no later action is written (the trace stays a replayable prefix
	// of the session, ending in a capped line). 0 means DefaultMaxBytes.
	MaxBytes int64
	// DesignName and StepsName are the names the trace gives the design
	// and its steps; "" names them relative to the saved trace's folder. A
	// server gives names relative to its designs folder, which `replay
	// --designs` searches.
	DesignName, StepsName string
	// Created is the session's start time (zero: now).
	Created time.Time
}

// Writer is a session.Recorder that streams the session's trace to a
// spool file as actions happen; Save writes the whole trace where asked.
type Writer struct {
	mu      sync.Mutex
	s       *session.Session
	opt     Options
	dir     string // where the spool lives
	spool   *os.File
	named   string // the spool's name while it still has one (where an open file cannot be removed)
	bw      *bufio.Writer
	buf     bytes.Buffer
	size    int64 // body bytes written
	limit   int64 // body bytes allowed
	actions int
	skipped int
	why     string // why the trace was capped
	err     error
}

// Start makes a Writer for s and attaches it, which records the start at
// once. The spool lives in dir (where the trace will be saved, so that it
// takes the same disk), or the system's temporary folder when dir is "";
// it has no name once opened, so nothing is left behind by a crash.
func Start(s *session.Session, dir string, opt Options) (*Writer, error) {
	if opt.MaxBytes <= 0 {
		opt.MaxBytes = DefaultMaxBytes
	}
	if opt.Created.IsZero() {
		opt.Created = time.Now()
	}
	if dir == "" {
		dir = os.TempDir()
	}
	f, err := os.CreateTemp(dir, ".railyard-trace-*.spool")
	if err != nil {
		return nil, fmt.Errorf("cannot keep a trace in %s: %v", dir, unwrapPath(err))
	}
	w := &Writer{s: s, opt: opt, dir: dir, spool: f, bw: bufio.NewWriterSize(f, 64<<10)}
	if os.Remove(f.Name()) != nil {
		w.named = f.Name() // removed by Close instead
	}
	// The header and the end lines take some of the cap: reserve it.
	w.limit = opt.MaxBytes - int64(len(w.header("/"+strings.Repeat("x", 512)))) - 512
	runtime.AddCleanup(w, func(f *os.File) { f.Close() }, f)
	if err := s.Attach(w); err != nil {
		w.Close()
		return nil, err
	}
	return w, nil
}

func unwrapPath(err error) error {
	var pe *os.PathError
	if errors.As(err, &pe) {
		return pe.Err
	}
	return err
}

// Record writes one action (session.Recorder).
func (w *Writer) Record(s *session.Session, e *session.Event) {
	w.mu.Lock()
	defer w.mu.Unlock()
	if w.err != nil {
		return
	}
	if w.skipped > 0 {
		w.skipped++
		return
	}
	w.buf.Reset()
	w.format(&w.buf, e)
	if w.size+int64(w.buf.Len()) > w.limit {
		w.skipped, w.why = 1, fmt.Sprintf("the trace reached its cap of %s", diag.SizeString(int(w.opt.MaxBytes)))
		return
	}
	if long := longestLine(w.buf.Bytes()); long > MaxLine {
		w.skipped, w.why = 1, fmt.Sprintf("action %d has a line of %d bytes, over the %s a trace line may hold", e.Seq, long, diag.SizeString(MaxLine))
		return
	}
	if _, err := w.bw.Write(w.buf.Bytes()); err != nil {
		w.err = fmt.Errorf("keeping the trace: %v", unwrapPath(err))
		return
	}
	w.size += int64(w.buf.Len())
	w.actions++
}

func longestLine(b []byte) int {
	long := 0
	for len(b) > 0 {
		i := bytes.IndexByte(b, '\n')
		if i < 0 {
			i = len(b)
		}
		long = max(long, i)
		b = b[min(i+1, len(b)):]
	}
	return long
}

// format writes one action and what it did.
func (w *Writer) format(b *bytes.Buffer, e *session.Event) {
	nl := w.s.Netlist()
	fmt.Fprintf(b, "\naction %d %s\n", e.Seq, w.s.ActionString(e.Action))
	if e.Action.Kind == session.Back {
		return
	}
	fmt.Fprintf(b, "  rounds %d\n", e.Rounds)
	for _, c := range e.Changes {
		b.WriteString("  r ")
		b.WriteString(changeKey(c.Round, nl.NodeName(c.Node), c.NodeState))
		b.WriteByte(' ')
		b.WriteString(formatDelay(c.Delay))
		b.WriteByte('\n')
	}
	for _, c := range e.Checks {
		b.WriteString("  check " + checkKey(nl.NodeName(c.Node), c) + "\n")
	}
	for _, wr := range e.Warnings {
		b.WriteString("  warn " + warnKey(string(wr.Kind), nl.NodeName(wr.Node)) + " " + diag.Printable(wr.Message) + "\n")
	}
}

// header is the trace's header as saved at path.
func (w *Writer) header(path string) string {
	s := w.s
	var b strings.Builder
	p := func(f string, a ...any) { fmt.Fprintf(&b, f, a...) }
	p("# railyard session trace; replay with: railyard replay FILE\n")
	p("%s%d\n", magicPrefix, version)
	design := w.opt.DesignName
	if design == "" {
		design = relName(path, s.DesignPath())
	}
	p("design %s\n", design)
	p("design-sha256 %s\n", s.DesignHash())
	if s.StepsPath() != "" {
		st := w.opt.StepsName
		if st == "" {
			st = relName(path, s.StepsPath())
		}
		p("steps %s\n", st)
		p("steps-sha256 %s\n", s.StepsHash())
	} else {
		p("steps -\n")
	}
	p("mode %s\n", s.Options().Mode)
	p("full-swing %s\n", yesNo(s.Options().FullSwing))
	p("tech %s\n", techString(s.Netlist().Tech))
	if d := s.Design(); d.Format != "" && d.Format != "sw" {
		// A netlist's reading depends on options a .sw design has no use for.
		p("format %s\n", d.Format)
		if rw := readWords(d.Options); rw != "" {
			p("read %s\n", rw)
		}
		if in := s.Netlist().Inputs(); len(in) > 0 {
			names := make([]string, len(in))
			for i, n := range in {
				names[i] = word(s.Netlist().DisplayName(n))
			}
			p("inputs %s\n", strings.Join(names, " "))
		}
	}
	if c := s.Corner(); c != "" {
		p("corner %s\n", c)
	}
	if o := s.Options(); o.MarginCheck {
		p("min-margin %s\n", strconv.FormatFloat(o.MinMargin, 'g', -1, 64))
	}
	if s.Options().Glitches {
		p("glitches yes\n")
	}
	if ws := s.Watched(); len(ws) > 0 {
		names := make([]string, len(ws))
		for i, n := range ws {
			names[i] = word(s.Netlist().NodeName(n))
		}
		p("watch %s\n", strings.Join(names, " "))
	}
	p("created %s\n", w.opt.Created.UTC().Format(time.RFC3339))
	return b.String()
}

// relName names file as seen from the folder of the trace at tracePath:
// relative when the two share a folder no more than two levels above the
// trace (so that a project folder copied whole still replays), with
// forward slashes; otherwise absolute; embedded names as they are.
func relName(tracePath, file string) string {
	if isDemo(file) {
		return file
	}
	if tracePath == "" {
		return filepath.ToSlash(file)
	}
	absFile, err1 := filepath.Abs(file)
	absDir, err2 := filepath.Abs(filepath.Dir(tracePath))
	if err1 != nil || err2 != nil {
		return filepath.ToSlash(file)
	}
	if rel, err := filepath.Rel(absDir, absFile); err == nil {
		rel = filepath.ToSlash(rel)
		up := 0
		for strings.HasPrefix(rel[3*up:], "../") {
			up++
		}
		if up <= 2 {
			return rel
		}
	}
	return filepath.ToSlash(absFile)
}

// Options are the options the Writer was started with (defaults filled
// in): what a session rebuilt from this one (session.Remode) starts its
// own trace with, so that it names the design the same way.
func (w *Writer) Options() Options { return w.opt }

// SpoolDir is the folder the spool was made in (Start's dir, or the
// temporary folder): where a rebuilt session's trace spools too, on the
// same disk and under the same quota.
func (w *Writer) SpoolDir() string { return w.dir }

// Actions is the number of actions written: the start, sets, steps and
// backs, as the trace's end line says and replay counts.
func (w *Writer) Actions() int {
	w.mu.Lock()
	defer w.mu.Unlock()
	return w.actions
}

// Capped reports whether the cap was reached, how many actions were left
// out since, and why.
func (w *Writer) Capped() (capped bool, skipped int, why string) {
	w.mu.Lock()
	defer w.mu.Unlock()
	return w.skipped > 0, w.skipped, w.why
}

// Saved says what Save wrote.
type Saved struct {
	Path    string
	Actions int // actions written (the end line's count)
	Skipped int // actions left out for the cap
	Why     string
}

// Save writes the whole trace recorded so far to path, atomically and with
// the output checks (never over the design, its steps or anything that is
// not a regular file; README, "Output files"). Recording goes on; a later
// Save writes the longer trace.
func (w *Writer) Save(path string, keep ...outfile.Keep) (Saved, error) {
	w.mu.Lock()
	defer w.mu.Unlock()
	if w.err != nil {
		return Saved{}, &outfile.Error{Path: path, Msg: w.err.Error()}
	}
	if err := w.bw.Flush(); err != nil {
		w.err = fmt.Errorf("keeping the trace: %v", unwrapPath(err))
		return Saved{}, &outfile.Error{Path: path, Msg: w.err.Error()}
	}
	keep = append(keep, Inputs(w.s)...)
	err := outfile.Write(path, keep, func(out io.Writer) error { return w.writeTo(out, path) })
	if err != nil {
		return Saved{}, err
	}
	return w.saved(path), nil
}

// WriteTo writes the whole trace recorded so far to out, naming the design
// and steps relative to the folder of at (the path the trace will have),
// or as the session opened them when at is "". It is for a caller that
// puts the file in place itself (a server's save folder); Save is the
// checked, atomic way to a path.
func (w *Writer) WriteTo(out io.Writer, at string) (Saved, error) {
	w.mu.Lock()
	defer w.mu.Unlock()
	if w.err == nil {
		if err := w.bw.Flush(); err != nil {
			w.err = fmt.Errorf("keeping the trace: %v", unwrapPath(err))
		}
	}
	if w.err != nil {
		return Saved{}, w.err
	}
	if err := w.writeTo(out, at); err != nil {
		return Saved{}, err
	}
	return w.saved(at), nil
}

func (w *Writer) saved(path string) Saved {
	return Saved{Path: path, Actions: w.actions, Skipped: w.skipped, Why: w.why}
}

// writeTo writes the header, the spooled actions and the end (lock held,
// spool flushed).
func (w *Writer) writeTo(out io.Writer, at string) error {
	if _, err := io.WriteString(out, w.header(at)); err != nil {
		return err
	}
	if _, err := io.Copy(out, io.NewSectionReader(w.spool, 0, w.size)); err != nil {
		return err
	}
	tail := "\n"
	if w.skipped > 0 {
		tail += fmt.Sprintf("# %s: the %d actions after these were not written\ncapped %d\n", diag.Printable(w.why), w.skipped, w.skipped)
	}
	tail += fmt.Sprintf("end %d\n", w.actions)
	_, err := io.WriteString(out, tail)
	return err
}

// Close releases the spool. The Writer records nothing more.
func (w *Writer) Close() error {
	w.mu.Lock()
	defer w.mu.Unlock()
	if w.err == nil {
		w.err = errors.New("the trace was closed")
	}
	err := w.spool.Close()
	if w.named != "" {
		os.Remove(w.named)
	}
	return err
}

// Inputs are the files of a session that no output may replace: the
// design and its steps.
func Inputs(s *session.Session) []outfile.Keep {
	keep := []outfile.Keep{{Path: s.DesignPath(), What: "the design"}}
	if p := s.StepsPath(); p != "" {
		keep = append(keep, outfile.Keep{Path: p, What: "the steps file"})
	}
	return keep
}

// Of returns the Writer attached to s, or nil.
func Of(s *session.Session) *Writer {
	for _, r := range s.Recorders() {
		if w, ok := r.(*Writer); ok {
			return w
		}
	}
	return nil
}

// Write writes the trace of s (recorded by its Writer) to out, names as
// for Writer.WriteTo.
func Write(s *session.Session, out io.Writer, at string) (Saved, error) {
	w := Of(s)
	if w == nil {
		return Saved{}, ErrNoTrace
	}
	return w.WriteTo(out, at)
}

// ErrNoTrace is returned by Save for a session that records no trace.
var ErrNoTrace = errors.New("this session records no trace (it was opened without one)")

// Save writes the trace of s (recorded by its Writer) to path: what the
// explorer's save prompt and the server call.
func Save(s *session.Session, path string, keep ...outfile.Keep) (Saved, error) {
	w := Of(s)
	if w == nil {
		return Saved{}, ErrNoTrace
	}
	return w.Save(path, keep...)
}

// isDemo reports whether a name is an embedded demo (load.CutDemo).
func isDemo(name string) bool {
	_, ok := load.CutDemo(name)
	return ok
}
