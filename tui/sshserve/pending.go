package sshserve

import (
	"errors"
	"fmt"
	"log/slog"
	"net"
	"net/netip"
	"sync"
	"sync/atomic"
	"time"
)

// Defaults for the limits before authentication.
const (
	// DefaultMaxPending is the number of connections that may be in their
	// handshake (accepted, not yet authenticated) at once. A real handshake
	// over a network takes milliseconds; 64 leaves room for a whole team
	// connecting at the same moment.
	DefaultMaxPending = 64
	// DefaultMaxPendingPerAddr is the number of those from one remote
	// address (an IPv6 client counts by its /64, which one host commonly
	// holds whole). A team behind one gateway shares an address: 16 lets
	// ten of them connect at the same moment, and keeps a flood from one
	// address to a quarter of the places.
	DefaultMaxPendingPerAddr = 16
	// DefaultHandshakeTimeout is how long a connection has from being
	// accepted to being authenticated: long enough to type a key's
	// passphrase, which an SSH client asks for in the middle of it.
	DefaultHandshakeTimeout = 30 * time.Second
)

// pendingLogPerSecond bounds the lines the gate logs in one second, so that
// a flood of connections cannot flood the log too; the lines beyond it are
// counted and the count is logged with the next line let through.
const pendingLogPerSecond = 20

// errDropped is what a dropped connection's reads and writes return, so that
// the handshake failure it causes is not logged a second time.
var errDropped = errors.New("connection dropped before authentication")

// clock is the time the gate runs on; tests give a fake one.
type clock interface {
	Now() time.Time
	// AfterFunc calls f in its own goroutine after d; stop cancels it.
	AfterFunc(d time.Duration, f func()) (stop func() bool)
}

type realClock struct{}

func (realClock) Now() time.Time { return time.Now() }
func (realClock) AfterFunc(d time.Duration, f func()) func() bool {
	return time.AfterFunc(d, f).Stop
}

// pendingGate keeps the connections that have been accepted but have not yet
// authenticated, within three limits: a handshake deadline, a cap per remote
// address and a cap in all. The policy keeps the door open while the caps are
// hit: a connection over its address's cap is refused (the newest from that
// address loses, so a flood from one address only ever costs that address),
// and a connection over the cap in all is admitted by dropping the oldest
// pending handshake of the address that holds the most (so a designer coming
// from another address, with one handshake pending, is the last to go). When
// every address holds the same number this is simply the oldest of all.
type pendingGate struct {
	max, perAddr int
	timeout      time.Duration
	clock        clock
	log          *slog.Logger

	mu     sync.Mutex
	seq    uint64
	total  int
	byAddr map[string][]*pendingConn // each address's pending connections, oldest first

	logMu      sync.Mutex
	logSecond  int64 // the clock second being counted
	logged     int   // lines logged in it
	suppressed int   // lines not logged since the last one that was
}

func newPendingGate(max, perAddr int, timeout time.Duration, c clock, log *slog.Logger) *pendingGate {
	return &pendingGate{max: max, perAddr: perAddr, timeout: timeout, clock: c, log: log,
		byAddr: map[string][]*pendingConn{}}
}

// pendingConn is an accepted connection as the gate tracks it, from accept to
// authentication (or its end).
type pendingConn struct {
	net.Conn
	gate    *pendingGate
	key     string // the remote address as the per-address cap counts it
	seq     uint64 // order of admission
	pending bool   // still counted against the caps (guarded by gate.mu)
	stop    func() bool
	dropped atomic.Bool
}

// addrKey is the remote address as the per-address cap counts it: an IPv4
// address whole, an IPv6 address by its /64.
func addrKey(a net.Addr) string {
	ap, err := netip.ParseAddrPort(a.String())
	if err != nil {
		return a.String()
	}
	ip := ap.Addr().Unmap()
	if ip.Is4() {
		return ip.String()
	}
	return netip.PrefixFrom(ip.WithZone(""), 64).Masked().String()
}

// admit takes a newly accepted connection. It returns false, having closed
// and logged it, when its address already holds its cap of handshakes.
func (g *pendingGate) admit(c net.Conn) (*pendingConn, bool) {
	key := addrKey(c.RemoteAddr())
	g.mu.Lock()
	if n := len(g.byAddr[key]); n >= g.perAddr {
		total := g.total
		g.mu.Unlock()
		g.note("connection refused", "refused", c.RemoteAddr().String(),
			fmt.Sprintf("%d handshakes already pending from this address (the limit)", n), total, n)
		c.Close()
		return nil, false
	}
	var victim *pendingConn
	var victimFrom int
	if g.total >= g.max {
		victim = g.victimLocked()
		victimFrom = len(g.byAddr[victim.key]) - 1
		g.removeLocked(victim)
	}
	g.seq++
	pc := &pendingConn{Conn: c, gate: g, key: key, seq: g.seq, pending: true}
	g.byAddr[key] = append(g.byAddr[key], pc)
	g.total++
	// Set under the lock: the timer's function takes it, so it cannot see
	// the connection before stop is set.
	pc.stop = g.clock.AfterFunc(g.timeout, func() { g.expire(pc) })
	total := g.total
	g.mu.Unlock()
	if victim != nil {
		victim.drop(fmt.Sprintf("%d handshakes pending (the limit): the oldest from the address holding the most made room for a new one", g.max),
			total, victimFrom)
	}
	return pc, true
}

// victimLocked is the oldest pending connection of the address that holds
// the most; between addresses holding as many, the oldest of theirs.
func (g *pendingGate) victimLocked() *pendingConn {
	var v *pendingConn
	most := 0
	for _, q := range g.byAddr {
		if len(q) > most || (len(q) == most && q[0].seq < v.seq) {
			v, most = q[0], len(q)
		}
	}
	return v
}

// removeLocked stops counting pc against the caps and cancels its deadline.
func (g *pendingGate) removeLocked(pc *pendingConn) {
	if !pc.pending {
		return
	}
	pc.pending = false
	pc.stop()
	q := g.byAddr[pc.key]
	for i, c := range q {
		if c == pc {
			q = append(q[:i], q[i+1:]...)
			break
		}
	}
	if len(q) == 0 {
		delete(g.byAddr, pc.key)
	} else {
		g.byAddr[pc.key] = q
	}
	g.total--
}

// expire drops pc if it is still pending when its handshake time is up.
func (g *pendingGate) expire(pc *pendingConn) {
	g.mu.Lock()
	if !pc.pending {
		g.mu.Unlock()
		return
	}
	g.removeLocked(pc)
	total, from := g.total, len(g.byAddr[pc.key])
	g.mu.Unlock()
	pc.drop(fmt.Sprintf("not authenticated within %s", g.timeout), total, from)
}

// counts is the number of pending connections in all and from addr's key (for tests).
func (g *pendingGate) counts(addr net.Addr) (total, fromAddr int) {
	g.mu.Lock()
	defer g.mu.Unlock()
	return g.total, len(g.byAddr[addrKey(addr)])
}

// authenticated ends pc's handshake: it no longer counts against the caps.
func (pc *pendingConn) authenticated() { pc.release() }

func (pc *pendingConn) release() {
	pc.gate.mu.Lock()
	pc.gate.removeLocked(pc)
	pc.gate.mu.Unlock()
}

// drop logs and closes a connection the gate has already stopped counting.
func (pc *pendingConn) drop(reason string, total, fromAddr int) {
	pc.dropped.Store(true)
	pc.gate.note("connection dropped", "dropped", pc.RemoteAddr().String(), reason, total, fromAddr)
	pc.Conn.Close()
}

func (pc *pendingConn) Read(p []byte) (int, error) {
	n, err := pc.Conn.Read(p)
	if err != nil && pc.dropped.Load() {
		err = errDropped
	}
	return n, err
}

func (pc *pendingConn) Write(p []byte) (int, error) {
	n, err := pc.Conn.Write(p)
	if err != nil && pc.dropped.Load() {
		err = errDropped
	}
	return n, err
}

// Close frees the connection's place if it was still pending.
func (pc *pendingConn) Close() error {
	pc.release()
	return pc.Conn.Close()
}

// note logs one refused or dropped connection, within the log budget.
func (g *pendingGate) note(msg, event, remote, reason string, total, fromAddr int) {
	g.logMu.Lock()
	sec := g.clock.Now().Unix()
	if sec != g.logSecond {
		g.logSecond, g.logged = sec, 0
	}
	if g.logged >= pendingLogPerSecond {
		g.suppressed++
		g.logMu.Unlock()
		return
	}
	g.logged++
	skipped := g.suppressed
	g.suppressed = 0
	g.logMu.Unlock()
	attrs := []any{"event", event, "remote", remote, "reason", reason,
		"pending", total, "pending_from_addr", fromAddr}
	if skipped > 0 {
		// The lines over the budget since the last one, refused and dropped alike.
		attrs = append(attrs, "not_logged_before", skipped)
	}
	g.log.Warn(msg, attrs...)
}
