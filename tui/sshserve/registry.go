package sshserve

import (
	"crypto/rand"
	"sync"
)

// registry counts the open sessions against the limit and keeps the
// explorer sessions that others may join.
type registry struct {
	mu     sync.Mutex
	max    int
	active int
	hosts  map[string]*host
}

// host is one explorer session as others can see it.
type host struct {
	ID     string
	User   string
	Design string
	Hub    *hub
}

func newRegistry(max int) *registry {
	return &registry{max: max, hosts: map[string]*host{}}
}

// acquire takes one session slot; it reports false when all are in use.
func (r *registry) acquire() (int, bool) {
	r.mu.Lock()
	defer r.mu.Unlock()
	if r.active >= r.max {
		return r.active, false
	}
	r.active++
	return r.active, true
}

func (r *registry) release() {
	r.mu.Lock()
	r.active--
	r.mu.Unlock()
}

// idAlphabet has no letters easily misread for digits (no i, l, o, 0, 1).
const idAlphabet = "abcdefghjkmnpqrstuvwxyz23456789"

// IDLength gives 31^6, about 8.9e8 ids: a guess at a live id is unlikely,
// though ids are not secrets (only authorised users can join at all).
const IDLength = 6

func newID() string {
	b := make([]byte, IDLength)
	rand.Read(b) // crypto/rand never fails on supported platforms
	for i := range b {
		b[i] = idAlphabet[int(b[i])%len(idAlphabet)]
	}
	return string(b)
}

// add registers a new joinable session under a fresh id.
func (r *registry) add(user, design string, input *activity) *host {
	r.mu.Lock()
	defer r.mu.Unlock()
	for {
		id := newID()
		if _, taken := r.hosts[id]; taken {
			continue
		}
		h := &host{ID: id, User: user, Design: design, Hub: newHub(input)}
		r.hosts[id] = h
		return h
	}
}

func (r *registry) lookup(id string) *host {
	r.mu.Lock()
	defer r.mu.Unlock()
	return r.hosts[id]
}

// remove ends a host: its viewers see the end.
func (r *registry) remove(h *host) {
	r.mu.Lock()
	delete(r.hosts, h.ID)
	r.mu.Unlock()
	h.Hub.close()
}

// hub carries one host's latest frame to its viewers. Publishing swaps the
// frame and closes the current change channel, so every waiting viewer wakes
// once and reads the newest frame; frames a slow viewer missed are skipped.
type hub struct {
	mu      sync.Mutex
	frame   string
	seq     uint64
	changed chan struct{}
	closed  bool

	input *activity // the host's input clock, so viewers of an active host are not idle
}

func newHub(input *activity) *hub {
	return &hub{changed: make(chan struct{}), input: input}
}

func (h *hub) publish(frame string) {
	h.mu.Lock()
	defer h.mu.Unlock()
	if h.closed || frame == h.frame {
		return
	}
	h.frame = frame
	h.seq++
	close(h.changed)
	h.changed = make(chan struct{})
}

// latest returns the current frame, its sequence number, a channel closed at
// the next change, and whether the host has ended.
func (h *hub) latest() (string, uint64, <-chan struct{}, bool) {
	h.mu.Lock()
	defer h.mu.Unlock()
	return h.frame, h.seq, h.changed, h.closed
}

func (h *hub) close() {
	h.mu.Lock()
	defer h.mu.Unlock()
	if !h.closed {
		h.closed = true
		close(h.changed)
	}
}
