// Package session is the layer between the engine and its users (the batch
// commands, the explorer and the SSH server): a loaded design and its
// steps, the history of actions in force with what each did, and the means
// to move backwards through it. The simulator stays inside: callers read
// it through accessors, so nothing changes it behind the history's back.
//
// Memory is bounded (README, "Limits"): an event keeps only what changed
// (its node changes round by round, checks and warnings), and only within
// Options.DetailBudget; snapshots for going back are kept within
// Options.SnapshotBudget; at most Options.MaxHistory actions stay in force.
// Dropped detail and dropped snapshots are rebuilt by re-simulating from
// the nearest kept snapshot (the engine is deterministic). What a session
// records for later (traces, waveforms, reports) is streamed by Recorders
// as each action happens, not kept.
package session

import (
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"math"
	"slices"
	"unsafe"

	"railyard/switchsim"
	"railyard/switchsim/load"
	"railyard/switchsim/netfile"
	"railyard/switchsim/steps"
)

// Options choose the model, the check rule and the memory bounds.
type Options struct {
	Mode      switchsim.Mode
	FullSwing bool // 0 and 1 checks also require the strong, full-level states
	// SnapshotBudget bounds the bytes of snapshots kept for going back;
	// 0 means DefaultSnapshotBudget.
	SnapshotBudget int64
	// DetailBudget bounds the bytes of event detail (node changes, checks,
	// warnings) kept for the history in force; the oldest are dropped first
	// and rebuilt by Detail on demand. 0 means DefaultDetailBudget.
	DetailBudget int64
	// MaxHistory bounds the actions in force; beyond it the oldest are
	// folded into the first entry and cannot be undone. 0 means
	// DefaultMaxHistory.
	MaxHistory int
	// Corner names the technology corner to run at (one of the design's
	// corner statements); "" or Nominal is the design's own technology.
	Corner string
	// MarginCheck turns on the --min-margin rule: a check whose margin
	// (CheckMargin) is below MinMargin volts fails (physical mode).
	MarginCheck bool
	MinMargin   float64
	// Glitches runs phase A of race analysis alone before the rounds of a
	// step that changes one input to 0 or 1 (switchsim.RacesGlitches), so
	// that a pulse the step may cause is warned about as "check
	// --exhaustive" does (run --glitches; a trace's glitches line).
	Glitches bool
	// Watch are nodes whose levels are checked besides the outputs and the
	// steps' check columns (Sim.Watch): a trace's replay gives the nodes
	// the recorded session watched.
	Watch []int
}

// Defaults for the memory bounds of a session. With them a session holds
// at most about 256 MiB of snapshots, 64 MiB of event detail and 200,000
// actions in force at some 250 bytes each: under 400 MiB whatever the
// design and the number of steps.
const (
	DefaultSnapshotBudget = 256 << 20
	DefaultDetailBudget   = 64 << 20
	DefaultMaxHistory     = 200_000
)

// Kind is the kind of an action.
type Kind uint8

const (
	Start Kind = iota // the first settle after loading
	Set               // one input set by the user
	Step              // one row of the steps file applied
	Back              // return to the state before the last action
)

func (k Kind) String() string { return [...]string{"start", "set", "step", "back"}[k] }

// Action is one thing the user did. The slices of a Step are shared with
// the steps file (or the trace it was replayed from): read them, do not
// change them.
type Action struct {
	Kind   Kind
	Node   int             // Set: the input
	Drive  switchsim.Drive // Set: its drive
	Step   int             // Step: the row index in the steps file (0-based)
	Label  string          // Step: the row's label
	Drives []InputDrive    // Step: the drives applied (kept so a trace replays without the steps file)
	Checks []steps.Want    // Step: the wanted values, parallel to Nodes
	Nodes  []int           // Step: the check columns' nodes
}

// InputDrive is one input and the drive applied to it.
type InputDrive struct {
	Node  int
	Drive switchsim.Drive
}

// Change is one node change in one round.
type Change struct {
	Round int // 1-based
	Node  int
	switchsim.NodeState
	Delay float64 // seconds, NaN where unknown or in ideal mode
	// Was is the node's state letter before the action.
	Was switchsim.State
}

// CheckResult is one check of a step.
type CheckResult struct {
	Node int
	Want steps.Want
	Got  switchsim.NodeState
	Pass bool
	// Margin is the check's margin in volts (CheckMargin), NaN where
	// unknown; LowMargin marks a check failed by Options.MinMargin alone.
	Margin    float64
	LowMargin bool
}

// IsCheck reports whether a check column checks anything ("-" does not).
func IsCheck(c CheckResult) bool { return c.Want != steps.WantAny }

// Warning is one warning of a settle, worded.
type Warning struct {
	switchsim.Warning
	Message string
}

// Event is the record of one action: what it did to the design. Changes,
// Checks and Warnings are its detail; an event of the history whose detail
// was dropped for the memory budget has Dropped() true and those slices
// nil, and Session.Detail rebuilds it.
type Event struct {
	Seq        int // the action's number among all actions taken (undone ones too), from 0
	Action     Action
	Rounds     int
	Oscillated bool
	// Unsettled is set when the unit-delay rounds reached the round limit
	// without settling; Decided when the engine's race analysis then set
	// the last round's states (switchsim.Result.Settled, Analysis.Decided),
	// which the rounds before it did not reach.
	Unsettled, Decided bool
	Changes            []Change
	Checks             []CheckResult
	Warnings           []Warning

	failed   bool
	warnings int
	dropped  bool
}

// Failed reports whether any check of the event failed.
func (e *Event) Failed() bool { return e.failed }

// NumWarnings is the number of warnings of the settle, kept when the
// detail is dropped.
func (e *Event) NumWarnings() int { return e.warnings }

// Dropped reports whether the event's detail was dropped for the memory
// budget.
func (e *Event) Dropped() bool { return e.dropped }

// bytes estimates the memory the event's detail holds.
func (e *Event) bytes() int64 {
	n := int64(len(e.Changes))*int64(unsafe.Sizeof(Change{})) + int64(len(e.Checks))*int64(unsafe.Sizeof(CheckResult{}))
	for _, w := range e.Warnings {
		n += int64(unsafe.Sizeof(w)) + int64(len(w.Message))
	}
	return n
}

// Recorder is given every action as it happens, just after it settled
// (Back included), so that a trace, a report or a waveform is streamed
// rather than kept. Session.Node reads the state after the event while
// Record runs.
type Recorder interface {
	Record(s *Session, e *Event)
}

// entry is one action in force.
type entry struct {
	ev     *Event
	snap   *switchsim.Snapshot // nil unless kept
	cursor int                 // the next step row after it
}

// Session is one loaded design being simulated.
type Session struct {
	design     *netfile.Design
	designPath string // as given: a path or demo:NAME
	hash       string // sha256 of the design source, hex
	steps      *steps.Steps
	stepsPath  string
	stepsHash  string
	opts       Options
	sim        *switchsim.Sim

	hist      []entry // the actions in force, oldest first
	seq       int     // actions taken, undone ones too
	letters   []switchsim.State
	rowDrives [][]InputDrive // per steps row, built on first use and shared by its events
	recorders []Recorder

	stride      int   // entries at multiples of stride (counted from the first ever) keep snapshots
	folded      int   // entries folded away at the front
	snapBytes   int64 // the estimate of one snapshot
	detailLo    int   // hist[detailLo:] keep their detail
	detailBytes int64
	scratch     *switchsim.Sim  // for rebuilding, made on first use
	trk         *track          // the watched nodes' states, for timelines
	watch       []int           // the nodes whose levels are checked besides the outputs (Watched)
	th          Thresholds      // the technology's, for check margins
	base        *netfile.Design // the design at its own technology, when design is at a corner

	// sizes tried (Resize): the design as loaded, and the edits that made
	// design from it; both nil for the design as loaded
	orig  *netfile.Design
	edits []Edit
}

// Hash returns the hex sha256 of b.
func Hash(b []byte) string {
	h := sha256.Sum256(b)
	return hex.EncodeToString(h[:])
}

// Open loads a design (a path or demo:NAME) and its steps, from the
// command line's file system: stepsPath if given, else the design's
// default steps if there are any.
func Open(designPath, stepsPath string, opt Options) (*Session, error) {
	return OpenFrom(load.Host(load.Options{}), designPath, stepsPath, opt)
}

// OpenFrom is Open through a loader: a served folder, or the command
// line's file system with the reader options of its flags. The paths the
// session records are the loader's names for them (load.Loader.Path).
func OpenFrom(l *load.Loader, designPath, stepsPath string, opt Options) (*Session, error) {
	ld, err := l.Open(designPath, stepsPath)
	if err != nil {
		return nil, err
	}
	if _, err := AtCorner(ld.Design, opt.Corner); err != nil {
		return nil, err
	}
	s := New(ld.Design, l.Path(designPath), ld.Steps, opt)
	if ld.StepsName != "" {
		s.stepsPath = l.Path(ld.StepsName)
		s.stepsHash = Hash(ld.StepsSource)
	}
	return s, nil
}

// New starts a session on a loaded design and settles it once. A corner
// named in opt must be one of the design's (AtCorner says which are; Open
// and OpenFrom check it and return the error): New panics on another.
func New(d *netfile.Design, designPath string, st *steps.Steps, opt Options) *Session {
	if opt.Corner == Nominal {
		opt.Corner = ""
	}
	if opt.Corner == "" {
		return newAt(d, designPath, st, opt)
	}
	cd, err := AtCorner(d, opt.Corner)
	if err != nil {
		panic("session.New: " + err.Error())
	}
	s := newAt(cd, designPath, st, opt)
	s.base = d
	return s
}

// newAt starts a session on d, which is already at opt.Corner.
func newAt(d *netfile.Design, designPath string, st *steps.Steps, opt Options) *Session {
	if opt.SnapshotBudget <= 0 {
		opt.SnapshotBudget = DefaultSnapshotBudget
	}
	if opt.DetailBudget <= 0 {
		opt.DetailBudget = DefaultDetailBudget
	}
	if opt.MaxHistory <= 0 {
		opt.MaxHistory = DefaultMaxHistory
	}
	opt.MaxHistory = max(opt.MaxHistory, 8)
	nl := d.Netlist
	s := &Session{design: d, designPath: designPath, hash: Hash(d.Source), steps: st, opts: opt, stride: 1,
		watch: watchList(opt, st, nl.NumNodes()), th: TechThresholds(nl.Tech)}
	s.sim = s.newSim()
	if st != nil {
		s.rowDrives = make([][]InputDrive, len(st.Rows))
	}
	// A snapshot holds per node its value, strength, state, volts, drive
	// and flags plus physical mode's record, per device its state and
	// physical record, and some fixed overhead.
	s.snapBytes = int64(nl.NumNodes())*64 + int64(nl.NumDevices())*16 + 512
	s.letters = stateLetters(s.sim)
	s.record(Action{Kind: Start}, 0)
	return s
}

// --- read-only accessors ---

// Design returns the loaded design. It is shared: do not change it.
func (s *Session) Design() *netfile.Design { return s.design }

// Netlist returns the design's netlist.
func (s *Session) Netlist() *switchsim.Netlist { return s.design.Netlist }

// DesignPath is the design as it was opened: a path or demo:NAME.
func (s *Session) DesignPath() string { return s.designPath }

// DesignHash is the hex sha256 of the design's source.
func (s *Session) DesignHash() string { return s.hash }

// Steps returns the steps file, or nil. It is shared: do not change it.
func (s *Session) Steps() *steps.Steps { return s.steps }

// StepsPath is the steps file as opened ("" without one).
func (s *Session) StepsPath() string { return s.stepsPath }

// StepsHash is the hex sha256 of the steps file ("" without one).
func (s *Session) StepsHash() string { return s.stepsHash }

// Options returns the options in force (defaults filled in).
func (s *Session) Options() Options { return s.opts }

// Node returns node n's present state.
func (s *Session) Node(n int) switchsim.NodeState { return s.sim.Node(n) }

// InputDrive returns the drive applied to input n.
func (s *Session) InputDrive(n int) switchsim.Drive { return s.sim.InputDrive(n) }

// Conduction returns device d's present state.
func (s *Session) Conduction(d int) switchsim.Conduction { return s.sim.Conduction(d) }

// Explain says why node n holds its present value.
func (s *Session) Explain(n int) switchsim.Explanation { return s.sim.Explain(n) }

// RoundLimit is the simulator's round limit.
func (s *Session) RoundLimit() int { return s.sim.RoundLimit() }

// Snapshot returns a copy of the present simulator state, for a caller
// that simulates on its own Sim from here (the exhaustive check).
func (s *Session) Snapshot() *switchsim.Snapshot { return s.sim.Snapshot() }

// Len is the number of actions in force.
func (s *Session) Len() int { return len(s.hist) }

// History returns the events in force, oldest first; events whose detail
// was dropped have Dropped() true. The slice is the caller's.
func (s *Session) History() []*Event {
	out := make([]*Event, len(s.hist))
	for i := range s.hist {
		out[i] = s.hist[i].ev
	}
	return out
}

// Last returns the latest event in force, with its detail.
func (s *Session) Last() *Event { return s.hist[len(s.hist)-1].ev }

// Actions is the number of actions taken, undone ones and the start
// included: the count a trace's end line holds.
func (s *Session) Actions() int { return s.seq }

// Folded is the number of actions that left the history in force for
// MaxHistory: they can no longer be undone.
func (s *Session) Folded() int { return s.folded }

// NextStep is the index of the step row that Next applies (len(Rows) at the end).
func (s *Session) NextStep() int { return s.hist[len(s.hist)-1].cursor }

// NumSteps is the number of rows in the steps file (0 without one).
func (s *Session) NumSteps() int {
	if s.steps == nil {
		return 0
	}
	return len(s.steps.Rows)
}

// Attach adds a recorder. It is given the start at once, then every action
// as it happens; it must be attached before any other action, so that it
// sees the whole session.
func (s *Session) Attach(r Recorder) error {
	if s.seq != 1 || len(s.hist) != 1 {
		return errors.New("a recorder must be attached before the first action after the start")
	}
	s.recorders = append(s.recorders, r)
	r.Record(s, s.hist[0].ev)
	return nil
}

// Recorders returns the recorders attached, in order.
func (s *Session) Recorders() []Recorder { return slices.Clone(s.recorders) }

// --- actions ---

// ErrNotInput is returned when a drive is applied to a node that is not an input.
var ErrNotInput = errors.New("not an input")

// SetInput drives one input and settles.
func (s *Session) SetInput(node int, d switchsim.Drive) (*Event, error) {
	if !s.isInput(node) {
		return nil, fmt.Errorf("%w: node %d", ErrNotInput, node)
	}
	if err := s.sim.SetInput(node, d); err != nil {
		return nil, err
	}
	return s.record(Action{Kind: Set, Node: node, Drive: d}, s.NextStep()), nil
}

func (s *Session) isInput(n int) bool {
	return n >= 0 && n < s.Netlist().NumNodes() && s.Netlist().NodeKind(n) == switchsim.Input
}

// SetByName drives one input, named, and settles.
func (s *Session) SetByName(name string, d switchsim.Drive) (*Event, error) {
	n, ok := s.Netlist().Lookup(name)
	if !ok || s.Netlist().NodeKind(n) != switchsim.Input {
		return nil, fmt.Errorf("%q is not an input of %s", name, s.design.Name)
	}
	return s.SetInput(n, d)
}

// Toggle flips an input: 0 becomes 1, anything else becomes 0.
func (s *Session) Toggle(node int) (*Event, error) {
	if !s.isInput(node) {
		return nil, fmt.Errorf("%w: node %d", ErrNotInput, node)
	}
	d := switchsim.Drive0
	if s.sim.InputDrive(node) == switchsim.Drive0 {
		d = switchsim.Drive1
	}
	return s.SetInput(node, d)
}

// ApplyStep applies row i of the steps file, settles and checks.
func (s *Session) ApplyStep(i int) (*Event, error) {
	if s.steps == nil || i < 0 || i >= len(s.steps.Rows) {
		return nil, fmt.Errorf("no step %d", i+1)
	}
	row := s.steps.Rows[i]
	if s.rowDrives[i] == nil {
		ds := make([]InputDrive, 0, len(s.steps.Apply))
		for c, n := range s.steps.Apply {
			ds = append(ds, InputDrive{n, row.Drives[c]})
		}
		s.rowDrives[i] = ds
	}
	a := Action{Kind: Step, Step: i, Label: row.Label, Drives: s.rowDrives[i], Checks: row.Wants, Nodes: s.steps.Check}
	return s.ApplyAction(a)
}

// ApplyAction applies a Step action given whole (a trace replayed without
// its steps file): its drives, then the settle and its checks. The
// action's slices are kept by the history: do not change them afterwards.
func (s *Session) ApplyAction(a Action) (*Event, error) {
	if a.Kind != Step {
		return nil, fmt.Errorf("ApplyAction takes a step, not %s", a.Kind)
	}
	if len(a.Checks) != len(a.Nodes) {
		return nil, fmt.Errorf("step %d: %d wanted values for %d checked nodes", a.Step+1, len(a.Checks), len(a.Nodes))
	}
	for _, in := range a.Drives {
		if !s.isInput(in.Node) {
			return nil, fmt.Errorf("step %d: %w: node %d", a.Step+1, ErrNotInput, in.Node)
		}
	}
	for _, n := range a.Nodes {
		if n < 0 || n >= s.Netlist().NumNodes() {
			return nil, fmt.Errorf("step %d: no node %d to check", a.Step+1, n)
		}
	}
	for _, in := range a.Drives {
		s.sim.SetInput(in.Node, in.Drive) // checked above: cannot fail
	}
	return s.record(a, a.Step+1), nil
}

// Next applies the next step row; ok is false at the end of the steps.
func (s *Session) Next() (*Event, bool) {
	i := s.NextStep()
	if i >= s.NumSteps() {
		return nil, false
	}
	e, err := s.ApplyStep(i)
	return e, err == nil
}

// RunToEnd applies the remaining steps; with stopOnFail it stops after the
// first step whose check fails. It returns the events applied.
func (s *Session) RunToEnd(stopOnFail bool) []*Event {
	var out []*Event
	for {
		e, ok := s.Next()
		if !ok {
			return out
		}
		out = append(out, e)
		if stopOnFail && e.Failed() {
			return out
		}
	}
}

// GoBack returns to the state before the last action in force; it is
// given to the recorders as a Back action. It reports false at the start
// (or at the oldest action kept, past MaxHistory).
func (s *Session) GoBack() bool {
	if len(s.hist) <= 1 {
		return false
	}
	last := len(s.hist) - 1
	if e := s.hist[last].ev; !e.dropped {
		s.detailBytes -= e.bytes()
	}
	s.hist[last] = entry{}
	s.hist = s.hist[:last]
	s.trackTrim(0, last)
	s.detailLo = min(s.detailLo, len(s.hist)-1)
	s.restoreLast()
	e := &Event{Seq: s.seq, Action: Action{Kind: Back}}
	s.seq++
	for _, r := range s.recorders {
		r.Record(s, e)
	}
	return true
}

// JumpTo brings the session to the state just after step row i (0-based),
// going back or forward through the steps as needed; i = -1 is before the
// first step.
func (s *Session) JumpTo(i int) {
	for s.NextStep() > i+1 && s.GoBack() {
	}
	for s.NextStep() <= i {
		if _, ok := s.Next(); !ok {
			return
		}
	}
}

// record settles after the action's inputs were applied, keeps the event
// in the history and gives it to the recorders.
func (s *Session) record(a Action, cursor int) *Event {
	e := s.buildEvent(s.sim, a, s.letters)
	e.Seq = s.seq
	s.seq++
	s.push(e, cursor)
	for _, r := range s.recorders {
		r.Record(s, e)
	}
	return e
}

// buildEvent settles sim and words what the settle did. letters holds
// every node's state letter before the action and is brought up to date.
func (s *Session) buildEvent(sim *switchsim.Sim, a Action, letters []switchsim.State) *Event {
	r := sim.Settle()
	e := &Event{Action: a, Rounds: r.Rounds, Oscillated: r.Oscillated, Unsettled: !r.Settled, Decided: r.Analysis.Decided}
	if len(r.Changed) > 0 {
		e.Changes = make([]Change, 0, len(r.Changed))
	}
	for round := 0; round < len(r.RoundEnd); round++ {
		lo := 0
		if round > 0 {
			lo = int(r.RoundEnd[round-1])
		}
		for k := lo; k < int(r.RoundEnd[round]); k++ {
			n := int(r.Changed[k])
			e.Changes = append(e.Changes, Change{Round: round + 1, Node: n, NodeState: r.After[k], Delay: r.Delay[k], Was: letters[n]})
		}
	}
	for _, c := range e.Changes {
		letters[c.Node] = c.State
	}
	switch a.Kind {
	case Set:
		letters[a.Node] = sim.Node(a.Node).State
	case Step:
		for _, in := range a.Drives {
			letters[in.Node] = sim.Node(in.Node).State
		}
	}
	if len(r.Warnings) > 0 {
		e.Warnings = make([]Warning, 0, len(r.Warnings))
	}
	for _, w := range r.Warnings {
		e.Warnings = append(e.Warnings, Warning{w, sim.Message(w)})
	}
	e.warnings = len(e.Warnings)
	for c, n := range a.Nodes {
		if c >= len(a.Checks) {
			break
		}
		got := sim.Node(n)
		cr := CheckResult{Node: n, Want: a.Checks[c], Got: got, Pass: a.Checks[c].Check(got, s.opts.FullSwing)}
		judge(&cr, sim.Margin(n), s.th, s.opts)
		e.Checks = append(e.Checks, cr)
		e.failed = e.failed || !cr.Pass
	}
	return e
}

// --- the history's memory ---

// push appends an entry, then keeps snapshots, detail and length within
// their bounds. Each bound is kept in amortised constant time per action.
func (s *Session) push(e *Event, cursor int) {
	s.hist = append(s.hist, entry{ev: e, snap: s.sim.Snapshot(), cursor: cursor})
	s.detailBytes += e.bytes()
	s.trackPush()
	// Snapshots: the first entry, the last two (for going back one step at
	// once) and those at multiples of the stride.
	if n := len(s.hist); n >= 3 && !s.strided(n-3) {
		s.hist[n-3].snap = nil
	}
	s.thinSnapshots()
	// Detail: the newest events within the budget; the last two always.
	for s.detailBytes > s.opts.DetailBudget && s.detailLo < len(s.hist)-2 {
		s.drop(s.detailLo)
		s.detailLo++
	}
	if len(s.hist) > s.opts.MaxHistory+s.opts.MaxHistory/8 {
		s.fold(len(s.hist) - s.opts.MaxHistory)
	}
}

// strided reports whether hist[i] keeps its snapshot for good.
func (s *Session) strided(i int) bool { return i == 0 || (s.folded+i)%s.stride == 0 }

// maxSnapshots is how many snapshots the budget holds (at least 8).
func (s *Session) maxSnapshots() int {
	return int(max(s.opts.SnapshotBudget/s.snapBytes, 8))
}

// thinSnapshots doubles the stride when the strided snapshots outgrow the
// budget and drops those off the new stride. Each doubling walks the
// history once, and comes only after the history doubled in length since
// the last, so the walks cost constant time per action.
func (s *Session) thinSnapshots() {
	limit := s.maxSnapshots() - 3 // the first and the last two are not strided
	for len(s.hist)/s.stride > limit {
		s.stride *= 2
		for i := 1; i < len(s.hist)-2; i++ {
			if s.hist[i].snap != nil && !s.strided(i) {
				s.hist[i].snap = nil
			}
		}
	}
}

// drop forgets hist[i]'s detail, keeping its action and its counts.
func (s *Session) drop(i int) {
	old := s.hist[i].ev
	if old.dropped {
		return
	}
	s.detailBytes -= old.bytes()
	e := *old
	e.Changes, e.Checks, e.Warnings, e.dropped = nil, nil, nil, true
	s.hist[i].ev = &e // a fresh event: callers holding the old one keep their copy
}

// fold removes the k oldest entries; the new first entry keeps a snapshot
// so that every later state can still be rebuilt from it.
func (s *Session) fold(k int) {
	if s.hist[k].snap == nil {
		s.hist[k].snap = s.stateAfter(k)
	}
	for i := 0; i < k; i++ {
		if e := s.hist[i].ev; !e.dropped {
			s.detailBytes -= e.bytes()
		}
	}
	s.trackTrim(k, len(s.hist)-k)
	s.hist = append([]entry(nil), s.hist[k:]...) // a new array, so the old one is freed
	s.folded += k
	s.detailLo = max(s.detailLo-k, 0)
}

// nearestSnapshot is the index of the last entry at or before i with a
// snapshot (the first always has one).
func (s *Session) nearestSnapshot(i int) int {
	for s.hist[i].snap == nil {
		i--
	}
	return i
}

// scratchSim is a second simulator for rebuilding, so that the live one
// is not disturbed.
func (s *Session) scratchSim() *switchsim.Sim {
	if s.scratch == nil {
		s.scratch = s.newSim()
	}
	return s.scratch
}

// redo applies an action's drives to sim (the drives were checked when
// the action was first taken).
func redo(sim *switchsim.Sim, a Action) {
	switch a.Kind {
	case Set:
		sim.SetInput(a.Node, a.Drive)
	case Step:
		for _, in := range a.Drives {
			sim.SetInput(in.Node, in.Drive)
		}
	}
}

// rewind brings sim to the state after hist[i], from the nearest snapshot.
func (s *Session) rewind(sim *switchsim.Sim, i int) {
	j := s.nearestSnapshot(i)
	sim.Restore(s.hist[j].snap)
	for k := j + 1; k <= i; k++ {
		redo(sim, s.hist[k].ev.Action)
		sim.Settle()
	}
}

// stateAfter returns a snapshot of the state after hist[i].
func (s *Session) stateAfter(i int) *switchsim.Snapshot {
	sim := s.scratchSim()
	s.rewind(sim, i)
	return sim.Snapshot()
}

// restoreLast brings the simulator to the state after the last entry, and
// makes sure that entry has its snapshot and its detail (the explorer
// shows the last event whole).
func (s *Session) restoreLast() {
	last := len(s.hist) - 1
	if s.hist[last].ev.dropped {
		s.hist[last].ev = s.Detail(last)
		s.detailBytes += s.hist[last].ev.bytes()
		s.detailLo = min(s.detailLo, last)
	}
	s.rewind(s.sim, last)
	if s.hist[last].snap == nil {
		s.hist[last].snap = s.sim.Snapshot()
	}
	for n := range s.letters {
		s.letters[n] = s.sim.Node(n).State
	}
}

// Detail returns hist[i] with its detail: the event itself when kept, else
// rebuilt by re-simulating from the nearest snapshot before it (a new
// event, not stored). The start is rebuilt by settling a new simulator;
// the first entry after a fold, once its detail is dropped, cannot be
// rebuilt (what came before it is gone) and is returned as it is.
func (s *Session) Detail(i int) *Event {
	e := s.hist[i].ev
	if !e.dropped || (i == 0 && s.folded > 0) {
		return e
	}
	var sim *switchsim.Sim
	if i == 0 {
		sim = s.newSim()
	} else {
		sim = s.scratchSim()
		s.rewind(sim, i-1)
	}
	letters := stateLetters(sim)
	redo(sim, e.Action)
	full := s.buildEvent(sim, e.Action, letters)
	full.Seq = e.Seq
	return full
}

// stateLetters reads every node's state letter from sim.
func stateLetters(sim *switchsim.Sim) []switchsim.State {
	letters := make([]switchsim.State, sim.Netlist().NumNodes())
	for n := range letters {
		letters[n] = sim.Node(n).State
	}
	return letters
}

// Walk re-simulates the history in force on a separate simulator from the
// first entry's snapshot, and calls fn for each event in order with a
// reader of the node states just after it: the way to write a whole
// waveform or report after the fact without having kept every state. The
// first event is the stored one (its detail may be dropped); the others
// are rebuilt whole. An error from fn stops the walk.
func (s *Session) Walk(fn func(e *Event, node func(n int) switchsim.NodeState) error) error {
	return s.walk(func(e *Event, rd Reader) error { return fn(e, rd.Node) })
}

func (s *Session) walk(fn func(e *Event, rd Reader) error) error {
	sim := s.newSim()
	var letters []switchsim.State
	if s.folded == 0 {
		// From the very start: the same calls as the session made, so the
		// events come out exactly as they were first recorded.
		letters = stateLetters(sim)
		e := s.buildEvent(sim, s.hist[0].ev.Action, letters)
		e.Seq = s.hist[0].ev.Seq
		if err := fn(e, sim); err != nil {
			return err
		}
	} else {
		sim.Restore(s.hist[0].snap)
		if err := fn(s.hist[0].ev, sim); err != nil {
			return err
		}
		letters = stateLetters(sim)
	}
	for i := 1; i < len(s.hist); i++ {
		stored := s.hist[i].ev
		redo(sim, stored.Action)
		e := s.buildEvent(sim, stored.Action, letters)
		e.Seq = stored.Seq
		if err := fn(e, sim); err != nil {
			return err
		}
	}
	return nil
}

// FormatVolts prints a voltage, or "-" where unknown.
func FormatVolts(v float64) string {
	if math.IsNaN(v) {
		return "-"
	}
	return fmt.Sprintf("%.3f", v)
}
