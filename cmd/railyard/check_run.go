package main

import (
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"time"

	"railyard/switchsim"
	"railyard/switchsim/diag"
	"railyard/switchsim/lint"
	"railyard/switchsim/load"
	"railyard/switchsim/netfile"
	"railyard/switchsim/reach"
	"railyard/switchsim/session"
)

// findDesigns expands the arguments into design names, in order: a file or
// demo:NAME as it is, a folder (or demo: for every demo) searched
// recursively by the loader's walk for files of a design format, in
// lexical order (hidden files and folders skipped). A name given twice is
// checked once.
func findDesigns(files *load.Loader, args []string) ([]string, error) {
	var out []string
	seen := map[string]bool{}
	add := func(p string) {
		if !seen[p] {
			seen[p] = true
			out = append(out, p)
		}
	}
	for _, a := range args {
		if demo, ok := load.CutDemo(a); ok && demo != "" {
			add(a)
			continue
		}
		if _, ok := load.CutDemo(a); !ok {
			if st, err := os.Stat(a); err != nil || !st.IsDir() {
				add(filepath.ToSlash(filepath.Clean(a))) // the loader says why it cannot be read
				continue
			}
		}
		found := 0
		err := files.Walk(a, func(e load.Entry) error {
			found++
			add(filepath.ToSlash(e.Design))
			return nil
		})
		if err != nil {
			return nil, fmt.Errorf("%s: %v", diag.Printable(a), err)
		}
		if found == 0 {
			return nil, fmt.Errorf("%s: no design files in it (formats: %s)", diag.Printable(a), strings.Join(load.FormatNames(), ", "))
		}
	}
	return out, nil
}

// checkJob is one design to check at one technology, read and planned.
type checkJob struct {
	path   string
	corner string        // the technology corner ("" the design's own)
	key    string        // cache key, with --cache
	cached *designResult // a result from the cache
	notes  diag.List     // what the reader noticed, printed before the report
	err    error         // bad input or a refused search
}

// loaded is a design read with what its check needs.
type loaded struct {
	d         *netfile.Design
	stepsPath string
	stepsSrc  []byte
	reset     [][]reach.Set
}

// label names the job for the progress line: the design, and its corner.
func (j *checkJob) label() string {
	if j.corner == "" {
		return j.path
	}
	return j.path + " at " + j.corner
}

// loadCheck reads a design at a corner ("" its own technology) and, for
// --reset, its steps.
func loadCheck(files *load.Loader, path, corner string, o checkOptions) (*loaded, error) {
	d, err := files.Design(path)
	if err != nil {
		return nil, err
	}
	if d, err = session.AtCorner(d, corner); err != nil {
		return nil, fmt.Errorf("%s: %w", diag.Printable(files.Path(path)), err)
	}
	l := &loaded{d: d}
	if o.reset == 0 {
		return l, nil
	}
	sp := o.steps
	if sp == "" {
		p, ok := files.DefaultSteps(path)
		if !ok {
			return nil, fmt.Errorf("%s: --reset %d needs the design's steps, and it has none (give --steps FILE)", diag.Printable(files.Path(path)), o.reset)
		}
		sp = p
	}
	st, src, err := files.Steps(sp, d)
	if err != nil {
		return nil, err
	}
	if len(st.Rows) < o.reset {
		return nil, fmt.Errorf("%s: --reset %d: the steps have %d rows", diag.Printable(files.Path(sp)), o.reset, len(st.Rows))
	}
	l.stepsPath, l.stepsSrc = files.Path(sp), src
	for _, row := range st.Rows[:o.reset] {
		var r []reach.Set
		for c, n := range st.Apply {
			r = append(r, reach.Set{Input: n, Drive: row.Drives[c]})
		}
		l.reset = append(l.reset, r)
	}
	return l, nil
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

// prepare reads and plans one design, one job for each technology it is
// checked at (its own, --corner's, or with --corners its own and each of
// its corners), and looks each up in the cache.
func prepare(files *load.Loader, path string, o checkOptions, cache *resultCache) []*checkJob {
	l, err := loadCheck(files, path, o.corner, o)
	if err != nil {
		return []*checkJob{{path: path, corner: o.corner, err: err}}
	}
	corners := []string{o.corner}
	if o.corners {
		corners = append(corners, session.CornerNames(l.d)...)
	}
	var out []*checkJob
	for _, c := range corners {
		j := &checkJob{path: path, corner: c, notes: l.d.Notes}
		out = append(out, j)
		lc := l
		if c != o.corner {
			if lc, err = loadCheck(files, path, c, o); err != nil {
				j.err = err
				continue
			}
		}
		if o.exhaustive {
			if _, err := reach.Check(lc.d.Netlist, o.reachOptions(lc)); err != nil {
				j.err = fmt.Errorf("%s: %w", diag.Printable(path), err)
				continue
			}
		}
		if cache != nil {
			j.key = cacheKey(lc, c, o)
			if r := cache.get(j.key); r != nil {
				r.Path, r.Cached = files.Path(path), true
				j.cached = r
			}
		}
	}
	return out
}

// runCheck checks one design: the static checks, then the search.
func runCheck(files *load.Loader, j *checkJob, o checkOptions, progress func(reach.Progress)) *designResult {
	t0 := time.Now()
	l, err := loadCheck(files, j.path, j.corner, o) // read again: a library's designs are not all held at once
	if err != nil {
		return &designResult{err: err}
	}
	nl := l.d.Netlist
	r := &designResult{Path: files.Path(j.path), Name: l.d.Name, Mode: "physical", Nodes: nl.NumNodes(), Devices: nl.NumDevices(),
		InputNames: names(nl, nl.Inputs()), Exhaustive: o.exhaustive, Corner: j.corner}
	if o.corners {
		r.Corner = session.CornerLabel(j.corner)
	}
	if o.ideal {
		r.Mode = "ideal"
	}
	for _, f := range lint.Check(nl) {
		fr := findingResult{Kind: string(f.Kind), Check: "static", Failing: f.Failing(), Message: f.Message}
		if f.Node >= 0 {
			fr.Node = nl.DisplayName(f.Node)
		}
		if f.Device >= 0 {
			fr.Device = nl.DeviceDisplayName(f.Device)
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
		if rep.MarginNode >= 0 {
			m := rep.Margin
			r.Margin, r.MarginNode = &m, nl.DisplayName(rep.MarginNode)
			for _, row := range rep.MarginSteps {
				var rr seqRow
				for _, s := range row {
					rr = append(rr, seqSet{nl.DisplayName(s.Input), s.Drive.String()})
				}
				r.MarginSequence = append(r.MarginSequence, rr)
			}
		}
		for _, f := range rep.Findings {
			fr := findingResult{Kind: string(f.Kind), Check: "exhaustive", Failing: f.Failing(), Message: f.Message,
				States: f.States, Transitions: f.Transitions, Moves: f.Moves}
			if f.Node >= 0 {
				fr.Node = nl.DisplayName(f.Node)
				if k := nl.NodeKind(f.Node); k != switchsim.Power && k != switchsim.Ground {
					fr.Want = f.Got.State.String()
				}
			}
			if f.Device >= 0 {
				fr.Device = nl.DeviceDisplayName(f.Device)
			}
			for _, row := range f.Steps {
				var rr seqRow
				for _, s := range row {
					rr = append(rr, seqSet{nl.DisplayName(s.Input), s.Drive.String()})
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
		out[i] = nl.DisplayName(n)
	}
	return out
}

// cacheVersion changes whenever what a check computes changes in a way the
// build identity would not show.
const cacheVersion = "railyard check cache 2"

// cacheKey is the key of a design's result: railyard's build, the options
// that change a result, the design's and steps' bytes and the technology in
// force (a preset's values come from the build).
func cacheKey(l *loaded, corner string, o checkOptions) string {
	h := sha256.New()
	fmt.Fprintf(h, "%s\n%s\ncorner %q labelled=%v\n", cacheVersion, buildIdentity(), corner, o.corners)
	fmt.Fprintf(h, "exhaustive=%v pairs=%v ideal=%v reset=%d max-states=%d\n", o.exhaustive, o.pairs, o.ideal, o.reset, o.maxStates)
	fmt.Fprintf(h, "design %d\n", len(l.d.Source))
	h.Write(l.d.Source)
	fmt.Fprintf(h, "\nsteps %d\n", len(l.stepsSrc))
	h.Write(l.stepsSrc)
	fmt.Fprintf(h, "\ntech %+v\n", l.d.Netlist.Tech)
	// A netlist's reading also depends on its includes and the reader
	// options (rails, inputs): the compiled netlist, written flat, holds
	// all of what they decide.
	if err := netfile.WriteNetlist(h, l.d.Netlist); err != nil {
		fmt.Fprintf(h, "unwritable %v %+v %q\n", err, l.d.Options, l.d.Includes)
	}
	return hex.EncodeToString(h.Sum(nil))
}
