package sshserve

import (
	"errors"
	"fmt"
	"io"
	"path/filepath"
	"runtime/debug"
	"strings"
	"sync/atomic"
	"time"

	tea "github.com/charmbracelet/bubbletea"
	"github.com/charmbracelet/lipgloss"
	"github.com/charmbracelet/ssh"
	"github.com/charmbracelet/x/ansi"
	"github.com/muesli/termenv"

	"railyard/switchsim/diag"
	"railyard/tui"
)

// handle is the innermost handler: it reads the SSH command and builds this
// connection's model.
//
//	(nothing)       the picker
//	NAME            a design in the folder (NAME or NAME.sw)
//	demo:NAME       an embedded demo
//	join ID         watch session ID, read-only
func (s *Server) handle(next ssh.Handler) ssh.Handler {
	return func(sess ssh.Session) {
		v := visitOf(sess)
		args := words(sess)
		switch {
		case len(args) == 0:
			v.set(func(v *visit) { v.kind = "picker" })
			s.serveHost(sess, v, "")
		case args[0] == "join":
			if len(args) != 2 {
				fail(sess, v, "usage", "usage: join SESSION-ID")
				return
			}
			s.serveViewer(sess, v, args[1])
		case len(args) == 1:
			s.serveHost(sess, v, args[0])
		default:
			fail(sess, v, "usage", "give one design name, demo:NAME, or join SESSION-ID")
		}
		next(sess)
	}
}

// serveHost runs the picker (name empty) or an explorer on the named design.
func (s *Server) serveHost(sess ssh.Session, v *visit, name string) {
	if !s.hostStarted() {
		fail(sess, v, "closing", "the server is stopping")
		return
	}
	defer s.hosts.Done()
	pty, _, _ := sess.Pty()
	noColor, ascii := clientLooks(sess, pty.Term)
	w, h := windowSize(pty.Window)
	root := &hostModel{srv: s, sess: sess, v: v, width: w, height: h,
		noColor: noColor, ascii: ascii, act: newActivity()}
	if name == "" {
		root.picker = newPicker(s.catalog.list(), root.width, root.height, ascii)
	} else {
		if err := root.open(name); err != nil {
			fail(sess, v, "design refused", err.Error())
			return
		}
	}
	defer root.end()
	msg, reason := s.run(sess, v, root, root.act, root.act.last)
	if root.failed.Load() || reason == "panic" {
		fail(sess, v, "panic", "internal error; this session is closed (the others go on)")
		return
	}
	// As the explorer does on a local terminal, the whole session's trace
	// is kept when it ends, also when the server ends it (idle).
	if err := root.save(); err != nil {
		fail(sess, v, "trace", err.Error())
		return
	}
	if root.saved != "" {
		fmt.Fprintf(sess, "railyard: trace saved as %s\n", root.saved)
	}
	if reason != "" {
		fail(sess, v, reason, msg)
	}
}

// serveViewer runs a read-only view of session id.
func (s *Server) serveViewer(sess ssh.Session, v *visit, id string) {
	h := s.registry.lookup(strings.ToLower(id))
	if h == nil {
		fail(sess, v, "no such session", fmt.Sprintf("no session %q is open here", id))
		return
	}
	v.set(func(v *visit) { v.kind, v.id, v.design = "viewer", h.ID, h.Design })
	pty, _, _ := sess.Pty()
	_, ascii := clientLooks(sess, pty.Term)
	w, ht := windowSize(pty.Window)
	m := newViewer(h, sess.Context().Done(), w, ht, ascii,
		func(r any) { s.logPanic(v, r, debug.Stack()) })
	act := newActivity()
	// A viewer watching an active host is not idle even if it types nothing.
	last := func() time.Time {
		own, host := act.last(), h.Hub.input.last()
		if host.After(own) {
			return host
		}
		return own
	}
	msg, reason := s.run(sess, v, m, act, last)
	if m.failed.Load() {
		reason, msg = "panic", "internal error; this session is closed (the others go on)"
	}
	if reason != "" {
		fail(sess, v, reason, msg)
		return
	}
	if m.ended {
		fmt.Fprintf(sess, "railyard: session %s has ended\n", h.ID)
	}
}

// windowSize is the client's window, or 80 x 24 where it says 0 (clients
// forced to allocate a terminal without one of their own, as ssh -tt does).
func windowSize(w ssh.Window) (int, int) {
	width, height := w.Width, w.Height
	if width <= 0 {
		width = 80
	}
	if height <= 0 {
		height = 24
	}
	return width, height
}

// clientLooks reads what the client's environment says about its terminal.
func clientLooks(sess ssh.Session, term string) (noColor, ascii bool) {
	utf8 := false
	for _, kv := range sess.Environ() {
		k, val, _ := strings.Cut(kv, "=")
		switch k {
		case "NO_COLOR":
			noColor = val != ""
		case "LANG", "LC_ALL", "LC_CTYPE":
			if u := strings.ToUpper(val); strings.Contains(u, "UTF-8") || strings.Contains(u, "UTF8") {
				utf8 = true
			}
		}
	}
	// Most SSH clients do not forward the locale; assume UTF-8 unless the
	// terminal is a bare one.
	if !utf8 && (term == "dumb" || term == "vt100" || term == "linux") {
		ascii = true
	}
	if term == "dumb" {
		noColor = true
	}
	return noColor, ascii
}

// activity is the time of a session's last input byte.
type activity struct{ t atomic.Int64 }

func newActivity() *activity {
	a := &activity{}
	a.touch()
	return a
}

func (a *activity) touch()          { a.t.Store(time.Now().UnixNano()) }
func (a *activity) last() time.Time { return time.Unix(0, a.t.Load()) }

// activityReader notes the time of every read that brings input.
type activityReader struct {
	r   io.Reader
	act *activity
}

func (r activityReader) Read(p []byte) (int, error) {
	n, err := r.r.Read(p)
	if n > 0 {
		r.act.touch()
	}
	return n, err
}

// run runs one program on the session: input and output are the SSH channel,
// window changes become WindowSizeMsgs, and a watchdog quits it when
// lastInput is older than the idle timeout. It returns a message and a reason
// when the server, not the user, ended it.
func (s *Server) run(sess ssh.Session, v *visit, m tea.Model, act *activity, lastInput func() time.Time) (msg, reason string) {
	p := tea.NewProgram(m,
		tea.WithInput(activityReader{sess, act}),
		tea.WithOutput(sess),
		tea.WithAltScreen(),
		tea.WithContext(sess.Context()),
		// The server's own signals are not the session's.
		tea.WithoutSignalHandler(),
	)
	done := make(chan struct{})
	defer close(done)

	_, winch, _ := sess.Pty()
	go func() {
		// Drain until the channel closes: the SSH request loop blocks on a
		// full window channel, so stopping early would stall the session.
		for {
			select {
			case w, ok := <-winch:
				if !ok {
					return
				}
				select {
				case <-done:
				default:
					act.touch()
					width, height := windowSize(w)
					p.Send(tea.WindowSizeMsg{Width: width, Height: height})
				}
			case <-sess.Context().Done():
				return
			}
		}
	}()

	var idled atomic.Bool
	if idle := s.cfg.IdleTimeout; idle > 0 {
		tick := min(max(idle/4, 10*time.Millisecond), 5*time.Second)
		go func() {
			t := time.NewTicker(tick)
			defer t.Stop()
			for {
				select {
				case <-done:
					return
				case <-t.C:
					if time.Since(lastInput()) >= idle {
						idled.Store(true)
						p.Quit()
						return
					}
				}
			}
		}()
	}

	_, err := p.Run()
	p.Kill() // restores nothing locally, but ends the renderer if Run left it
	switch {
	case idled.Load():
		return fmt.Sprintf("closed after %s without input", s.cfg.IdleTimeout), "idle"
	case errors.Is(err, tea.ErrProgramPanic):
		return "internal error; this session is closed (the others go on)", "panic"
	case err != nil && sess.Context().Err() == nil && !errors.Is(err, tea.ErrProgramKilled):
		s.log.Warn("program error", "user", v.user, "error", diag.Printable(err.Error()))
		return "the session stopped: " + err.Error(), "error"
	}
	return "", ""
}

// hostModel is the root model of a host session: the picker until a design
// is chosen, then the explorer. It guards the inner model against panics and
// publishes every frame to the session's hub for viewers.
type hostModel struct {
	srv            *Server
	sess           ssh.Session
	v              *visit
	width, height  int
	noColor, ascii bool
	act            *activity

	picker *picker
	inner  tea.Model
	host   *host  // the joinable session, once a design is open
	files  *saves // where its files go, once a design is open
	saved  string // the trace kept at the end, as the user reads it
	notice string
	// traceFull: the user was told that the trace stopped recording.
	traceFull bool
	failed    atomic.Bool
}

// open resolves name, registers a joinable session and builds the explorer.
func (m *hostModel) open(name string) error {
	t, err := m.srv.catalog.resolve(name)
	if err != nil {
		return err
	}
	h := m.srv.registry.add(m.sess.User(), t.Name, m.act)
	files, err := m.srv.newSaves(m.v, m.sess.User(), t.Name, h.ID, time.Now())
	if err != nil {
		m.srv.registry.remove(h)
		return err
	}
	req := ExplorerRequest{Name: t.Name, Design: t.Design, Steps: t.Steps, Files: t.Files,
		Width: m.width, Height: m.height, NoColor: m.noColor, ASCII: m.ascii,
		Renderer: m.renderer(), Banner: "session " + h.ID, Save: files.save,
		MaxTrace: m.srv.cfg.MaxTrace, TraceDir: files.dir}
	m.notice = fmt.Sprintf("session %s: others watch with 'join %s'", h.ID, h.ID)
	if files.dir != "" {
		m.notice += fmt.Sprintf("; s saves to %s/", diag.Printable(m.sess.User()))
	}
	inner, err := m.build(req)
	if err != nil {
		m.srv.registry.remove(h)
		var ke *keeperError
		if errors.As(err, &ke) {
			m.srv.log.Error("explorer refused", "user", diag.Printable(m.sess.User()), "design", diag.Printable(t.Name),
				"session", h.ID, "error", diag.Printable(ke.err.Error()))
		}
		// Never show the server's own paths.
		msg := strings.ReplaceAll(err.Error(), m.srv.catalog.root+string(filepath.Separator), "")
		return fmt.Errorf("%s: %s", t.Name, msg)
	}
	m.inner, m.host, m.picker, m.files = inner, h, nil, files
	m.v.set(func(v *visit) { v.kind, v.design, v.id = "explorer", diag.Printable(t.Name), h.ID })
	m.srv.log.Info("design opened", "user", diag.Printable(m.sess.User()), "design", diag.Printable(t.Name), "session", h.ID)
	// The first settle alone can fill a small cap.
	m.watchTrace()
	return nil
}

// traceWatcher is an explorer whose trace can stop recording (the railyard
// explorer: its trace.Writer reached the server's cap).
type traceWatcher interface {
	TraceFull() (capped bool, why string)
}

// watchTrace tells the user, once, that the session's trace has stopped
// recording, and logs it. It runs after every message the explorer takes,
// as every action is recorded while the explorer handles its message.
func (m *hostModel) watchTrace() tea.Cmd {
	tw, ok := m.inner.(traceWatcher)
	if m.traceFull || !ok {
		return nil
	}
	capped, why := tw.TraceFull()
	if !capped {
		return nil
	}
	m.traceFull = true
	max := m.srv.cfg.MaxTrace
	m.srv.log.Warn("trace full", "event", "trace-full", "user", diag.Printable(m.sess.User()),
		"session", m.host.ID, "size", max, "reason", diag.Printable(why))
	next, cmd := m.inner.Update(traceFullNotice(why, max, m.files.dir != ""))
	m.inner = next
	return cmd
}

// traceFullNotice words a stopped trace for the status line, and marks the
// header for the rest of the session. The trace says why it stopped: its
// cap (trace.Writer), or, rarely, an action with a line longer than a
// trace may hold.
func traceFullNotice(why string, max int64, keeps bool) tui.Notice {
	n := tui.Notice{Text: "trace full at " + diag.SizeString(int(max)), Mark: "trace full"}
	if !strings.Contains(why, "cap of") {
		n = tui.Notice{Text: "trace stopped (" + why + ")", Mark: "trace stopped"}
	}
	n.Text += ": later actions are not recorded"
	if keeps {
		n.Text += "; save now keeps what was recorded"
	}
	return n
}

// build calls the Explorer hook, turning its panics into errors.
func (m *hostModel) build(req ExplorerRequest) (model tea.Model, err error) {
	defer func() {
		if r := recover(); r != nil {
			m.srv.logPanic(m.v, r, debug.Stack())
			model, err = nil, errors.New("internal error opening the design")
		}
	}()
	return m.srv.cfg.Explorer(req)
}

// end releases what the explorer holds (its trace's spool, after the last
// save) and unregisters the joinable session, which tells viewers it has
// ended.
func (m *hostModel) end() {
	if c, ok := m.inner.(io.Closer); ok {
		if err := c.Close(); err != nil {
			m.srv.log.Warn("explorer close", "user", m.v.user, "session", m.host.ID, "error", diag.Printable(err.Error()))
		}
	}
	if m.host != nil {
		m.srv.registry.remove(m.host)
	}
}

// Saver is what an explorer model offers for its whole trace to be kept
// when the session ends (as the explorer does on quit locally). What the
// user saves along the way goes through ExplorerRequest.Save.
type Saver interface {
	WriteTrace(w io.Writer) error
}

// save keeps the whole session's trace, if the server keeps files.
func (m *hostModel) save() error {
	sv, ok := m.inner.(Saver)
	if m.files == nil || m.files.dir == "" || !ok {
		return nil
	}
	shown, err := m.files.save(tui.SaveTrace, sv.WriteTrace)
	if err != nil {
		return errors.New("the trace could not be saved")
	}
	m.saved = shown
	return nil
}

// renderer is this connection's own lipgloss renderer: styles are rendered
// for the client's terminal, not the server's.
func (m *hostModel) renderer() *lipgloss.Renderer {
	r := lipgloss.NewRenderer(m.sess)
	if m.noColor {
		r.SetColorProfile(termenv.Ascii)
	} else {
		// A server cannot ask the client's terminal; 256 colours is the common ground.
		r.SetColorProfile(termenv.ANSI256)
	}
	return r
}

// choose is sent by the picker when the user picks a design.
type choose struct{ name string }

func (m *hostModel) Init() (cmd tea.Cmd) {
	defer m.guard(&cmd)
	if m.inner != nil {
		return guardCmd(m, m.inner.Init())
	}
	return nil
}

func (m *hostModel) Update(msg tea.Msg) (model tea.Model, cmd tea.Cmd) {
	if m.failed.Load() {
		return m, tea.Quit
	}
	model = m
	defer m.guard(&cmd)
	if ws, ok := msg.(tea.WindowSizeMsg); ok {
		m.width, m.height = ws.Width, ws.Height
	}
	if m.inner != nil {
		// Every key goes to the explorer, the save key too: its
		// Options.Save puts files where the server says.
		if _, ok := msg.(tea.KeyMsg); ok {
			m.notice = ""
		}
		var next tea.Model
		next, cmd = m.inner.Update(msg)
		m.inner = next
		if c := m.watchTrace(); c != nil {
			cmd = tea.Batch(cmd, c)
		}
		return m, guardCmd(m, cmd)
	}
	if c, ok := msg.(choose); ok {
		if err := m.open(c.name); err != nil {
			// One line under the list; a design's errors may quote it.
			m.picker.err = diag.Printable(strings.ReplaceAll(err.Error(), "\n", "; "))
			return m, nil
		}
		// The explorer starts from the current size and its own Init.
		return m, guardCmd(m, m.inner.Init())
	}
	return m, m.picker.update(msg)
}

func (m *hostModel) View() (frame string) {
	if m.failed.Load() {
		return ""
	}
	defer func() {
		if r := recover(); r != nil {
			m.panicked(r)
			frame = ""
		}
	}()
	if m.inner == nil {
		return m.picker.view()
	}
	frame = m.inner.View()
	if m.notice != "" {
		// The notice stands over the last line until the next key.
		lines := strings.Split(frame, "\n")
		lines[len(lines)-1] = ansi.Truncate(m.notice, max(1, m.width), "")
		frame = strings.Join(lines, "\n")
	}
	m.host.Hub.publish(frame)
	return frame
}

// guard turns a panic in the inner model into a logged failure and a quit.
func (m *hostModel) guard(cmd *tea.Cmd) {
	if r := recover(); r != nil {
		m.panicked(r)
		*cmd = tea.Quit
	}
}

func (m *hostModel) panicked(r any) {
	if m.failed.CompareAndSwap(false, true) {
		m.srv.logPanic(m.v, r, debug.Stack())
	}
}

type panicker interface{ panicked(any) }

// guardCmd wraps a command so that a panic inside it is logged as this
// session's and quits this session only (the program's own catch would
// print to the server's stdout).
func guardCmd(p panicker, c tea.Cmd) tea.Cmd {
	if c == nil {
		return nil
	}
	return func() (msg tea.Msg) {
		defer func() {
			if r := recover(); r != nil {
				p.panicked(r)
				msg = tea.Quit()
			}
		}()
		msg = c()
		if b, ok := msg.(tea.BatchMsg); ok {
			for i := range b {
				b[i] = guardCmd(p, b[i])
			}
		}
		return msg
	}
}
