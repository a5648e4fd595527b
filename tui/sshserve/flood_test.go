package sshserve

import (
	"bufio"
	"errors"
	"flag"
	"fmt"
	"net"
	"strings"
	"syscall"
	"testing"
	"time"

	gossh "golang.org/x/crypto/ssh"
)

// The flood comes from 127.0.0.1, the designers from 127.0.0.2: both are
// loopback (Linux routes the whole of 127.0.0.0/8 to lo), and the server
// tells them apart by remote address as it would two machines.
const (
	floodIP    = "127.0.0.1"
	designerIP = "127.0.0.2"
)

var (
	loadFlood         = flag.Int("load.flood", 200, "unauthenticated connections the flood load test holds")
	loadFloodSessions = flag.Int("load.flood.sessions", 10, "authenticated sessions the flood load test runs beside them")
	loadFloodRate     = flag.Int("load.flood.rate", 100, "new unauthenticated connections a second while the flood load test's sessions work")
)

// floodPolicy is one way of setting the limits before authentication, so
// that each half of the policy is the one that meets the flood.
type floodPolicy struct {
	name  string
	set   func(*Config)
	event string // what happens to the flood's connections over the cap
}

var floodPolicies = []floodPolicy{
	// The defaults: the per-address cap refuses most of the flood at once.
	{"address cap", func(c *Config) {}, "refused"},
	// No address cap to speak of: the cap in all is hit, and every new
	// connection drops the oldest of the flood's (the address holding the
	// most, while the designers connecting together hold fewer).
	{"cap in all", func(c *Config) { c.MaxPending, c.MaxPendingPerAddr = 32, 1024 }, "dropped"},
}

// skipWithoutSecondLoopback skips where 127.0.0.2 cannot be bound (systems
// whose loopback holds 127.0.0.1 alone).
func skipWithoutSecondLoopback(t testing.TB) {
	t.Helper()
	ln, err := net.Listen("tcp", designerIP+":0")
	if errors.Is(err, syscall.EADDRNOTAVAIL) {
		t.Skipf("%s is not a loopback address here", designerIP)
	}
	must(t, err)
	ln.Close()
}

// openFlood opens n TCP connections from floodIP that never authenticate:
// the even ones send nothing, the odd ones half an SSH version line (no line
// end). It returns once the server has taken or refused every one (each has
// either read the server's version line or been closed), so the gate has
// seen them all; the caller closes them.
func openFlood(t testing.TB, addr string, n int) []net.Conn {
	t.Helper()
	d := net.Dialer{LocalAddr: &net.TCPAddr{IP: net.ParseIP(floodIP)}, Timeout: readDeadline}
	conns := make([]net.Conn, 0, n)
	t.Cleanup(func() {
		for _, c := range conns {
			c.Close()
		}
	})
	for i := 0; i < n; i++ {
		c, err := d.Dial("tcp", addr)
		if err != nil {
			t.Fatalf("flood connection %d: %v", i, err)
		}
		conns = append(conns, c)
		if i%2 == 1 {
			c.Write([]byte("SSH-2.0-")) // refused ones may already be closed: no error check
		}
	}
	for i, c := range conns {
		c.SetReadDeadline(time.Now().Add(readDeadline))
		line, err := bufio.NewReader(c).ReadString('\n')
		switch {
		case err == nil && strings.HasPrefix(line, "SSH-2.0-"):
		case err != nil && !errors.Is(err, net.ErrClosed) && !isTimeout(err):
			// Closed by the server (EOF or reset): refused or dropped.
		default:
			t.Fatalf("flood connection %d: neither taken nor refused (%q, %v)", i, line, err)
		}
		c.SetReadDeadline(time.Time{})
	}
	return conns
}

func isTimeout(err error) bool {
	var ne net.Error
	return errors.As(err, &ne) && ne.Timeout()
}

// gateRecords are the log lines about refused and dropped connections, by remote IP.
func gateRecords(t *testing.T, ts *testServer) map[string][]map[string]any {
	out := map[string][]map[string]any{}
	for _, r := range logRecords(t, ts.log.String()) {
		if r["event"] != "refused" && r["event"] != "dropped" {
			continue
		}
		host, _, _ := net.SplitHostPort(r["remote"].(string))
		out[host] = append(out[host], r)
	}
	return out
}

// A short, deterministic flood: 40 connections from one address that never
// authenticate do not keep 3 designers from another address out, under
// either half of the policy.
func TestPendingFloodDoesNotLockOut(t *testing.T) {
	skipWithoutSecondLoopback(t)
	const flood, sessions = 40, 3
	for _, p := range floodPolicies {
		t.Run(p.name, func(t *testing.T) {
			ts := startServer(t, 1, p.set)
			ts.writeDesign(t, "opsel.sw", opsel)
			openFlood(t, ts.addr, flood)
			total, fromFlood := ts.gate.counts(&net.TCPAddr{IP: net.ParseIP(floodIP)})
			wantHeld := min(flood, ts.cfg.MaxPending, ts.cfg.MaxPendingPerAddr)
			if total != wantHeld || fromFlood != wantHeld {
				t.Fatalf("%d pending (%d from the flood), want %d: the caps are %d in all, %d an address",
					total, fromFlood, wantHeld, ts.cfg.MaxPending, ts.cfg.MaxPendingPerAddr)
			}
			for i := 0; i < sessions; i++ {
				c, err := ts.dialFrom(designerIP, fmt.Sprintf("designer%d", i), gossh.PublicKeys(ts.keys[0]))
				if err != nil {
					t.Fatalf("designer %d refused during the flood: %v", i, err)
				}
				tm, err := startTerm(t, c, "opsel", 80, 24, true)
				must(t, err)
				tm.waitFor("sel=0")
				tm.send("t")
				tm.waitFor("sel=1")
			}
			// Authenticated, the designers left the gate. Under the cap in all
			// the first one's handshake cost the flood one place; each later
			// one took the place the one before had left.
			total, fromFlood = ts.gate.counts(&net.TCPAddr{IP: net.ParseIP(floodIP)})
			wantLeft := wantHeld
			if wantHeld >= ts.cfg.MaxPending {
				wantLeft--
			}
			if total != wantLeft || fromFlood != wantLeft {
				t.Errorf("after the designers: %d pending (%d from the flood), want %d", total, fromFlood, wantLeft)
			}
			recs := gateRecords(t, ts)
			if len(recs[designerIP]) != 0 {
				t.Errorf("designers' connections refused or dropped: %v", recs[designerIP])
			}
			if len(recs[floodIP]) == 0 {
				t.Errorf("no refused or dropped flood connection logged:\n%s", ts.log.String())
			}
			for _, r := range recs[floodIP] {
				if r["event"] != p.event || r["reason"] == nil || r["reason"] == "" {
					t.Errorf("log line %v, want event %s with a reason", r, p.event)
				}
			}
		})
	}
}

func TestHandshakeDeadlineDropsASilentConnection(t *testing.T) {
	ts := startServer(t, 1, func(c *Config) { c.HandshakeTimeout = 300 * time.Millisecond })
	ts.writeDesign(t, "opsel.sw", opsel)
	// A designer who authenticates in time keeps the session past the deadline.
	tm := ts.open(t, ts.keys[0], "alice", "opsel", 80, 24)
	tm.waitFor("sel=0")

	c, err := net.Dial("tcp", ts.addr)
	must(t, err)
	defer c.Close()
	c.SetReadDeadline(time.Now().Add(readDeadline))
	r := bufio.NewReader(c)
	if line, err := r.ReadString('\n'); err != nil || !strings.HasPrefix(line, "SSH-2.0-") {
		t.Fatalf("no version line from the server: %q, %v", line, err)
	}
	start := time.Now()
	if _, err := r.ReadByte(); err == nil || isTimeout(err) {
		t.Fatalf("the silent connection was not closed (read: %v)", err)
	}
	if waited := time.Since(start); waited > 5*time.Second {
		t.Errorf("closed after %s, want about the 300ms deadline", waited)
	}
	rec := ts.waitLog(t, "connection dropped", map[string]any{"event": "dropped", "remote": c.LocalAddr().String()})
	if rec["reason"] != "not authenticated within 300ms" {
		t.Errorf("reason %v, want the deadline", rec["reason"])
	}
	time.Sleep(100 * time.Millisecond) // a second line would come from the handshake's own failure
	for _, r := range logRecords(t, ts.log.String()) {
		if r["msg"] == "handshake failed" && r["remote"] == c.LocalAddr().String() {
			t.Errorf("the dropped connection was logged twice: %v", r)
		}
	}
	tm.send("t")
	tm.waitFor("sel=1")
}
