package sshserve

import (
	"flag"
	"fmt"
	"io"
	"net"
	"runtime"
	"slices"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/charmbracelet/x/ansi"
	gossh "golang.org/x/crypto/ssh"
)

// The load test is off by default (it holds 50 sessions for seconds on a
// machine others share): go test ./tui/sshserve -run Load -load -v
var (
	loadTest     = flag.Bool("load", false, "run the concurrent-sessions load test")
	loadSessions = flag.Int("load.sessions", 50, "sessions the load test holds")
	loadFor      = flag.Duration("load.for", 5*time.Second, "how long the load test toggles")
)

// loadTerm is a client that keeps only the output since its last key.
type loadTerm struct {
	mu     sync.Mutex
	buf    []byte
	client *gossh.Client
	sess   *gossh.Session
	in     io.Writer
	wrote  chan struct{} // a token after each write, so waiters need not poll
}

func (l *loadTerm) Write(p []byte) (int, error) {
	l.mu.Lock()
	if len(l.buf) < 1<<20 { // a stuck session cannot eat the test's memory
		l.buf = append(l.buf, p...)
	}
	l.mu.Unlock()
	select {
	case l.wrote <- struct{}{}:
	default:
	}
	return len(p), nil
}

func (l *loadTerm) reset() {
	l.mu.Lock()
	l.buf = l.buf[:0]
	l.mu.Unlock()
}

func (l *loadTerm) has(s string) bool {
	l.mu.Lock()
	defer l.mu.Unlock()
	return strings.Contains(ansi.Strip(string(l.buf)), s)
}

// roundTrip sends key and returns the time until the output shows want.
func (l *loadTerm) roundTrip(key, want string, limit time.Duration) (time.Duration, error) {
	l.reset()
	start := time.Now()
	if _, err := io.WriteString(l.in, key); err != nil {
		return 0, err
	}
	timeout := time.After(limit)
	for !l.has(want) {
		select {
		case <-l.wrote:
		case <-timeout:
			return 0, fmt.Errorf("no %q within %s", want, limit)
		}
	}
	return time.Since(start), nil
}

// openLoadTerm connects as user with the first key, from local address ip
// (any when empty), opens the opsel design and waits until the explorer is
// drawn. It returns the time that took: connect, authenticate, first frame.
func openLoadTerm(ts *testServer, ip, user string) (*loadTerm, time.Duration, error) {
	start := time.Now()
	c, err := ts.dialFrom(ip, user, gossh.PublicKeys(ts.keys[0]))
	if err != nil {
		return nil, 0, err
	}
	s, err := c.NewSession()
	if err != nil {
		c.Close()
		return nil, 0, err
	}
	l := &loadTerm{client: c, sess: s, wrote: make(chan struct{}, 1)}
	fail := func(err error) (*loadTerm, time.Duration, error) { l.close(); return nil, 0, err }
	s.Stdout, s.Stderr = l, l
	if err := s.RequestPty("xterm-256color", 24, 80, gossh.TerminalModes{}); err != nil {
		return fail(err)
	}
	if l.in, err = s.StdinPipe(); err != nil {
		return fail(err)
	}
	if err := s.Start("opsel"); err != nil {
		return fail(err)
	}
	timeout := time.After(30 * time.Second)
	for !l.has(pickX) {
		select {
		case <-l.wrote:
		case <-timeout:
			return fail(fmt.Errorf("%s never drew the explorer", user))
		}
	}
	return l, time.Since(start), nil
}

func (l *loadTerm) close() {
	l.sess.Close()
	l.client.Close()
}

// openLoadTerms opens n sessions at once (users PREFIX0, PREFIX1, ...) and
// returns them with each one's time to open; a session that could not be
// opened is an error.
func openLoadTerms(ts *testServer, n int, ip, prefix string) ([]*loadTerm, []time.Duration, []error) {
	terms := make([]*loadTerm, n)
	opened := make([]time.Duration, n)
	var wg sync.WaitGroup
	var mu sync.Mutex
	var errs []error
	for i := range terms {
		wg.Add(1)
		go func(i int) {
			defer wg.Done()
			l, d, err := openLoadTerm(ts, ip, fmt.Sprintf("%s%d", prefix, i))
			mu.Lock()
			defer mu.Unlock()
			if err != nil {
				errs = append(errs, fmt.Errorf("session %d from %s: %v", i, ip, err))
				return
			}
			terms[i], opened[i] = l, d
		}(i)
	}
	wg.Wait()
	return terms, opened, errs
}

// toggleFor has every session toggle pick (x, 0, 1, 0, ...) with a short
// pause between keys, as a quick user would, until d is up, and returns
// every round trip (key sent to the new value on screen).
func toggleFor(terms []*loadTerm, d time.Duration) ([]time.Duration, []error) {
	var wg sync.WaitGroup
	var mu sync.Mutex
	var trips []time.Duration
	var errs []error
	stop := time.Now().Add(d)
	for i, l := range terms {
		wg.Add(1)
		go func(i int, l *loadTerm) {
			defer wg.Done()
			want := []string{pick0, pick1}
			var mine []time.Duration
			var err error
			for k := 0; time.Now().Before(stop); k++ {
				var rt time.Duration
				if rt, err = l.roundTrip(" ", want[k%2], 30*time.Second); err != nil {
					err = fmt.Errorf("session %d, toggle %d: %v", i, k+1, err)
					break
				}
				mine = append(mine, rt)
				time.Sleep(50 * time.Millisecond)
			}
			mu.Lock()
			defer mu.Unlock()
			trips = append(trips, mine...)
			if err != nil {
				errs = append(errs, err)
			}
		}(i, l)
	}
	wg.Wait()
	slices.Sort(trips)
	return trips, errs
}

// figures are a sample's median, 99th percentile and maximum (nearest rank
// on the sorted sample); zeros for an empty one.
type figures struct{ median, p99, max time.Duration }

func figuresOf(d []time.Duration) figures {
	if len(d) == 0 {
		return figures{}
	}
	s := slices.Clone(d)
	slices.Sort(s)
	q := func(f float64) time.Duration { return s[int(f*float64(len(s)-1))] }
	return figures{q(0.5), q(0.99), s[len(s)-1]}
}

func (f figures) String() string {
	return fmt.Sprintf("median %s, p99 %s, slowest %s", f.median.Round(10*time.Microsecond),
		f.p99.Round(10*time.Microsecond), f.max.Round(10*time.Microsecond))
}

func TestLoadConcurrentSessions(t *testing.T) {
	if !*loadTest {
		t.Skip("the load test runs with -load")
	}
	n := *loadSessions
	// All n connect from one address at the same moment, more than the
	// default caps before authentication let in at once (TestLoadPendingFlood
	// is the test of those): here they are raised to n.
	ts := startServer(t, 1, realExplorer, func(c *Config) {
		c.MaxSessions, c.MaxPending, c.MaxPendingPerAddr = n+1, max(n, DefaultMaxPending), n
	})
	ts.writeDesign(t, "opsel.sw", opselDesign)

	heap := func() uint64 {
		runtime.GC()
		var ms runtime.MemStats
		runtime.ReadMemStats(&ms)
		return ms.HeapAlloc
	}
	before := heap()

	terms, _, errs := openLoadTerms(ts, n, "", "user")
	t.Cleanup(func() {
		for _, l := range terms {
			if l != nil {
				l.close()
			}
		}
	})
	for _, err := range errs {
		t.Fatal(err)
	}
	opened := heap()

	trips, errs := toggleFor(terms, *loadFor)
	for _, err := range errs {
		t.Error(err)
	}
	toggled := heap()
	if got := ts.registry.Active(); got != n {
		t.Errorf("%d sessions open during the load, want %d", got, n)
	}
	if len(trips) == 0 {
		t.Fatal("no round trips")
	}
	perSession := func(after uint64) string {
		if after < before {
			return "0"
		}
		return fmt.Sprintf("%.0f KiB", float64(after-before)/float64(n)/1024)
	}
	t.Logf("%d sessions, %s of toggling, %d round trips (key to the new value on screen)", n, *loadFor, len(trips))
	t.Logf("round trip: %s", figuresOf(trips))
	t.Logf("heap per session (server and client in this process): %s once open, %s after toggling",
		perSession(opened), perSession(toggled))
}

// churnFlood keeps the flood going: rate times a second it opens one more
// connection from floodIP (sending nothing) in place of the oldest one held,
// so the server keeps meeting new unauthenticated connections while the
// designers work. stop ends it, closes what it opened and says how many.
func churnFlood(addr string, held []net.Conn, rate int) (stop func() int) {
	if rate <= 0 {
		return func() int { return 0 }
	}
	done, finished := make(chan struct{}), make(chan int)
	go func() {
		d := net.Dialer{LocalAddr: &net.TCPAddr{IP: net.ParseIP(floodIP)}, Timeout: time.Second}
		tick := time.NewTicker(time.Second / time.Duration(rate))
		defer tick.Stop()
		n := 0
		defer func() {
			for _, c := range held {
				c.Close()
			}
			finished <- n
		}()
		for {
			select {
			case <-done:
				return
			case <-tick.C:
				c, err := d.Dial("tcp", addr)
				if err != nil {
					continue
				}
				i := n % len(held)
				held[i].Close()
				held[i] = c
				n++
			}
		}
	}()
	return func() int { close(done); return <-finished }
}

// TestLoadPendingFlood holds -load.flood unauthenticated connections from
// 127.0.0.1 while -load.flood.sessions designers from 127.0.0.2 authenticate
// and toggle inputs, under each half of the policy, and compares their round
// trips with the same sessions' without the flood (on the same server, just
// before). While the designers work the flood goes on at -load.flood.rate
// new connections a second. go test ./tui/sshserve -run LoadPendingFlood -v -args -load
func TestLoadPendingFlood(t *testing.T) {
	if !*loadTest {
		t.Skip("the load test runs with -load")
	}
	skipWithoutSecondLoopback(t)
	n := *loadFloodSessions
	for _, p := range floodPolicies {
		t.Run(p.name, func(t *testing.T) {
			ts := startServer(t, 1, realExplorer, p.set, func(c *Config) { c.MaxSessions = n + 1 })
			ts.writeDesign(t, "opsel.sw", opselDesign)

			// phase opens the sessions, toggles, closes them and waits until
			// the server has let them go.
			phase := func(prefix string) (opened, trips []time.Duration) {
				terms, opened, errs := openLoadTerms(ts, n, designerIP, prefix)
				defer func() {
					for _, l := range terms {
						if l != nil {
							l.close()
						}
					}
					end := time.Now().Add(readDeadline)
					for ts.registry.Active() != 0 && time.Now().Before(end) {
						time.Sleep(5 * time.Millisecond)
					}
				}()
				for _, err := range errs {
					t.Errorf("refused: %v", err)
				}
				if len(errs) > 0 {
					return nil, nil
				}
				trips, errs = toggleFor(terms, *loadFor)
				for _, err := range errs {
					t.Error(err)
				}
				return opened, trips
			}

			openQuiet, quiet := phase("quiet")
			flood := openFlood(t, ts.addr, *loadFlood)
			_, fromFlood := ts.gate.counts(&net.TCPAddr{IP: net.ParseIP(floodIP)})
			stopChurn := churnFlood(ts.addr, flood, *loadFloodRate)
			openBusy, busy := phase("flooded")
			churned := stopChurn()
			if t.Failed() || len(quiet) == 0 || len(busy) == 0 {
				t.FailNow()
			}
			recs := gateRecords(t, ts)
			fq, fb := figuresOf(quiet), figuresOf(busy)
			t.Logf("limits: %d pending in all, %d from one address, %s to authenticate",
				ts.cfg.MaxPending, ts.cfg.MaxPendingPerAddr, ts.cfg.HandshakeTimeout)
			t.Logf("flood: %d connections from %s held by the client, %d of them pending at the server; while the designers worked, %d more (%d a second, each replacing the oldest held); %d log lines about the flood (at most %d a second)",
				len(flood), floodIP, fromFlood, churned, *loadFloodRate, len(recs[floodIP]), pendingLogPerSecond)
			t.Logf("%d sessions from %s, %s of toggling each phase", n, designerIP, *loadFor)
			t.Logf("connect, authenticate, first frame: without the flood %s; with it %s", figuresOf(openQuiet), figuresOf(openBusy))
			t.Logf("round trip without the flood (%d): %s", len(quiet), fq)
			t.Logf("round trip with the flood    (%d): %s", len(busy), fb)
			if len(recs[designerIP]) != 0 {
				t.Errorf("designers' connections refused or dropped: %v", recs[designerIP])
			}
			if fb.p99 > 5*fq.p99 {
				t.Errorf("p99 round trip with the flood %s is over 5x the %s without it", fb.p99, fq.p99)
			}
		})
	}
}
