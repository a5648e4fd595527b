package trace

import (
	"bufio"
	"bytes"
	"errors"
	"fmt"
	"io"
	"math"
	"slices"
	"strconv"
	"strings"
	"unicode/utf8"

	"railyard/switchsim"
	"railyard/switchsim/diag"
	"railyard/switchsim/load"
	"railyard/switchsim/netfile"
	"railyard/switchsim/session"
	"railyard/switchsim/steps"
)

// Header is what a trace says before its first action.
type Header struct {
	Version    int
	Design     string // as written: relative to the trace's folder (version 2), as given (version 1), or demo:NAME
	DesignHash string
	Steps      string // "" for none
	StepsHash  string
	Mode       switchsim.Mode
	FullSwing  bool
	Tech       string
	// Format and Read are the reader and its options that read a netlist
	// (format, read and inputs lines; Read.Inputs its inputs); "" and
	// zero for a .sw design and for traces written before these lines.
	Format    string
	Read      netfile.ReadOptions
	Created   string
	DesignPos diag.Pos // the design line, for errors about the design
	StepsPos  diag.Pos
	// Corner is the technology corner the session ran at ("" the design's
	// own; a corner line), MinMargin the --min-margin in force when
	// MarginCheck (a min-margin line), and Watch the nodes whose levels it
	// checked besides the outputs (a watch line). Older traces have none.
	Corner      string
	CornerPos   diag.Pos
	MarginCheck bool
	MinMargin   float64
	Glitches    bool // a glitches line: single-input steps ran phase A alone (session.Options.Glitches)
	Watch       []string
	WatchPos    diag.Pos
}

// Action is one recorded action with what it did, as written.
type Action struct {
	Pos    diag.Pos // the action line
	Seq    int
	Kind   session.Kind
	Set    [2]string   // Set: input name and drive
	Step   int         // Step: 1-based row number
	Label  string      // Step
	Drives [][2]string // Step: input name, drive
	Checks [][2]string // Step: node name, want
	Rounds int
	// Changes, Results and Warnings are the body lines in the form the
	// replay words its own results (changeKey, checkKey, warnKey).
	Changes  []string
	Results  []string
	Warnings []string

	hasRounds bool
}

// Info is what a whole trace held.
type Info struct {
	Header  Header
	Actions int // the end line's count, equal to the actions read
	Capped  int // actions the writer left out for the cap (capped line)
}

// Read checks a trace from r line by line and calls fn with the header
// once it is complete (a nil action), then with each action in order,
// while no error has been found; an error from fn stops the read and is
// returned. Errors in the trace are a diag.List, FILE:LINE:COL each: the
// read goes on after one to find a few more, and stops after maxErrors or
// at a line that shows the file is no trace. Required header lines,
// consecutive action numbers, numbers in range, a rounds line for every
// action that settles, and an end line whose count matches are all
// checked: a trace cut short or edited into nonsense is an error, not a
// match.
func Read(file string, r io.Reader, fn func(h *Header, a *Action) error) (*Info, error) {
	rd := &reader{file: file, in: bufio.NewReaderSize(r, 64<<10), errs: diag.NewSink(maxErrors), fn: fn}
	rd.info.Header.Mode = switchsim.Physical
	err := rd.run()
	if err != nil {
		return nil, err
	}
	if rd.errs.Any() {
		full := rd.errs.Full()
		list := rd.errs.Err().(diag.List)
		if full {
			list = append(list, &diag.Error{Pos: diag.Pos{File: file, Line: rd.line}, Msg: "too many errors: stopped reading"})
		}
		return nil, list
	}
	return &rd.info, nil
}

type reader struct {
	file  string
	in    *bufio.Reader
	errs  *diag.Sink
	fn    func(*Header, *Action) error
	info  Info
	line  int
	read  int64
	stop  bool // no more lines are read
	magic bool
	seen  map[string]diag.Pos // header keys seen
	inHdr bool                // the header is complete and was given to fn
	cur   *Action
	count int // actions read
	ended bool
	start bool // an action 0 start was read
	last  int  // the last line read (for errors at the end)
	fnErr error
}

// tok is one word of a line and its column.
type tok struct {
	s   string
	col int
}

func fields(line string) []tok {
	var out []tok
	for i := 0; i < len(line); {
		for i < len(line) && (line[i] == ' ' || line[i] == '\t') {
			i++
		}
		j := i
		for j < len(line) && line[j] != ' ' && line[j] != '\t' {
			j++
		}
		if j > i {
			out = append(out, tok{line[i:j], i + 1})
		}
		i = j
	}
	return out
}

// excerpt quotes at most a few bytes of what a line held, made printable:
// an error must never copy a file that is not a trace onto a terminal.
func excerpt(s string) string {
	const n = 24
	if len(s) > n {
		cut := n
		for cut > 0 && !utf8.RuneStart(s[cut]) {
			cut--
		}
		return strconv.Quote(diag.Printable(s[:cut])) + "..."
	}
	return strconv.Quote(diag.Printable(s))
}

func (r *reader) errAt(line, col int, format string, args ...any) {
	r.errs.Add(diag.Pos{File: r.file, Line: line, Col: col}, format, args...)
	if r.errs.Full() {
		r.stop = true
	}
}

func (r *reader) pos(col int) diag.Pos { return diag.Pos{File: r.file, Line: r.line, Col: col} }

func (r *reader) run() error {
	for !r.stop {
		b, err := r.readLine()
		if b == nil && err != nil {
			if !errors.Is(err, io.EOF) {
				r.errAt(r.line+1, 1, "cannot read: %v", err)
			}
			break
		}
		r.line++
		r.last = r.line
		r.read += int64(len(b))
		if r.read > MaxReadBytes {
			r.errAt(r.line, 1, "the trace is longer than the limit of %s", diag.SizeString(MaxReadBytes))
			return nil
		}
		if len(b) > MaxLine {
			r.errAt(r.line, MaxLine+1, "the line is longer than the limit of %s", diag.SizeString(MaxLine))
			return nil
		}
		if e := diag.CheckText(r.file, b); e != nil {
			if !r.magic {
				r.errAt(r.line, 1, "not a railyard trace: it is not text")
				return nil
			}
			r.errAt(r.line, e.Pos.Col, "%s", e.Msg)
			continue
		}
		r.lineText(strings.TrimRight(string(b), "\r\n"))
		if r.fnErr != nil {
			return r.fnErr
		}
	}
	if r.stop {
		return nil
	}
	r.finishAction()
	if r.fnErr != nil {
		return r.fnErr
	}
	switch {
	case !r.magic:
		r.errAt(1, 1, "not a railyard trace: the file is empty")
	case !r.ended:
		if r.count == 0 {
			r.errAt(r.last, 1, "the trace has no actions (a trace holds at least the start)")
		}
		r.errAt(r.last, 1, "the trace ends without its end line: it was cut short")
	}
	return nil
}

// readLine reads one line with its newline, keeping at most MaxLine+1
// bytes of a longer one (the rest is not needed: the read stops there).
func (r *reader) readLine() ([]byte, error) {
	var out []byte
	for {
		frag, err := r.in.ReadSlice('\n')
		if len(out)+len(frag) > MaxLine+1 {
			out = append(out, frag[:MaxLine+1-len(out)]...)
			return out, nil
		}
		out = append(out, frag...)
		if err == bufio.ErrBufferFull {
			continue
		}
		if err != nil {
			if len(out) == 0 {
				return nil, err
			}
			return out, nil
		}
		return out, nil
	}
}

func (r *reader) lineText(text string) {
	trim := strings.TrimSpace(text)
	if trim == "" || strings.HasPrefix(trim, "#") {
		return
	}
	if !r.magic {
		v, ok := strings.CutPrefix(trim, magicPrefix)
		n, err := strconv.Atoi(v)
		if !ok || err != nil || n < 1 || n > version {
			// Quote nothing: this may be any file at all.
			r.errAt(r.line, 1, "not a railyard trace: its first line is not %q or %q", magicPrefix+"1", magicPrefix+strconv.Itoa(version))
			r.stop = true
			return
		}
		r.magic = true
		r.info.Header.Version = n
		r.seen = map[string]diag.Pos{}
		return
	}
	if r.ended {
		r.errAt(r.line, 1, "a line after the end line")
		return
	}
	toks := fields(text)
	if text[0] == ' ' || text[0] == '\t' {
		r.bodyLine(toks)
		return
	}
	key := toks[0]
	rest := strings.TrimLeft(text[len(key.s):], " \t")
	restCol := len(text) - len(rest) + 1
	switch key.s {
	case "design", "design-sha256", "steps", "steps-sha256", "mode", "full-swing", "tech", "created", "format", "read", "inputs", "corner", "min-margin", "glitches", "watch":
		r.headerLine(key, rest, restCol)
	case "action":
		r.finishHeader()
		r.finishAction()
		r.actionLine(rest, restCol)
	case "capped", "end":
		if r.count == 0 && key.s == "end" {
			r.errAt(r.line, 1, "the trace has no actions (a trace holds at least the start)")
		}
		r.finishAction()
		n, ok := r.number(rest, restCol, key.s+" count", 0)
		if !ok {
			return
		}
		if key.s == "capped" {
			if _, dup := r.seen["capped"]; dup {
				r.errAt(r.line, 1, "a second capped line")
			}
			r.seen["capped"] = r.pos(1)
			r.info.Capped = n
			return
		}
		r.ended = true
		if n != r.count {
			r.errAt(r.line, restCol, "end says %d actions, the trace holds %d", n, r.count)
		}
		r.info.Actions = r.count
	default:
		r.errAt(r.line, 1, "unknown line %s", excerpt(key.s))
	}
}

// number reads a whole number in [lo, maxCount].
func (r *reader) number(s string, col int, what string, lo int) (int, bool) {
	s = strings.TrimSpace(s)
	n, err := strconv.Atoi(s)
	switch {
	case err != nil:
		r.errAt(r.line, col, "%s %s is not a whole number", what, excerpt(s))
		return 0, false
	case n < lo || n > maxCount:
		r.errAt(r.line, col, "%s %d is out of range (%d to %d)", what, n, lo, maxCount)
		return 0, false
	}
	return n, true
}

// yesNo reads a header line's yes or no (an error at col otherwise).
func (r *reader) yesNo(key, rest string, col int) bool {
	if rest != "yes" && rest != "no" {
		r.errAt(r.line, col, "%s wants yes or no, not %s", key, excerpt(rest))
	}
	return rest == "yes"
}

func (r *reader) headerLine(key tok, rest string, col int) {
	h := &r.info.Header
	if r.count > 0 || r.cur != nil {
		r.errAt(r.line, 1, "header line %q after the first action", key.s)
		return
	}
	if p, dup := r.seen[key.s]; dup {
		r.errAt(r.line, 1, "a second %s line (the first is on line %d)", key.s, p.Line)
		return
	}
	r.seen[key.s] = r.pos(1)
	if rest == "" {
		r.errAt(r.line, col, "the %s line is empty", key.s)
		return
	}
	switch key.s {
	case "design":
		h.Design, h.DesignPos = rest, r.pos(col)
	case "steps":
		if rest != "-" {
			h.Steps, h.StepsPos = rest, r.pos(col)
		}
	case "design-sha256", "steps-sha256":
		if !isHash(rest) {
			r.errAt(r.line, col, "%s wants 64 hexadecimal digits, not %s", key.s, excerpt(rest))
			return
		}
		if key.s == "design-sha256" {
			h.DesignHash = rest
		} else {
			h.StepsHash = rest
		}
	case "mode":
		switch rest {
		case "physical":
			h.Mode = switchsim.Physical
		case "ideal":
			h.Mode = switchsim.Ideal
		default:
			r.errAt(r.line, col, "unknown mode %s (want physical or ideal)", excerpt(rest))
		}
	case "full-swing":
		h.FullSwing = r.yesNo(key.s, rest, col)
	case "tech":
		h.Tech = rest
	case "created":
		h.Created = rest
	case "format":
		if !slices.Contains(load.FormatNames(), rest) {
			r.errAt(r.line, col, "unknown format %s (want %s)", excerpt(rest), strings.Join(load.FormatNames(), ", "))
			return
		}
		h.Format = rest
	case "read":
		for _, t := range fields(rest) {
			k, v, _ := strings.Cut(t.s, "=")
			val, ok := unword(v)
			switch {
			case !slices.Contains(readKeys, k):
				r.errAt(r.line, col+t.col-1, "unknown reader option %s (want %s)", excerpt(k), strings.Join(readKeys, ", "))
			case !ok || val == "":
				r.errAt(r.line, col+t.col-1, "reader option %s has no value a name can be: %s", k, excerpt(v))
			default:
				setRead(&h.Read, k, val)
			}
		}
	case "inputs":
		for _, t := range fields(rest) {
			n, ok := unword(t.s)
			if !ok || n == "" {
				r.errAt(r.line, col+t.col-1, "input %s is no name", excerpt(t.s))
				continue
			}
			h.Read.Inputs = append(h.Read.Inputs, n)
		}
	case "corner":
		if strings.ContainsAny(rest, " \t") {
			r.errAt(r.line, col, "a corner line names one corner, not %s", excerpt(rest))
			return
		}
		h.Corner, h.CornerPos = rest, r.pos(col)
	case "glitches":
		h.Glitches = r.yesNo(key.s, rest, col)
	case "min-margin":
		v, err := strconv.ParseFloat(rest, 64)
		if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
			r.errAt(r.line, col, "min-margin wants a number of volts, not %s", excerpt(rest))
			return
		}
		h.MarginCheck, h.MinMargin = true, v
	case "watch":
		for _, t := range fields(rest) {
			n, ok := unword(t.s)
			if !ok || n == "" {
				r.errAt(r.line, col+t.col-1, "watched node %s is no name", excerpt(t.s))
				continue
			}
			h.Watch = append(h.Watch, n)
		}
		h.WatchPos = r.pos(col)
	}
}

func isHash(s string) bool {
	if len(s) != 64 {
		return false
	}
	for i := 0; i < len(s); i++ {
		c := s[i]
		if !(c >= '0' && c <= '9' || c >= 'a' && c <= 'f') {
			return false
		}
	}
	return true
}

// finishHeader checks the required lines at the first action and gives the
// header to fn.
func (r *reader) finishHeader() {
	if r.inHdr || r.count > 0 {
		return
	}
	r.inHdr = true
	h := &r.info.Header
	for _, k := range []string{"design", "design-sha256", "steps", "mode", "full-swing", "tech"} {
		if _, ok := r.seen[k]; !ok {
			r.errAt(r.line, 1, "the trace has no %s line before its first action", k)
		}
	}
	if _, ok := r.seen["steps-sha256"]; h.Steps != "" && !ok {
		r.errAt(r.line, 1, "the trace names steps but has no steps-sha256 line")
	}
	for _, k := range []string{"read", "inputs"} {
		if p, ok := r.seen[k]; ok && h.Format == "" {
			r.errAt(p.Line, 1, "the %s line needs a format line: reader options go with the netlist format that takes them", k)
		}
	}
	if !r.errs.Any() && r.fn != nil {
		r.fnErr = r.fn(h, nil)
	}
}

func (r *reader) actionLine(rest string, col int) {
	a := &Action{Pos: r.pos(1)}
	seqText, after, _ := strings.Cut(rest, " ")
	seq, ok := r.number(seqText, col, "action number", 0)
	if !ok {
		r.cur = nil
		r.count++
		return
	}
	if seq != r.count {
		r.errAt(r.line, col, "action %d where action %d comes next (actions are numbered from 0)", seq, r.count)
	}
	a.Seq = seq
	r.count++
	if r.count > maxCount {
		r.errAt(r.line, 1, "more than %d actions", maxCount)
		r.stop = true
		return
	}
	col += len(seqText) + 1
	kind, after, _ := strings.Cut(after, " ")
	kcol := col
	col += len(kind) + 1
	switch kind {
	case "start":
		a.Kind = session.Start
		if r.start || seq != 0 {
			r.errAt(r.line, kcol, "start is not the first action")
		}
		r.start = true
	case "back":
		a.Kind = session.Back
	case "set":
		a.Kind = session.Set
		name, drive, ok := strings.Cut(strings.TrimSpace(after), "=")
		if !ok || name == "" || strings.ContainsAny(drive, " \t") {
			r.errAt(r.line, col, "set wants one NAME=DRIVE")
			break
		}
		if _, ok := switchsim.ParseDrive(drive); !ok {
			r.errAt(r.line, col+len(name)+1, "unknown drive %s (want 0 1 x z)", excerpt(drive))
		}
		a.Set = [2]string{name, drive}
		after = ""
	case "step":
		a.Kind = session.Step
		r.stepDetails(a, after, col)
		after = ""
	default:
		r.errAt(r.line, kcol, "unknown action %s", excerpt(kind))
	}
	if seq == 0 && a.Kind != session.Start {
		r.errAt(r.line, kcol, "the first action is not the start")
	}
	if strings.TrimSpace(after) != "" {
		r.errAt(r.line, col, "unexpected words after %s", kind)
	}
	r.cur = a
}

func (r *reader) stepDetails(a *Action, rest string, col int) {
	numText, after, _ := strings.Cut(rest, " ")
	n, ok := r.number(numText, col, "step number", 1)
	if !ok {
		return
	}
	a.Step = n
	col += len(numText) + 1
	trimmed := strings.TrimLeft(after, " ")
	col += len(after) - len(trimmed)
	if !strings.HasPrefix(trimmed, `"`) {
		r.errAt(r.line, col, "step %d wants a quoted label", n)
		return
	}
	q, err := strconv.QuotedPrefix(trimmed)
	if err != nil {
		r.errAt(r.line, col, "step %d: the label's quotes do not close", n)
		return
	}
	a.Label, _ = strconv.Unquote(q)
	col += len(q)
	tail := trimmed[len(q):]
	drives, checks, bar := strings.Cut(tail, "|")
	if !bar {
		r.errAt(r.line, col, "step %d wants its drives and checks parted by |", n)
		return
	}
	a.Drives = r.pairs(drives, col, "a step drive wants NAME=0|1|x|z", func(v string) bool {
		_, ok := switchsim.ParseDrive(v)
		return ok
	})
	a.Checks = r.pairs(checks, col+len(drives)+1, "a step check wants NAME=WANT (0 1 X Z L H -)", func(v string) bool {
		_, ok := steps.ParseWant(v)
		return ok
	})
}

// pairs reads the NAME=VALUE words of text (which starts at column col),
// reporting each malformed one with what it wants.
func (r *reader) pairs(text string, col int, want string, valid func(string) bool) [][2]string {
	var out [][2]string
	for _, t := range fields(text) {
		name, v, ok := strings.Cut(t.s, "=")
		if !ok || name == "" || !valid(v) {
			r.errAt(r.line, col+t.col-1, "%s, not %s", want, excerpt(t.s))
			continue
		}
		out = append(out, [2]string{name, v})
	}
	return out
}

var (
	stateLetters = "0 1 L H Z X"
	valueLetters = "0 1 X"
)

func oneOf(s, set string) bool {
	return s != "" && !strings.Contains(s, " ") && strings.Contains(" "+set+" ", " "+s+" ")
}

func (r *reader) bodyLine(toks []tok) {
	a := r.cur
	if a == nil {
		if r.count == 0 {
			r.errAt(r.line, toks[0].col, "a result line before any action")
		}
		return // the action line was already reported
	}
	key := toks[0]
	args := toks[1:]
	if a.Kind == session.Back {
		r.errAt(r.line, key.col, "a back action has no results")
		return
	}
	if key.s != "rounds" && !a.hasRounds {
		r.errAt(r.line, key.col, "a %s line before the rounds line", excerpt(key.s))
		return
	}
	switch key.s {
	case "rounds":
		if a.hasRounds {
			r.errAt(r.line, key.col, "a second rounds line")
			return
		}
		if len(args) != 1 {
			r.errAt(r.line, key.col, "rounds wants one number")
			return
		}
		n, ok := r.number(args[0].s, args[0].col, "round count", 0)
		if ok {
			a.Rounds, a.hasRounds = n, true
		}
	case "r":
		if len(args) != 7 {
			r.errAt(r.line, key.col, "a change line wants 7 fields (ROUND NODE STATE VALUE STRENGTH VOLTS DELAY), has %d", len(args))
			return
		}
		round, ok := r.number(args[0].s, args[0].col, "round", 1)
		if ok && round > a.Rounds {
			r.errAt(r.line, args[0].col, "round %d of an action of %d rounds", round, a.Rounds)
			ok = false
		}
		ok = r.want(oneOf(args[2].s, stateLetters), args[2], "state", stateLetters) && ok
		ok = r.want(oneOf(args[3].s, valueLetters), args[3], "value", valueLetters) && ok
		_, okS := switchsim.ParseStrength(args[4].s)
		ok = r.want(okS && args[4].s == strings.ToLower(args[4].s), args[4], "strength", "an IEEE 1364 strength name") && ok
		ok = r.want(isVolts(args[5].s), args[5], "volts", "a number or -") && ok
		ok = r.want(isVolts(args[6].s), args[6], "delay", "a number or -") && ok
		if ok {
			parts := make([]string, 6)
			for i := range parts {
				parts[i] = args[i].s
			}
			a.Changes = append(a.Changes, strings.Join(parts, " "))
		}
	case "check":
		if len(args) != 5 && len(args) != 6 {
			r.errAt(r.line, key.col, "a check line wants 6 fields (NODE WANT STATE VALUE pass|FAIL MARGIN; older traces 5), has %d", len(args))
			return
		}
		_, okW := steps.ParseWant(args[1].s)
		ok := r.want(okW, args[1], "wanted value", "0 1 X Z L H -")
		ok = r.want(oneOf(args[2].s, stateLetters), args[2], "state", stateLetters) && ok
		ok = r.want(oneOf(args[3].s, valueLetters), args[3], "value", valueLetters) && ok
		ok = r.want(args[4].s == "pass" || args[4].s == "FAIL", args[4], "verdict", "pass or FAIL") && ok
		if len(args) == 6 {
			ok = r.want(isVolts(args[5].s), args[5], "margin", "a number or -") && ok
		}
		if ok {
			parts := make([]string, len(args))
			for i := range args {
				parts[i] = args[i].s
			}
			a.Results = append(a.Results, strings.Join(parts, " "))
		}
	case "warn":
		if len(args) < 2 {
			r.errAt(r.line, key.col, "a warn line wants a kind and a node")
			return
		}
		a.Warnings = append(a.Warnings, warnKey(args[0].s, args[1].s))
	default:
		r.errAt(r.line, key.col, "unknown result line %s", excerpt(key.s))
	}
}

func (r *reader) want(ok bool, t tok, what, set string) bool {
	if !ok {
		r.errAt(r.line, t.col, "%s %s is not one of %s", what, excerpt(t.s), set)
	}
	return ok
}

func isVolts(s string) bool {
	if s == "-" {
		return true
	}
	v, err := strconv.ParseFloat(s, 64)
	return err == nil && !math.IsInf(v, 0) && !math.IsNaN(v)
}

// finishAction checks the action just read and gives it to fn.
func (r *reader) finishAction() {
	a := r.cur
	r.cur = nil
	if a == nil {
		return
	}
	if a.Kind != session.Back && !a.hasRounds {
		r.errs.Add(a.Pos, "action %d has no rounds line: its results are missing", a.Seq)
		if r.errs.Full() {
			r.stop = true
		}
	}
	if !r.errs.Any() && r.fn != nil && r.fnErr == nil {
		r.fnErr = r.fn(&r.info.Header, a)
	}
}

// ReadAll reads a whole trace into memory: for tests and small traces.
// Replay streams instead.
func ReadAll(file string, src []byte) (*Info, []*Action, error) {
	var acts []*Action
	info, err := Read(file, bytes.NewReader(src), func(_ *Header, a *Action) error {
		if a != nil {
			acts = append(acts, a)
		}
		return nil
	})
	if err != nil {
		return nil, nil, err
	}
	return info, acts, nil
}

// String words an action the way the trace wrote it (for messages).
func (a *Action) String() string { return fmt.Sprintf("action %d %s", a.Seq, a.Kind) }
