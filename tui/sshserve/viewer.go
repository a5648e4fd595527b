package sshserve

import (
	"fmt"
	"strings"
	"sync/atomic"

	"github.com/charmbracelet/bubbles/key"
	tea "github.com/charmbracelet/bubbletea"
	"github.com/charmbracelet/x/ansi"

	"railyard/switchsim/diag"
)

// viewer shows another session's latest frame. It has no way to reach that
// session's state: the only thing it holds is the hub, which hands out
// strings. Every key but quit is ignored.
type viewer struct {
	host          *host
	done          <-chan struct{} // the viewer's connection ended
	quit          key.Binding
	frame         string
	width, height int
	ascii         bool
	ended         bool
	failed        atomic.Bool
	onPanic       func(any)
}

type frameMsg struct {
	frame string
	seq   uint64
	ended bool
}

func newViewer(h *host, done <-chan struct{}, width, height int, ascii bool, onPanic func(any)) *viewer {
	return &viewer{host: h, done: done, width: width, height: height, ascii: ascii, onPanic: onPanic,
		quit: key.NewBinding(key.WithKeys("q", "ctrl+c"), key.WithHelp("q", "leave"))}
}

// wait returns the next frame: at once if there is one newer than seq,
// else when the host draws again or ends.
func (m *viewer) wait(seq uint64) tea.Cmd {
	return guardCmd(m, func() tea.Msg {
		frame, at, changed, ended := m.host.Hub.latest()
		if at == seq && !ended {
			select {
			case <-changed:
			case <-m.done:
				return nil
			}
			frame, at, _, ended = m.host.Hub.latest()
		}
		return frameMsg{frame: frame, seq: at, ended: ended}
	})
}

func (m *viewer) Init() tea.Cmd { return m.wait(^uint64(0)) }

func (m *viewer) Update(msg tea.Msg) (model tea.Model, cmd tea.Cmd) {
	if m.failed.Load() {
		return m, tea.Quit
	}
	model = m
	defer func() {
		if r := recover(); r != nil {
			m.panicked(r)
			cmd = tea.Quit
		}
	}()
	switch msg := msg.(type) {
	case tea.WindowSizeMsg:
		m.width, m.height = msg.Width, msg.Height
	case tea.KeyMsg:
		if key.Matches(msg, m.quit) {
			return m, tea.Quit
		}
	case frameMsg:
		if msg.ended {
			m.ended = true
			return m, tea.Quit
		}
		m.frame = msg.frame
		return m, m.wait(msg.seq)
	}
	return m, nil
}

func (m *viewer) panicked(r any) {
	if m.failed.CompareAndSwap(false, true) && m.onPanic != nil {
		m.onPanic(r)
	}
}

// View draws a status line and as much of the host's frame as fits.
func (m *viewer) View() string {
	sep := " · "
	if m.ascii {
		sep = " - "
	}
	status := fmt.Sprintf("watching session %s%s%s%s%s%sread-only%sq leaves",
		m.host.ID, sep, diag.Printable(m.host.User), sep, diag.Printable(m.host.Design), sep, sep)
	w := max(1, m.width)
	var b strings.Builder
	b.WriteString(ansi.Truncate(status, w, ""))
	lines := strings.Split(m.frame, "\n")
	rows := max(0, m.height-1)
	for i := 0; i < len(lines) && i < rows; i++ {
		b.WriteString("\n")
		b.WriteString(ansi.Truncate(lines[i], w, ""))
	}
	return b.String()
}
