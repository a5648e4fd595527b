package main

import (
	"fmt"
	"io"
	"strings"
	"sync"
	"time"

	"railyard/switchsim/diag"
	"railyard/switchsim/reach"
)

// How often check says how far it has got: on a terminal a line redrawn at
// most every 200 ms; elsewhere (a CI log) a line at most every 10 s while a
// search runs, so that the log shows it is alive.
const (
	progressTerminal = 200 * time.Millisecond
	progressLog      = 10 * time.Second
)

// checkProgress draws the progress of a check on stderr.
type checkProgress struct {
	mu         sync.Mutex
	w          io.Writer
	term       bool
	total      int
	done       int
	running    map[int]*runningCheck
	t0         time.Time
	shown      int // width of the line on screen, 0 when none
	quit, over chan struct{}
}

type runningCheck struct {
	path  string
	start time.Time
	p     reach.Progress
}

func newCheckProgress(w io.Writer, total int, exhaustive bool) *checkProgress {
	p := &checkProgress{w: w, term: isTerminal(w), total: total, running: map[int]*runningCheck{}, t0: time.Now(),
		quit: make(chan struct{}), over: make(chan struct{})}
	if !p.term && !exhaustive {
		close(p.over)
		return p // nothing to say off a terminal without searches
	}
	every := progressLog
	if p.term {
		every = progressTerminal
	}
	go func() {
		defer close(p.over)
		t := time.NewTicker(every)
		defer t.Stop()
		for {
			select {
			case <-p.quit:
				return
			case <-t.C:
				p.draw()
			}
		}
	}()
	return p
}

func (p *checkProgress) start(i int, path string) {
	p.mu.Lock()
	p.running[i] = &runningCheck{path: path, start: time.Now()}
	p.mu.Unlock()
}

func (p *checkProgress) finish(i int) {
	p.mu.Lock()
	delete(p.running, i)
	p.done++
	p.mu.Unlock()
}

// searching returns the progress callback of design i's search.
func (p *checkProgress) searching(i int) func(reach.Progress) {
	return func(sp reach.Progress) {
		p.mu.Lock()
		if r := p.running[i]; r != nil {
			r.p = sp
		}
		p.mu.Unlock()
	}
}

// line says how far the check has got: designs done, elapsed, and the
// design running longest with its search's states and transitions.
func (p *checkProgress) line() string {
	var slow *runningCheck
	for _, r := range p.running {
		if slow == nil || r.start.Before(slow.start) {
			slow = r
		}
	}
	el := time.Since(p.t0).Round(100 * time.Millisecond)
	var b strings.Builder
	b.WriteString("railyard check: ")
	if p.total > 1 {
		fmt.Fprintf(&b, "%d/%d designs, %v", p.done, p.total, el)
		if slow != nil {
			fmt.Fprintf(&b, "; slowest running: %s %v", diag.Printable(slow.path), time.Since(slow.start).Round(100*time.Millisecond))
		}
	} else if slow != nil {
		fmt.Fprintf(&b, "%s, %v", diag.Printable(slow.path), el)
	}
	if slow != nil && slow.p.States > 0 {
		fmt.Fprintf(&b, ", %d states, %d transitions", slow.p.States, slow.p.Transitions)
	}
	return b.String()
}

func (p *checkProgress) draw() {
	p.mu.Lock()
	defer p.mu.Unlock()
	if len(p.running) == 0 && !p.term {
		return
	}
	l := p.line()
	if !p.term {
		fmt.Fprintln(p.w, l)
		return
	}
	pad := max(0, p.shown-len(l))
	fmt.Fprintf(p.w, "\r%s%s", l, strings.Repeat(" ", pad))
	p.shown = len(l)
}

// quietly runs fn, which writes the report, with the line cleared and
// kept from being drawn meanwhile.
func (p *checkProgress) quietly(fn func()) {
	p.mu.Lock()
	defer p.mu.Unlock()
	p.clear()
	fn()
}

func (p *checkProgress) clear() {
	if p.shown > 0 {
		fmt.Fprintf(p.w, "\r%s\r", strings.Repeat(" ", p.shown))
		p.shown = 0
	}
}

// stop ends the progress and clears its line.
func (p *checkProgress) stop() {
	select {
	case <-p.over:
	default:
		close(p.quit)
		<-p.over
	}
	p.quietly(func() {})
}
