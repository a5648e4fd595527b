package main

import (
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"io/fs"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"time"

	"railyard/designs"
	"railyard/switchsim"
	"railyard/switchsim/diag"
	"railyard/switchsim/lint"
	"railyard/switchsim/netfile"
	"railyard/switchsim/reach"
	"railyard/switchsim/steps"
)

// designExts are the extensions a folder is searched for. The netlist
// readers' extensions join them when the loader lands (FORMAT.md).
var designExts = []string{".sw"}

// findDesigns expands the arguments into design paths, in order: a file or
// demo:NAME as it is, a folder searched recursively for design files in
// lexical order (hidden folders skipped). A path named twice is checked once.
func findDesigns(args []string) ([]string, error) {
	var out []string
	seen := map[string]bool{}
	add := func(p string) {
		if !seen[p] {
			seen[p] = true
			out = append(out, p)
		}
	}
	for _, a := range args {
		if strings.HasPrefix(a, "demo:") {
			add(a)
			continue
		}
		st, err := os.Stat(a)
		if err != nil {
			return nil, fmt.Errorf("%s: no such design or folder", diag.Printable(a))
		}
		if !st.IsDir() {
			add(filepath.ToSlash(filepath.Clean(a)))
			continue
		}
		found := 0
		err = walkDesigns(a, func(p string) { found++; add(filepath.ToSlash(p)) })
		if err != nil {
			return nil, err
		}
		if found == 0 {
			return nil, fmt.Errorf("%s: no design files (%s) in it", diag.Printable(a), strings.Join(designExts, " "))
		}
	}
	return out, nil
}

// walkDesigns calls fn for every design file under dir. It stands in for the
// shared loader's folder walk until that lands.
func walkDesigns(dir string, fn func(path string)) error {
	return filepath.WalkDir(dir, func(p string, d fs.DirEntry, err error) error {
		if err != nil {
			return fmt.Errorf("%s: %v", diag.Printable(p), err)
		}
		if d.IsDir() {
			if p != dir && strings.HasPrefix(d.Name(), ".") {
				return filepath.SkipDir
			}
			return nil
		}
		if slices.Contains(designExts, filepath.Ext(p)) && d.Type().IsRegular() {
			fn(p)
		}
		return nil
	})
}

// checkJob is one design to check, read and planned.
type checkJob struct {
	path   string
	key    string        // cache key, with --cache
	cached *designResult // a result from the cache
	err    error         // bad input or a refused search
}

// loaded is a design read with what its check needs.
type loaded struct {
	d         *netfile.Design
	stepsPath string
	stepsSrc  []byte
	reset     [][]reach.Set
}

// load reads a design and, for --reset, its steps.
func load(path string, o checkOptions) (*loaded, error) {
	d, err := netfile.ReadFile(path)
	if err != nil {
		return nil, err
	}
	l := &loaded{d: d}
	if o.reset == 0 {
		return l, nil
	}
	sp := o.steps
	if sp == "" {
		p, ok := steps.Default(path)
		if !ok {
			return nil, fmt.Errorf("%s: --reset %d needs the design's steps, and it has none (give --steps FILE)", diag.Printable(path), o.reset)
		}
		sp = p
	}
	if l.stepsSrc, err = readStepsFile(sp); err != nil {
		return nil, err
	}
	st, err := steps.Read(sp, l.stepsSrc, d.Netlist)
	if err != nil {
		return nil, err
	}
	if len(st.Rows) < o.reset {
		return nil, fmt.Errorf("%s: --reset %d: the steps have %d rows", diag.Printable(sp), o.reset, len(st.Rows))
	}
	l.stepsPath = sp
	for _, row := range st.Rows[:o.reset] {
		var r []reach.Set
		for c, n := range st.Apply {
			r = append(r, reach.Set{Input: n, Drive: row.Drives[c]})
		}
		l.reset = append(l.reset, r)
	}
	return l, nil
}

// readStepsFile reads a steps file's bytes within the reader's size limit;
// demo:NAME.steps is an embedded demo's.
func readStepsFile(path string) ([]byte, error) {
	if name, ok := strings.CutPrefix(path, "demo:"); ok {
		if _, src, ok := designs.Source(strings.TrimSuffix(name, ".steps")); ok && src != nil {
			return src, nil
		}
		return nil, fmt.Errorf("%s: no such demo steps", diag.Printable(path))
	}
	return netfile.ReadText(path, steps.DefaultLimits().FileSize)
}

func (o checkOptions) reachOptions(l *loaded) reach.Options {
	opt := reach.Options{Mode: switchsim.Physical, Pairs: o.pairs, Reset: l.reset, MaxStates: o.maxStates, Budget: o.budget}
	if o.ideal {
		opt.Mode = switchsim.Ideal
	}
	if o.budget == 0 {
		opt.Budget = math.Inf(1)
	}
	return opt
}

// prepare reads and plans one design, and looks it up in the cache.
func prepare(path string, o checkOptions, cache *resultCache) *checkJob {
	j := &checkJob{path: path}
	l, err := load(path, o)
	if err != nil {
		j.err = err
		return j
	}
	if o.exhaustive {
		if _, err := reach.Check(l.d.Netlist, o.reachOptions(l)); err != nil {
			j.err = fmt.Errorf("%s: %w", diag.Printable(path), err)
			return j
		}
	}
	if cache != nil {
		j.key = cacheKey(l, o)
		if r := cache.get(j.key); r != nil {
			r.Path, r.Cached = path, true
			j.cached = r
		}
	}
	return j
}

// runCheck checks one design: the static checks, then the search.
func runCheck(j *checkJob, o checkOptions, progress func(reach.Progress)) *designResult {
	t0 := time.Now()
	l, err := load(j.path, o) // read again: a library's designs are not all held at once
	if err != nil {
		return &designResult{err: err}
	}
	nl := l.d.Netlist
	r := &designResult{Path: j.path, Name: l.d.Name, Mode: "physical", Nodes: nl.NumNodes(), Devices: nl.NumDevices(),
		InputNames: names(nl, nl.Inputs()), Exhaustive: o.exhaustive}
	if o.ideal {
		r.Mode = "ideal"
	}
	for _, f := range lint.Check(nl) {
		fr := findingResult{Kind: string(f.Kind), Check: "static", Failing: f.Failing(), Message: f.Message}
		if f.Node >= 0 {
			fr.Node = nl.NodeName(f.Node)
		}
		if f.Device >= 0 {
			fr.Device = nl.Device(f.Device).Name
		}
		r.Static = append(r.Static, fr)
	}
	if o.exhaustive {
		opt := o.reachOptions(l)
		opt.Progress, opt.ProgressEvery = progress, 100*time.Millisecond
		ctx, cancel := searchContext(o)
		rep, err := reach.Search(ctx, nl, opt)
		cancel()
		if err != nil {
			return &designResult{err: fmt.Errorf("%s: %w", diag.Printable(j.path), err)}
		}
		r.Pairs, r.Reset, r.StepsPath = o.pairs, o.reset, l.stepsPath
		r.States, r.Transitions, r.Depth, r.MaxStates = rep.States, rep.Transitions, rep.Depth, o.maxStates
		if rep.Stopped != reach.Done {
			r.Stopped = rep.Stopped.String()
		}
		for _, f := range rep.Findings {
			fr := findingResult{Kind: string(f.Kind), Check: "exhaustive", Failing: f.Failing(), Message: f.Message,
				States: f.States, Transitions: f.Transitions, Moves: f.Moves}
			if f.Node >= 0 {
				fr.Node = nl.NodeName(f.Node)
				if k := nl.NodeKind(f.Node); k != switchsim.Power && k != switchsim.Ground {
					fr.Want = f.Got.State.String()
				}
			}
			if f.Device >= 0 {
				fr.Device = nl.Device(f.Device).Name
			}
			for _, row := range f.Steps {
				var rr seqRow
				for _, s := range row {
					rr = append(rr, seqSet{nl.NodeName(s.Input), s.Drive.String()})
				}
				fr.Sequence = append(fr.Sequence, rr)
			}
			r.Findings = append(r.Findings, fr)
		}
	}
	r.Seconds = time.Since(t0).Seconds()
	return r
}

func names(nl *switchsim.Netlist, ns []int) []string {
	out := make([]string, len(ns))
	for i, n := range ns {
		out[i] = nl.NodeName(n)
	}
	return out
}

// cacheVersion changes whenever what a check computes changes in a way the
// build identity would not show.
const cacheVersion = "railyard check cache 1"

// cacheKey is the key of a design's result: railyard's build, the options
// that change a result, the design's and steps' bytes and the technology in
// force (a preset's values come from the build).
func cacheKey(l *loaded, o checkOptions) string {
	h := sha256.New()
	fmt.Fprintf(h, "%s\n%s\n", cacheVersion, buildIdentity())
	fmt.Fprintf(h, "exhaustive=%v pairs=%v ideal=%v reset=%d max-states=%d\n", o.exhaustive, o.pairs, o.ideal, o.reset, o.maxStates)
	fmt.Fprintf(h, "design %d\n", len(l.d.Source))
	h.Write(l.d.Source)
	fmt.Fprintf(h, "\nsteps %d\n", len(l.stepsSrc))
	h.Write(l.stepsSrc)
	fmt.Fprintf(h, "\ntech %+v\n", l.d.Netlist.Tech)
	return hex.EncodeToString(h.Sum(nil))
}
