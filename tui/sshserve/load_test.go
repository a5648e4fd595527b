package sshserve

import (
	"flag"
	"fmt"
	"io"
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

func TestLoadConcurrentSessions(t *testing.T) {
	if !*loadTest {
		t.Skip("the load test runs with -load")
	}
	n := *loadSessions
	ts := startServer(t, 1, realExplorer, func(c *Config) { c.MaxSessions = n + 1 })
	ts.writeDesign(t, "opsel.sw", opselDesign)

	heap := func() uint64 {
		runtime.GC()
		var ms runtime.MemStats
		runtime.ReadMemStats(&ms)
		return ms.HeapAlloc
	}
	before := heap()

	terms := make([]*loadTerm, n)
	var wg sync.WaitGroup
	errs := make(chan error, n)
	for i := range terms {
		wg.Add(1)
		go func(i int) {
			defer wg.Done()
			c, err := ts.dial(fmt.Sprintf("user%d", i), gossh.PublicKeys(ts.keys[0]))
			if err != nil {
				errs <- err
				return
			}
			s, err := c.NewSession()
			if err != nil {
				errs <- err
				return
			}
			l := &loadTerm{client: c, sess: s, wrote: make(chan struct{}, 1)}
			s.Stdout, s.Stderr = l, l
			if err := s.RequestPty("xterm-256color", 24, 80, gossh.TerminalModes{}); err != nil {
				errs <- err
				return
			}
			if l.in, err = s.StdinPipe(); err != nil {
				errs <- err
				return
			}
			if err := s.Start("opsel"); err != nil {
				errs <- err
				return
			}
			timeout := time.After(30 * time.Second)
			for !l.has(pickX) {
				select {
				case <-l.wrote:
				case <-timeout:
					errs <- fmt.Errorf("session %d never drew the explorer", i)
					return
				}
			}
			terms[i] = l
		}(i)
	}
	wg.Wait()
	close(errs)
	for err := range errs {
		t.Fatal(err)
	}
	t.Cleanup(func() {
		for _, l := range terms {
			l.sess.Close()
			l.client.Close()
		}
	})
	opened := heap()

	// Every session toggles pick (x, 0, 1, 0, ...) with a short pause
	// between keys, as a quick user would, until the time is up.
	var mu sync.Mutex
	var trips []time.Duration
	stop := time.Now().Add(*loadFor)
	errs = make(chan error, n)
	for i, l := range terms {
		wg.Add(1)
		go func(i int, l *loadTerm) {
			defer wg.Done()
			want := []string{pick0, pick1}
			var mine []time.Duration
			for k := 0; time.Now().Before(stop); k++ {
				d, err := l.roundTrip(" ", want[k%2], 30*time.Second)
				if err != nil {
					errs <- fmt.Errorf("session %d, toggle %d: %v", i, k+1, err)
					return
				}
				mine = append(mine, d)
				time.Sleep(50 * time.Millisecond)
			}
			mu.Lock()
			trips = append(trips, mine...)
			mu.Unlock()
		}(i, l)
	}
	wg.Wait()
	close(errs)
	for err := range errs {
		t.Error(err)
	}
	toggled := heap()
	if got := ts.registry.Active(); got != n {
		t.Errorf("%d sessions open during the load, want %d", got, n)
	}
	if len(trips) == 0 {
		t.Fatal("no round trips")
	}
	slices.Sort(trips)
	q := func(f float64) time.Duration { return trips[int(f*float64(len(trips)-1))] }
	perSession := func(after uint64) string {
		if after < before {
			return "0"
		}
		return fmt.Sprintf("%.0f KiB", float64(after-before)/float64(n)/1024)
	}
	t.Logf("%d sessions, %s of toggling, %d round trips (key to the new value on screen)", n, *loadFor, len(trips))
	t.Logf("round trip: median %s, p99 %s, slowest %s", q(0.5), q(0.99), trips[len(trips)-1])
	t.Logf("heap per session (server and client in this process): %s once open, %s after toggling",
		perSession(opened), perSession(toggled))
}
