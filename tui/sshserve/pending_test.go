package sshserve

import (
	"errors"
	"log/slog"
	"net"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"sync"
	"sync/atomic"
	"testing"
	"time"
)

// fakeClock runs timers only when the test moves it on.
type fakeClock struct {
	mu     sync.Mutex
	now    time.Time
	timers []*fakeTimer
}

type fakeTimer struct {
	at      time.Time
	f       func()
	stopped bool
}

func newFakeClock() *fakeClock { return &fakeClock{now: time.Unix(1_000_000, 0)} }

func (c *fakeClock) Now() time.Time {
	c.mu.Lock()
	defer c.mu.Unlock()
	return c.now
}

func (c *fakeClock) AfterFunc(d time.Duration, f func()) func() bool {
	c.mu.Lock()
	defer c.mu.Unlock()
	t := &fakeTimer{at: c.now.Add(d), f: f}
	c.timers = append(c.timers, t)
	return func() bool {
		c.mu.Lock()
		defer c.mu.Unlock()
		was := !t.stopped
		t.stopped = true
		return was
	}
}

// advance moves the clock on by d and runs, in order, the timers that fall due.
func (c *fakeClock) advance(d time.Duration) {
	c.mu.Lock()
	c.now = c.now.Add(d)
	var due []*fakeTimer
	for _, t := range c.timers {
		if !t.stopped && !t.at.After(c.now) {
			t.stopped = true
			due = append(due, t)
		}
	}
	c.mu.Unlock()
	sort.SliceStable(due, func(i, j int) bool { return due[i].at.Before(due[j].at) })
	for _, t := range due {
		t.f()
	}
}

// fakeConn is an accepted connection that records being closed.
type fakeConn struct {
	net.Conn // nil: the gate uses only the methods below
	remote   *net.TCPAddr
	closed   atomic.Bool
}

func (c *fakeConn) RemoteAddr() net.Addr { return c.remote }
func (c *fakeConn) Close() error         { c.closed.Store(true); return nil }
func (c *fakeConn) Read([]byte) (int, error) {
	if c.closed.Load() {
		return 0, net.ErrClosed
	}
	return 0, errors.New("fake connection: nothing to read")
}

// gateTest is a gate on a fake clock with its log kept.
type gateTest struct {
	t     *testing.T
	gate  *pendingGate
	clock *fakeClock
	log   *syncBuffer
	port  int
}

func newGateTest(t *testing.T, max, perAddr int, timeout time.Duration) *gateTest {
	g := &gateTest{t: t, clock: newFakeClock(), log: &syncBuffer{}, port: 40000}
	g.gate = newPendingGate(max, perAddr, timeout, g.clock, slog.New(slog.NewJSONHandler(g.log, nil)))
	return g
}

// connect offers the gate a new connection from ip; the port numbers count up.
func (g *gateTest) connect(ip string) (*fakeConn, *pendingConn, bool) {
	g.port++
	c := &fakeConn{remote: &net.TCPAddr{IP: net.ParseIP(ip), Port: g.port}}
	pc, ok := g.gate.admit(c)
	return c, pc, ok
}

func (g *gateTest) mustAdmit(ip string) (*fakeConn, *pendingConn) {
	g.t.Helper()
	c, pc, ok := g.connect(ip)
	if !ok || c.closed.Load() {
		g.t.Fatalf("connection from %s refused, want admitted", ip)
	}
	return c, pc
}

func (g *gateTest) records() []map[string]any { return logRecords(g.t, g.log.String()) }

func (g *gateTest) wantCounts(ip string, total, fromAddr int) {
	g.t.Helper()
	gotTotal, gotFrom := g.gate.counts(&net.TCPAddr{IP: net.ParseIP(ip)})
	if gotTotal != total || gotFrom != fromAddr {
		g.t.Fatalf("pending %d in all, %d from %s; want %d and %d", gotTotal, gotFrom, ip, total, fromAddr)
	}
}

// The addresses are documentation and loopback addresses (RFC 5737 for IPv4,
// RFC 3849 for IPv6), as in the other tests.
const (
	addrA = "192.0.2.1"
	addrB = "192.0.2.2"
	addrC = "192.0.2.3"
	addrD = "192.0.2.4"
	addrE = "192.0.2.5"
)

func TestPendingPerAddressCapRefusesTheNewest(t *testing.T) {
	g := newGateTest(t, 10, 3, time.Minute)
	var first []*fakeConn
	for i := 0; i < 3; i++ {
		c, _ := g.mustAdmit(addrA)
		first = append(first, c)
	}
	if n := len(g.records()); n != 0 {
		t.Fatalf("%d log lines below the caps, want none:\n%s", n, g.log.String())
	}
	c, pc, ok := g.connect(addrA)
	if ok || pc != nil || !c.closed.Load() {
		t.Fatalf("the fourth from %s: admitted %v, closed %v; want refused and closed", addrA, ok, c.closed.Load())
	}
	for i, c := range first {
		if c.closed.Load() {
			t.Errorf("the earlier connection %d from %s was closed: the newest must lose", i, addrA)
		}
	}
	g.mustAdmit(addrB) // another address is not held up
	g.wantCounts(addrA, 4, 3)
	recs := g.records()
	if len(recs) != 1 {
		t.Fatalf("want one log line, got:\n%s", g.log.String())
	}
	r := recs[0]
	if r["msg"] != "connection refused" || r["event"] != "refused" || r["remote"] != c.remote.String() ||
		!strings.Contains(r["reason"].(string), "3 handshakes already pending from this address") {
		t.Errorf("log line %v, want event refused, remote %s and the reason", r, c.remote)
	}
}

func TestPendingPlaceFreedByAuthenticationOrClose(t *testing.T) {
	g := newGateTest(t, 10, 2, time.Minute)
	_, a1 := g.mustAdmit(addrA)
	_, a2 := g.mustAdmit(addrA)
	if _, _, ok := g.connect(addrA); ok {
		t.Fatal("third from A admitted over a cap of 2")
	}
	a1.authenticated()
	g.wantCounts(addrA, 1, 1)
	g.mustAdmit(addrA)
	must(t, a2.Close()) // a client that gave up
	g.wantCounts(addrA, 1, 1)
	g.mustAdmit(addrA)
	g.wantCounts(addrA, 2, 2)
	// Counting is by address, not by connection: authenticated twice, closed
	// after, a connection frees its place once.
	a1.authenticated()
	must(t, a1.Close())
	g.wantCounts(addrA, 2, 2)
}

// The rule the issue gives: with the cap in all reached, the oldest pending
// handshake is dropped to admit the new one (here every address holds one).
func TestPendingCapInAllDropsTheOldest(t *testing.T) {
	g := newGateTest(t, 4, 4, time.Minute)
	a, _ := g.mustAdmit(addrA)
	b, _ := g.mustAdmit(addrB)
	c, _ := g.mustAdmit(addrC)
	d, _ := g.mustAdmit(addrD)
	e, _ := g.mustAdmit(addrE)
	if !a.closed.Load() {
		t.Fatal("the oldest (A) is still open after a fifth was admitted over a cap of 4")
	}
	for _, c := range []*fakeConn{b, c, d, e} {
		if c.closed.Load() {
			t.Errorf("%s was closed; only the oldest should be", c.remote)
		}
	}
	g.wantCounts(addrE, 4, 1)
	recs := g.records()
	if len(recs) != 1 || recs[0]["msg"] != "connection dropped" || recs[0]["event"] != "dropped" ||
		recs[0]["remote"] != a.remote.String() || !strings.Contains(recs[0]["reason"].(string), "4 handshakes pending (the limit)") {
		t.Fatalf("want one dropped line naming %s, got:\n%s", a.remote, g.log.String())
	}
}

// A designer's one handshake outlives a flood from one address: the address
// holding the most loses first, even when the designer's is the oldest.
func TestPendingCapInAllSparesTheLoneAddress(t *testing.T) {
	g := newGateTest(t, 4, 3, time.Minute)
	designer, _ := g.mustAdmit(addrD)
	var flood []*fakeConn
	for i := 0; i < 3; i++ {
		c, _ := g.mustAdmit(addrA)
		flood = append(flood, c)
	}
	b1, _ := g.mustAdmit(addrB) // A holds 3: A's oldest goes
	if !flood[0].closed.Load() || flood[1].closed.Load() || designer.closed.Load() {
		t.Fatalf("after B's first: A's oldest closed %v, A's second %v, the designer %v; want true, false, false",
			flood[0].closed.Load(), flood[1].closed.Load(), designer.closed.Load())
	}
	g.mustAdmit(addrB) // A holds 2, the others 1: A's next goes
	if !flood[1].closed.Load() {
		t.Fatal("A's second is still open")
	}
	g.mustAdmit(addrB) // A 1, D 1, B 2: B's oldest goes
	if !b1.closed.Load() || flood[2].closed.Load() {
		t.Fatalf("B's oldest closed %v, A's last closed %v; want true, false", b1.closed.Load(), flood[2].closed.Load())
	}
	if designer.closed.Load() {
		t.Fatal("the designer's handshake was dropped while others held more")
	}
	g.wantCounts(addrB, 4, 2)
}

func TestPendingHandshakeDeadline(t *testing.T) {
	g := newGateTest(t, 10, 10, 10*time.Second)
	a, _ := g.mustAdmit(addrA)
	g.clock.advance(5 * time.Second)
	b, pb := g.mustAdmit(addrB)
	g.clock.advance(4*time.Second + 999*time.Millisecond)
	if a.closed.Load() || b.closed.Load() || len(g.records()) != 0 {
		t.Fatalf("closed before the deadline (a %v, b %v):\n%s", a.closed.Load(), b.closed.Load(), g.log.String())
	}
	g.clock.advance(time.Millisecond) // a's 10 s are up
	if !a.closed.Load() || b.closed.Load() {
		t.Fatalf("at a's deadline: a closed %v, b closed %v; want true, false", a.closed.Load(), b.closed.Load())
	}
	recs := g.records()
	if len(recs) != 1 || recs[0]["event"] != "dropped" || recs[0]["remote"] != a.remote.String() ||
		recs[0]["reason"] != "not authenticated within 10s" {
		t.Fatalf("want one dropped line for %s, got:\n%s", a.remote, g.log.String())
	}
	pb.authenticated()
	g.clock.advance(time.Hour) // an authenticated connection is not the gate's to close
	if b.closed.Load() {
		t.Fatal("an authenticated connection was closed at the handshake deadline")
	}
	g.wantCounts(addrB, 0, 0)
	if len(g.records()) != 1 {
		t.Fatalf("more lines after authentication:\n%s", g.log.String())
	}
}

func TestPendingClosedConnectionLeavesNoTimer(t *testing.T) {
	g := newGateTest(t, 10, 10, time.Second)
	_, pa := g.mustAdmit(addrA)
	must(t, pa.Close())
	g.clock.advance(2 * time.Second)
	if len(g.records()) != 0 {
		t.Fatalf("a connection that closed by itself was logged as dropped:\n%s", g.log.String())
	}
}

func TestPendingDroppedConnectionSaysSo(t *testing.T) {
	g := newGateTest(t, 1, 1, time.Minute)
	_, pa := g.mustAdmit(addrA)
	_, pb := g.mustAdmit(addrB) // drops A
	if _, err := pa.Read(make([]byte, 1)); !errors.Is(err, errDropped) {
		t.Errorf("a dropped connection's read: %v, want errDropped", err)
	}
	must(t, pb.Close())
	if _, err := pb.Read(make([]byte, 1)); errors.Is(err, errDropped) {
		t.Errorf("a connection closed by its own side reads errDropped")
	}
}

func TestPendingLogBudget(t *testing.T) {
	g := newGateTest(t, 10, 1, time.Minute)
	g.mustAdmit(addrA)
	for i := 0; i < pendingLogPerSecond+10; i++ {
		if _, _, ok := g.connect(addrA); ok {
			t.Fatal("admitted over the cap")
		}
	}
	if n := len(g.records()); n != pendingLogPerSecond {
		t.Fatalf("%d lines in one second, want the budget of %d", n, pendingLogPerSecond)
	}
	g.clock.advance(time.Second)
	g.connect(addrA)
	recs := g.records()
	last := recs[len(recs)-1]
	if len(recs) != pendingLogPerSecond+1 || last["not_logged_before"] != float64(10) {
		t.Fatalf("the next second's first line: %v (of %d); want not_logged_before 10", last, len(recs))
	}
	g.clock.advance(time.Second)
	g.connect(addrA)
	if last := g.records()[len(g.records())-1]; last["not_logged_before"] != nil {
		t.Errorf("a count of lines not logged where none were left out: %v", last)
	}
}

func TestPendingAddressKey(t *testing.T) {
	// An IPv4 address counts whole; an IPv6 one by its /64, the subnet size
	// RFC 4291 (2.5.1, 64-bit interface identifiers) gives one link, which one
	// host commonly holds whole (common practice for per-client limits).
	cases := []struct{ a, b string }{
		{"127.0.0.1:1", "127.0.0.1:2"},
		{"[::ffff:127.0.0.1]:1", "127.0.0.1:2"},
		{"[2001:db8:1:2::1]:1", "[2001:db8:1:2:ffff::9]:2"},
	}
	for _, c := range cases {
		ka, kb := addrKey(mustTCPAddr(t, c.a)), addrKey(mustTCPAddr(t, c.b))
		if ka != kb {
			t.Errorf("%s and %s count apart (%s, %s), want together", c.a, c.b, ka, kb)
		}
	}
	apart := []struct{ a, b string }{
		{"127.0.0.1:1", "127.0.0.2:1"},
		{"[2001:db8:1:2::1]:1", "[2001:db8:1:3::1]:1"},
	}
	for _, c := range apart {
		if ka, kb := addrKey(mustTCPAddr(t, c.a)), addrKey(mustTCPAddr(t, c.b)); ka == kb {
			t.Errorf("%s and %s count together (%s), want apart", c.a, c.b, ka)
		}
	}
}

func mustTCPAddr(t *testing.T, s string) net.Addr {
	t.Helper()
	a, err := net.ResolveTCPAddr("tcp", s)
	if err != nil {
		t.Fatal(err)
	}
	return a
}

func TestPendingLimitsMustBePositive(t *testing.T) {
	// The errors name the Config field (the command maps it to its flag).
	for name, set := range map[string]func(*Config){
		"MaxPending":        func(c *Config) { c.MaxPending = -1 },
		"MaxPendingPerAddr": func(c *Config) { c.MaxPendingPerAddr = -1 },
		"HandshakeTimeout":  func(c *Config) { c.HandshakeTimeout = -time.Second },
	} {
		dir := t.TempDir()
		must(t, os.MkdirAll(filepath.Join(dir, "d"), 0o755))
		cfg := Config{NoAuth: true, Listen: "127.0.0.1:0", HostKey: filepath.Join(dir, "hk"), Designs: filepath.Join(dir, "d"),
			Explorer: fakeExplorer, Demos: func() []string { return nil }, Logger: slog.New(slog.DiscardHandler)}
		set(&cfg)
		var ce *ConfigError
		if _, err := New(cfg); !errors.As(err, &ce) || ce.Field != name {
			t.Errorf("%s negative: error %v, want a ConfigError on that field", name, err)
		}
	}
}
