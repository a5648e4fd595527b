package trace

import (
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"regexp"
	"strings"

	"railyard/switchsim"
	"railyard/switchsim/diag"
	"railyard/switchsim/load"
	"railyard/switchsim/netfile"
	"railyard/switchsim/session"
	"railyard/switchsim/steps"
)

// ReplayOptions say where a replay looks for the design.
type ReplayOptions struct {
	// Files reads the design and the steps (the command line's loader with
	// its format flags); nil: the plain host loader.
	Files *load.Loader
	// Designs is a folder searched for the design (and its steps) when it
	// is not where the trace says: first by the name the trace gives, then
	// by content hash, so a design that moved or was renamed is found.
	Designs string
}

// Report is the outcome of a replay.
type Report struct {
	Header        Header
	Design        string // the design file replayed
	DesignChanged bool   // its content hash differs from the trace's
	Actions       int    // actions in the trace (the end line's count): start, sets, steps and backs
	Capped        int    // actions the trace's writer left out for its cap
	// Differences are the first MaxDifferences differences, worded, each at
	// the line of the action it concerns; Count is how many there were.
	Differences []string
	Count       int
	Notes       []string // what the replay could not compare, and why
}

// Match reports whether the replay reproduced the trace.
func (r *Report) Match() bool { return r.Count == 0 }

// MaxDifferences bounds the differences a replay lists.
const MaxDifferences = 20

// readerFor is the loader that reads the design as the session did: with
// the format and reader options the trace records for a netlist, each
// overridden by one the replay's own loader was given (the command's
// flags, for a trace written before these lines).
func readerFor(files *load.Loader, h *Header) *load.Loader {
	if h.Format == "" {
		return files
	}
	o := files.Options()
	given, rec := o.ReadOptions, h.Read
	if o.Format == "" {
		o.Format = h.Format
	}
	pick := func(a, b []string) []string {
		if a != nil {
			return a
		}
		return b
	}
	o.ReadOptions = netfile.ReadOptions{Top: given.Top, Power: pick(given.Power, rec.Power), Ground: pick(given.Ground, rec.Ground),
		Inputs: pick(given.Inputs, rec.Inputs), NMOSModels: pick(given.NMOSModels, rec.NMOSModels), PMOSModels: pick(given.PMOSModels, rec.PMOSModels)}
	if o.Top == "" {
		o.Top = rec.Top
	}
	return files.WithOptions(o)
}

func (o ReplayOptions) files() *load.Loader {
	if o.Files != nil {
		return o.Files
	}
	return load.Host(load.Options{})
}

// designErrors is how many errors of a design that will not read are shown:
// a trace may name a file that is no design at all.
const designErrors = 3

// Replay reads the trace in r (named file) and re-runs every action on
// the design it names, comparing every recorded result: rounds, node
// changes round by round, checks and warnings, and, when the steps file is
// at hand and unchanged, each step's row and label. The trace is streamed:
// memory does not grow with its length. A trace that does not read is an
// error (a diag.List); so is a design that cannot be found or read.
func Replay(file string, r io.Reader, opt ReplayOptions) (*Report, error) {
	rep := &Report{}
	var (
		s      *session.Session
		st     *steps.Steps
		nl     *switchsim.Netlist
		stFile string
	)
	differ := func(a *Action, f string, args ...any) {
		rep.Count++
		if len(rep.Differences) < MaxDifferences {
			rep.Differences = append(rep.Differences, fmt.Sprintf("%s: action %d: %s", a.Pos, a.Seq, fmt.Sprintf(f, args...)))
		}
	}
	info, err := Read(file, r, func(h *Header, a *Action) error {
		if a == nil {
			rep.Header = *h
			path, changed, err := findDesign(file, h, opt)
			if err != nil {
				return err
			}
			d, err := readDesign(readerFor(opt.files(), h), path)
			if err != nil {
				return err
			}
			rep.Design, rep.DesignChanged = path, changed
			if changed {
				rep.Count++
				rep.Differences = append(rep.Differences, fmt.Sprintf("%s: the design changed since the trace was made (content hash differs): %s", h.DesignPos, path))
			}
			so := session.Options{Mode: h.Mode, FullSwing: h.FullSwing, Corner: h.Corner, MarginCheck: h.MarginCheck, MinMargin: h.MinMargin, Glitches: h.Glitches}
			if _, err := session.AtCorner(d, h.Corner); err != nil {
				return diag.List{&diag.Error{Pos: h.CornerPos, Msg: diag.Printable(err.Error())}}
			}
			for _, name := range h.Watch {
				n, found := d.Netlist.Lookup(name)
				if !found {
					return diag.List{&diag.Error{Pos: h.WatchPos, Msg: fmt.Sprintf("the design has no node %s to watch", excerpt(name))}}
				}
				so.Watch = append(so.Watch, n)
			}
			s = session.New(d, path, nil, so)
			nl = s.Netlist()
			st, stFile = findSteps(file, h, opt, d, rep)
			return nil
		}
		replayAction(s, nl, st, stFile, a, differ)
		return nil
	})
	if err != nil {
		return nil, err
	}
	rep.Actions, rep.Capped = info.Actions, info.Capped
	return rep, nil
}

func replayAction(s *session.Session, nl *switchsim.Netlist, st *steps.Steps, stFile string, a *Action, differ func(*Action, string, ...any)) {
	var e *session.Event
	var err error
	switch a.Kind {
	case session.Start:
		e = s.Last()
	case session.Back:
		if !s.GoBack() {
			differ(a, "back at the start of the session")
		}
		return
	case session.Set:
		dr, _ := switchsim.ParseDrive(a.Set[1]) // checked by Read
		if e, err = s.SetByName(a.Set[0], dr); err != nil {
			differ(a, "%s", diag.Printable(err.Error()))
			return
		}
	case session.Step:
		act := session.Action{Kind: session.Step, Step: a.Step - 1, Label: a.Label}
		for _, in := range a.Drives {
			n, found := nl.Lookup(in[0])
			dr, _ := switchsim.ParseDrive(in[1])
			if !found || nl.NodeKind(n) != switchsim.Input {
				differ(a, "cannot apply %s=%s: this design has no such input", excerpt(in[0]), in[1])
				return
			}
			act.Drives = append(act.Drives, session.InputDrive{Node: n, Drive: dr})
		}
		for _, c := range a.Checks {
			n, found := nl.Lookup(c[0])
			w, _ := steps.ParseWant(c[1])
			if !found {
				differ(a, "cannot check %s: this design has no such node", excerpt(c[0]))
				return
			}
			act.Nodes, act.Checks = append(act.Nodes, n), append(act.Checks, w)
		}
		if st != nil {
			compareRow(nl, st, stFile, a, act, differ)
		}
		if e, err = s.ApplyAction(act); err != nil {
			differ(a, "%s", diag.Printable(err.Error()))
			return
		}
	}
	compareEvent(nl, a, e, differ)
}

// compareRow checks a step action against the steps file's row it names:
// the label, the drives and the wanted values.
func compareRow(nl *switchsim.Netlist, st *steps.Steps, stFile string, a *Action, act session.Action, differ func(*Action, string, ...any)) {
	if a.Step < 1 || a.Step > len(st.Rows) {
		differ(a, "step %d: %s has %d rows", a.Step, stFile, len(st.Rows))
		return
	}
	row := st.Rows[a.Step-1]
	if row.Label != a.Label {
		differ(a, "step %d's label is %s in the trace, %s in %s", a.Step, excerpt(a.Label), excerpt(row.Label), stFile)
	}
	var want []string
	for c, n := range st.Apply {
		want = append(want, nl.NodeName(n)+"="+row.Drives[c].String())
	}
	var got []string
	for _, in := range act.Drives {
		got = append(got, nl.NodeName(in.Node)+"="+in.Drive.String())
	}
	if d := firstDiff(got, want); d != "" {
		differ(a, "step %d's drives differ from %s: %s", a.Step, stFile, d)
	}
	want, got = want[:0], got[:0]
	for c, n := range st.Check {
		want = append(want, nl.NodeName(n)+"="+row.Wants[c].String())
	}
	for c, n := range act.Nodes {
		got = append(got, nl.NodeName(n)+"="+act.Checks[c].String())
	}
	if d := firstDiff(got, want); d != "" {
		differ(a, "step %d's checks differ from %s: %s", a.Step, stFile, d)
	}
}

func compareEvent(nl *switchsim.Netlist, a *Action, e *session.Event, differ func(*Action, string, ...any)) {
	if e.Rounds != a.Rounds {
		differ(a, "took %d rounds, the trace says %d", e.Rounds, a.Rounds)
	}
	got := make([]string, 0, len(e.Changes))
	for _, c := range e.Changes {
		got = append(got, changeKey(c.Round, nl.NodeName(c.Node), c.NodeState))
	}
	if d := firstDiff(got, a.Changes); d != "" {
		differ(a, "node changes differ: %s", d)
	}
	got = got[:0]
	for i, c := range e.Checks {
		k := checkKey(nl.NodeName(c.Node), c)
		if i < len(a.Results) && strings.Count(a.Results[i], " ") == 4 { // a trace from before margins
			k = withoutMargin(k)
		}
		got = append(got, k)
	}
	if d := firstDiff(got, a.Results); d != "" {
		differ(a, "checks differ: %s", d)
	}
	got = got[:0]
	for _, w := range e.Warnings {
		got = append(got, warnKey(string(w.Kind), nl.NodeName(w.Node)))
	}
	if d := firstDiff(got, a.Warnings); d != "" {
		differ(a, "warnings differ: %s", d)
	}
}

// firstDiff words the first difference between what the replay got and
// what the trace wants, or returns "".
func firstDiff(got, want []string) string {
	for i := 0; i < len(got) || i < len(want); i++ {
		switch {
		case i >= len(got):
			return fmt.Sprintf("the trace has %s, the replay has nothing more", quoteShort(want[i]))
		case i >= len(want):
			return fmt.Sprintf("the replay has %s, the trace has nothing more", quoteShort(got[i]))
		case got[i] != want[i]:
			return fmt.Sprintf("replay %s, trace %s", quoteShort(got[i]), quoteShort(want[i]))
		}
	}
	return ""
}

// quoteShort quotes a result line, cut to a length a terminal line holds.
func quoteShort(s string) string {
	if len(s) > 120 {
		return excerpt(s[:120]) + "..."
	}
	return fmt.Sprintf("%q", diag.Printable(s))
}

// --- finding the design ---

// candidates are the paths a name the trace gives may mean, in order: a
// version 2 name is relative to the trace's folder, a version 1 name to
// where railyard ran; then the same name under the designs folder, then
// its base name there (a served trace names its design relative to the
// server's designs folder).
func candidates(traceFile, name string, h *Header, designsDir string) []string {
	if isDemo(name) {
		return []string{name}
	}
	p := filepath.FromSlash(name)
	var out []string
	if filepath.IsAbs(p) {
		out = append(out, p)
	} else {
		beside := filepath.Join(filepath.Dir(traceFile), p)
		if h.Version >= 2 {
			out = append(out, beside, p)
		} else {
			out = append(out, p, beside)
		}
	}
	if designsDir != "" && !filepath.IsAbs(p) {
		out = append(out, filepath.Join(designsDir, p))
	}
	if designsDir != "" {
		out = append(out, filepath.Join(designsDir, filepath.Base(p)))
	}
	return out
}

// findDesign picks the design file: the first candidate whose content hash
// matches, else one found by hash under opt.Designs, else the first
// candidate that exists (reported as changed).
func findDesign(traceFile string, h *Header, opt ReplayOptions) (path string, changed bool, err error) {
	files := opt.files()
	cands := candidates(traceFile, h.Design, h, opt.Designs)
	if _, demo := load.CutDemo(h.Design); demo {
		d, err := readDesign(files, h.Design)
		if err != nil {
			return "", false, err
		}
		return h.Design, session.Hash(d.Source) != h.DesignHash, nil
	}
	if !load.Known(h.Design) {
		// A trace may name any file; railyard reads only designs.
		var exts []string
		for _, f := range load.Formats() {
			exts = append(exts, f.Exts...)
		}
		return "", false, &diag.Error{Pos: h.DesignPos, Msg: fmt.Sprintf("%s is not a design file (want one of %s): not read", pathText(h.Design), strings.Join(exts, " "))}
	}
	first := ""
	for _, c := range cands {
		if !isFile(c) {
			continue
		}
		if first == "" {
			first = c
		}
		if hashFile(files, c) == h.DesignHash {
			return c, false, nil
		}
	}
	if opt.Designs != "" {
		if p := searchHash(files, opt.Designs, h.DesignHash); p != "" {
			return p, false, nil
		}
	}
	if first != "" {
		return first, true, nil
	}
	where := "beside the trace"
	if opt.Designs != "" {
		where += " or in " + opt.Designs + " (by name or content)"
	} else {
		where += "; give --designs DIR to search a folder for it by content"
	}
	return "", false, &diag.Error{Pos: h.DesignPos, Msg: fmt.Sprintf("the design %s was not found %s", pathText(h.Design), where)}
}

// findSteps finds the steps file the trace names, for comparing each
// step's row and label. It is optional: without it the rows are not
// compared, and a note says so; a steps file whose content changed is a
// difference.
func findSteps(traceFile string, h *Header, opt ReplayOptions, d *netfile.Design, rep *Report) (*steps.Steps, string) {
	if h.Steps == "" {
		return nil, ""
	}
	files := opt.files()
	var path string
	if _, demo := load.CutDemo(h.Steps); demo {
		st, ssrc, err := files.Steps(h.Steps, d)
		if err != nil {
			rep.Notes = append(rep.Notes, fmt.Sprintf("%s: the steps %s do not read: step rows and labels are not compared", h.StepsPos, pathText(h.Steps)))
			return nil, ""
		}
		if session.Hash(ssrc) != h.StepsHash {
			rep.Count++
			rep.Differences = append(rep.Differences, fmt.Sprintf("%s: the steps changed since the trace was made (content hash differs): %s", h.StepsPos, h.Steps))
		}
		return st, h.Steps
	}
	for _, c := range candidates(traceFile, h.Steps, h, opt.Designs) {
		if isFile(c) && hashFile(files, c) == h.StepsHash {
			path = c
			break
		}
	}
	if path == "" && opt.Designs != "" {
		path = searchHash(files, opt.Designs, h.StepsHash)
	}
	if path == "" {
		rep.Notes = append(rep.Notes, fmt.Sprintf("%s: the steps file %s was not found unchanged: step rows and labels are not compared", h.StepsPos, pathText(h.Steps)))
		return nil, ""
	}
	if st, _, err := files.Steps(path, d); err == nil {
		return st, path
	}
	rep.Notes = append(rep.Notes, fmt.Sprintf("%s: the steps file %s does not read for this design: step rows and labels are not compared", h.StepsPos, path))
	return nil, ""
}

func isFile(p string) bool {
	fi, err := os.Stat(p)
	return err == nil && fi.Mode().IsRegular()
}

// hashFile is the content hash of a file within the loader's size limit,
// or "" for one that cannot be read or is larger.
func hashFile(files *load.Loader, p string) string {
	src, err := files.ReadFile(p)
	if err != nil {
		return ""
	}
	return session.Hash(src)
}

// Bounds of a search by hash: a designs folder is a library of cells, not a
// disk to crawl.
const (
	searchFiles = 20000
	searchDepth = 8
	searchBytes = 1 << 30
)

// searchHash walks dir (not following symbolic links) for a regular file
// whose content hash is hash, in lexical order; "" when none is found
// within the search bounds.
func searchHash(files *load.Loader, dir, hash string) string {
	found := ""
	seen := 0
	var read int64
	limit := int64(load.DefaultMaxBytes)
	if m := files.Options().MaxBytes; m > 0 {
		limit = int64(m)
	}
	filepath.WalkDir(dir, func(p string, d fs.DirEntry, err error) error {
		if err != nil {
			return nil
		}
		if d.IsDir() {
			if rel, _ := filepath.Rel(dir, p); rel != "." && strings.Count(rel, string(filepath.Separator)) >= searchDepth {
				return fs.SkipDir
			}
			return nil
		}
		if !d.Type().IsRegular() {
			return nil
		}
		seen++
		if seen > searchFiles || read > searchBytes {
			return fs.SkipAll
		}
		fi, err := d.Info()
		if err != nil || fi.Size() > limit {
			return nil
		}
		read += fi.Size()
		if hashFile(files, p) == hash {
			found = p
			return fs.SkipAll
		}
		return nil
	})
	return found
}

// readDesign reads the design. A file that is plainly not a design (a
// trace may name any file) gives only its first errors, each cut short.
func readDesign(files *load.Loader, path string) (*netfile.Design, error) {
	d, err := files.Design(path)
	if err == nil {
		return d, nil
	}
	lines := strings.Split(strings.TrimRight(err.Error(), "\n"), "\n")
	var out []string
	for i, l := range lines {
		if i == designErrors {
			out = append(out, fmt.Sprintf("%s: %d more errors: it does not read as a design; stopped", path, len(lines)-designErrors))
			break
		}
		out = append(out, shortLine(l))
	}
	return nil, errors.New(strings.Join(out, "\n"))
}

// pathText quotes a file name the trace gives, made printable and cut to
// a length a line holds.
func pathText(p string) string {
	if len(p) > 160 {
		return excerpt(p[:160]) + "..."
	}
	return fmt.Sprintf("%q", diag.Printable(p))
}

// quoted finds the quoted words a reader's message copies from the file.
var quoted = regexp.MustCompile(`"([^"]{20})[^"]*"`)

// shortLine keeps an error's position and a short excerpt of its message:
// the words it quotes from the file cut to 20 bytes, the line to 100.
func shortLine(l string) string {
	const n = 100
	l = quoted.ReplaceAllString(diag.Printable(l), `"$1..."`)
	if len(l) <= n {
		return l
	}
	cut := n
	for cut > 0 && (l[cut]&0xc0) == 0x80 {
		cut--
	}
	return l[:cut] + "..."
}
