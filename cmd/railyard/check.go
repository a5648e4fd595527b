package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"runtime"
	"strconv"
	"strings"
	"sync"
	"time"

	"railyard/designs"
	"railyard/switchsim/load"
	"railyard/switchsim/netfile"
	"railyard/switchsim/reach"
)

const checkUsage = `
usage: railyard check PATH ... [--exhaustive [--pairs] [--reset N]] [--ideal]
                               [--corner NAME | --corners]
                               [--json] [--junit FILE] [-j N] [--shard K/N] [--cache DIR]

Check designs: each PATH is a design file, demo:NAME, or a folder searched
recursively for design files by extension (demo: alone is every demo).
Designs are checked in parallel on -j workers and reported in the order
given; with more than one design a summary table ends the report.

Static checks read the structure alone: a node no device can drive, a gate
node with no driver, an input that drives nothing, a device whose channel
terminals are the same node, an output that always floats, the rails joined
by always-on devices.

With --exhaustive, every state the design can reach is visited, breadth
first from the settled state with every input 0 (or after the first N rows
of the design's steps with --reset N): each input flipped, and with --pairs
every two inputs changed together. Each conflict, lost level, floating
output, race, glitch on a dynamic node, failed write, short, oscillation,
hazard, contention and degraded output is reported once, with the number of
states and transitions where it occurs and the shortest input sequence that
reaches it; --save-steps DIR writes that sequence as a steps file that run
and explore open. The cost is estimated first and the search is refused
over --budget; --max-states and --time-limit stop it (and fail the check).
The search also finds each design's worst margin: the smallest noise
margin of an output (V - VIH for a 1, VIL - V for a 0) over every settle.

--corner NAME checks every design at its technology corner NAME (a design
without it is bad input); --corners checks each design at its own
technology and at every corner it names, each its own result (and its own
JUnit testcase).

Exit status: 1 when a design has a conflict, a lost level, a floating
output, a race, a glitch on a dynamic node, a failed write or a short
(static rail shorts included), or its search stopped before the end; else
0; 2 on bad input (nothing is printed to stdout then).

examples:
  railyard check demo:` + designs.Default + ` --exhaustive
  railyard check cells/opsel.sw --exhaustive --pairs --save-steps found
  railyard check cells/ --exhaustive -j 4 --junit check.xml
  railyard check cells/ --exhaustive --shard 2/4 --cache .railyard-cache --json
  railyard check lib/oplatch.cdl --top oplatch --power vpwr --ground vgnd --exhaustive
  railyard check cells/ --exhaustive --corners --junit check.xml
`

// checkOptions are the flags of `check`.
type checkOptions struct {
	exhaustive, pairs, ideal, json bool
	reset                          int
	steps                          string
	maxStates                      int
	budget                         float64
	timeLimit                      time.Duration
	saveSteps, junit, cache        string
	jobs                           int
	shard                          shard
	corner                         string
	corners                        bool
}

func cmdCheck(args []string, stdout, stderr io.Writer) int {
	fs := newFlags("check", checkUsage)
	var o checkOptions
	fs.BoolVar(&o.exhaustive, "exhaustive", false, "visit every reachable state")
	fs.BoolVar(&o.pairs, "pairs", false, "with --exhaustive: also change every pair of inputs together")
	fs.IntVar(&o.reset, "reset", 0, "with --exhaustive: start after the first `N` rows of the design's steps")
	fs.StringVar(&o.steps, "steps", "", "the steps `FILE` for --reset (one design only; default: the design's same-named .steps file)")
	fs.BoolVar(&o.ideal, "ideal", false, "ideal mode: strengths only, no voltage estimates")
	fs.IntVar(&o.maxStates, "max-states", reach.DefaultMaxStates, "stop the search after `N` states (and fail)")
	fs.Float64Var(&o.budget, "budget", reach.DefaultBudget, "refuse a search estimated above `N` device-settles (states x moves x devices); 0 lifts the bound")
	fs.DurationVar(&o.timeLimit, "time-limit", 0, "stop each design's search after `D` (and fail), e.g. 30s; 0: no limit")
	fs.StringVar(&o.saveSteps, "save-steps", "", "write each finding's shortest sequence as a steps file in `DIR`")
	fs.BoolVar(&o.json, "json", false, "print JSON lines (one per design and per finding) instead of the text report")
	fs.StringVar(&o.junit, "junit", "", "write a JUnit XML report to `FILE`")
	fs.IntVar(&o.jobs, "j", 0, "check `N` designs at once (default: every core)")
	fs.Var(&o.shard, "shard", "check only shard `K/N` of the designs (split by a hash of each path)")
	fs.StringVar(&o.cache, "cache", "", "keep results in `DIR`; an unchanged design is not checked again")
	fs.StringVar(&o.corner, "corner", "", "check every design at its technology corner `NAME`")
	fs.BoolVar(&o.corners, "corners", false, "check every design at its own technology and at each of its corners")
	lf := addLoadFlags(fs)
	pos, code := parseArgs(fs, args, stdout, stderr)
	if code >= 0 {
		return code
	}
	if len(pos) == 0 {
		return usageError(stderr, "check", "want at least one DESIGN or folder")
	}
	switch {
	case o.jobs < 0:
		return usageError(stderr, "check", "-j %d: want a number of workers, 1 or more (0: every core)", o.jobs)
	case o.reset < 0:
		return usageError(stderr, "check", "--reset %d: want a number of rows, 0 or more", o.reset)
	case o.maxStates <= 0:
		return usageError(stderr, "check", "--max-states %d: want 1 or more", o.maxStates)
	case o.budget < 0 || math.IsNaN(o.budget):
		return usageError(stderr, "check", "--budget %v: want 0 (no bound) or more", o.budget)
	case o.timeLimit < 0:
		return usageError(stderr, "check", "--time-limit %v: want 0 (no limit) or more", o.timeLimit)
	case !o.exhaustive && (o.pairs || o.reset > 0 || o.saveSteps != ""):
		return usageError(stderr, "check", "--pairs, --reset and --save-steps go with --exhaustive")
	case o.steps != "" && o.reset == 0:
		return usageError(stderr, "check", "--steps is read for --reset only")
	case o.corners && o.corner != "":
		return usageError(stderr, "check", "--corners checks every corner; give it or --corner NAME, not both")
	case o.ideal && (o.corners || o.corner != ""):
		return usageError(stderr, "check", "--corner and --corners need physical mode: ideal mode reads no technology")
	}
	if o.jobs == 0 {
		o.jobs = runtime.NumCPU()
	}
	files, err := lf.loader()
	if err != nil {
		return usageError(stderr, "check", "%v", err)
	}
	return checkDesigns(files, pos, o, stdout, stderr)
}

// checkDesigns is the library check: find the designs, refuse bad input
// before printing anything, check in parallel, report in order.
func checkDesigns(files *load.Loader, args []string, o checkOptions, stdout, stderr io.Writer) int {
	paths, err := findDesigns(files, args)
	if err != nil {
		fmt.Fprintf(stderr, "railyard check: %v\n", err)
		return exitUsage
	}
	if o.steps != "" && len(paths) != 1 {
		return usageError(stderr, "check", "--steps goes with one design (got %d); each design's own steps are read by default", len(paths))
	}
	paths = o.shard.pick(paths)
	if err := checkOutputPaths(o, paths); err != nil {
		fmt.Fprintf(stderr, "railyard check: %v\n", err)
		return exitUsage
	}
	var cache *resultCache
	if o.cache != "" {
		if cache, err = openCache(o.cache); err != nil {
			fmt.Fprintf(stderr, "railyard check: %v\n", err)
			return exitUsage
		}
	}

	// Read and plan every design first: bad input, too many inputs or a
	// search over the budget stops the run before anything is printed.
	t0 := time.Now()
	perDesign := make([][]*checkJob, len(paths))
	parallel(len(paths), o.jobs, func(i int) { perDesign[i] = prepare(files, paths[i], o, cache) })
	var jobs []*checkJob
	for _, js := range perDesign {
		jobs = append(jobs, js...)
	}
	bad := false
	for _, j := range jobs {
		if j.err != nil {
			bad = true
			printLoadError(stderr, j.err)
		}
	}
	if bad {
		return exitUsage
	}
	for _, j := range jobs {
		if j.corner == "" || !o.corners {
			printNotes(stderr, &netfile.Design{Notes: j.notes}) // once a design
		}
		j.notes = nil
	}

	prog := newCheckProgress(stderr, len(jobs), o.exhaustive)
	results := make([]*designResult, len(jobs))
	done := make([]chan struct{}, len(jobs))
	for i := range done {
		done[i] = make(chan struct{})
	}
	go parallel(len(jobs), o.jobs, func(i int) {
		defer close(done[i])
		j := jobs[i]
		if j.cached != nil {
			results[i] = j.cached
			prog.finish(i)
			return
		}
		prog.start(i, j.label())
		results[i] = runCheck(files, j, o, prog.searching(i))
		prog.finish(i)
		if cache != nil && results[i].err == nil && results[i].Stopped != reach.AtTimeLimit.String() {
			cache.put(j.key, results[i])
		}
	})

	out := newCheckReport(stdout, o, len(jobs))
	failed, broken := false, false
	for i := range jobs {
		<-done[i]
		r := results[i]
		if r.err != nil {
			prog.quietly(func() { printLoadError(stderr, r.err) })
			broken = true
			continue
		}
		if o.saveSteps != "" {
			if err := saveFindingSteps(o.saveSteps, r, len(jobs) > 1); err != nil {
				prog.quietly(func() { fmt.Fprintf(stderr, "railyard check: --save-steps: %v\n", err) })
				broken = true
			}
		}
		prog.quietly(func() { out.design(r) })
		failed = failed || !r.pass()
	}
	prog.stop()
	out.summary(results, time.Since(t0))
	if o.junit != "" {
		if err := writeJUnit(o.junit, results, o, time.Since(t0)); err != nil {
			fmt.Fprintf(stderr, "railyard check: --junit: %v\n", err)
			broken = true
		}
	}
	if cache != nil {
		cache.trim(maxCacheBytes)
	}
	switch {
	case broken:
		return exitUsage
	case failed:
		return exitFail
	}
	return exitOK
}

// printLoadError prints a reader's error (FILE:LINE:COL: message lines) or
// a refusal, as it is.
func printLoadError(stderr io.Writer, err error) {
	var tm *reach.TooManyInputsError
	var ob *reach.OverBudgetError
	switch {
	case errors.As(err, &tm):
		fmt.Fprintf(stderr, "%v; run the static checks alone, or drive some inputs from a steps file with railyard run\n", err)
	case errors.As(err, &ob):
		fmt.Fprintf(stderr, "%v; lift it with --budget 0 (and bound the run with --time-limit), or lower --max-states\n", err)
	default:
		loadError(stderr, err)
	}
}

// parallel runs fn(0..n-1) on at most workers goroutines and returns when
// all are done.
func parallel(n, workers int, fn func(i int)) {
	next := make(chan int)
	var wg sync.WaitGroup
	for w := 0; w < min(max(workers, 1), max(n, 1)); w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range next {
				fn(i)
			}
		}()
	}
	for i := 0; i < n; i++ {
		next <- i
	}
	close(next)
	wg.Wait()
}

// shard is --shard K/N: the designs whose path hashes to K-1 modulo N.
type shard struct{ k, n int }

func (s *shard) String() string {
	if s.n == 0 {
		return ""
	}
	return fmt.Sprintf("%d/%d", s.k, s.n)
}

func (s *shard) Set(v string) error {
	a, b, ok := strings.Cut(v, "/")
	k, err1 := strconv.Atoi(a)
	n, err2 := strconv.Atoi(b)
	if !ok || err1 != nil || err2 != nil || n < 1 || k < 1 || k > n {
		return fmt.Errorf("want K/N with 1 <= K <= N, e.g. 2/4")
	}
	s.k, s.n = k, n
	return nil
}

// pick keeps this shard's designs, in their order. The hash is FNV-1a (64
// bits) of the path as railyard names it, slash-separated, so every job of
// a CI run that names the same folders splits them the same way.
func (s shard) pick(paths []string) []string {
	if s.n <= 1 {
		return paths
	}
	var out []string
	for _, p := range paths {
		if shardOf(p, s.n) == s.k-1 {
			out = append(out, p)
		}
	}
	return out
}

func shardOf(path string, n int) int {
	h := uint64(14695981039346656037)
	for i := 0; i < len(path); i++ {
		h ^= uint64(path[i])
		h *= 1099511628211
	}
	return int(h % uint64(n))
}

// searchContext bounds one design's search by --time-limit.
func searchContext(o checkOptions) (context.Context, context.CancelFunc) {
	if o.timeLimit > 0 {
		return context.WithTimeout(context.Background(), o.timeLimit)
	}
	return context.WithCancel(context.Background())
}

// isFile reports whether path names an existing file that is not a regular one.
func notRegular(path string) bool {
	st, err := os.Lstat(path)
	return err == nil && !st.Mode().IsRegular()
}
