// Package panel is the one contract every panel of the explorer keeps, and
// what the panels share with the root model: the intents they send as
// messages, the focus interface, and the printable names they draw.
//
// A panel is a small model in the bubbles shape:
//
//	func New(...) Model
//	func (m Model) Update(msg tea.Msg) (Model, tea.Cmd)
//	func (m Model) View() string
//	func (m *Model) SetSize(w, h int)
//	func (m *Model) Focus(); func (m *Model) Blur(); func (m Model) Focused() bool
//
// with a KeyMap (DefaultKeyMap, whose help text feeds the help view) and
// Styles (DefaultStyles(theme)). A panel never reaches the session: the
// root copies what it draws into it (setters), and a key that asks for
// something beyond the panel (drive an input, go to a step, watch or
// inspect a node, save) makes Update return a command that sends one of
// the intents below, which the root model acts on.
package panel

import (
	"fmt"
	"math"

	tea "github.com/charmbracelet/bubbletea"

	"railyard/switchsim"
	"railyard/switchsim/diag"
)

// Focuser is the focus part of the contract: keys go to the focused
// panel, and a panel draws its cursor only while focused.
type Focuser interface {
	Focus()
	Blur()
	Focused() bool
}

// Send is a command that sends msg: how a panel hands an intent to the root.
func Send(msg tea.Msg) tea.Cmd { return func() tea.Msg { return msg } }

// The intents.

// SetInput asks to drive input Node with Drive, or to toggle it.
type SetInput struct {
	Node   int
	Drive  switchsim.Drive
	Toggle bool
}

// Watch asks to put Node on the timeline, or take it off if it is on.
type Watch struct{ Node int }

// Inspect asks for the Why view of Node.
type Inspect struct{ Node int }

// JumpTo asks to bring the design to the state after row Row (0-based)
// of the steps file.
type JumpTo struct{ Row int }

// SaveKind is what a save writes.
type SaveKind uint8

const (
	SaveTrace  SaveKind = iota // the session trace (railyard replay repeats it)
	SaveVCD                    // a VCD of the history in force (IEEE 1364-2005 §18)
	SaveDesign                 // the design with the sizes tried, as .sw
)

// Ext is the usual file extension of a kind, with its dot.
func (k SaveKind) Ext() string {
	switch k {
	case SaveVCD:
		return ".vcd"
	case SaveDesign:
		return ".sw"
	}
	return ".trace"
}

func (k SaveKind) String() string {
	switch k {
	case SaveVCD:
		return "VCD"
	case SaveDesign:
		return "design"
	}
	return "trace"
}

// Save asks to write a file: to Path, or where the explorer's owner
// chooses when Path is empty. Overwrite says the user agreed to replace
// a file that is there.
type Save struct {
	Kind      SaveKind
	Path      string
	Overwrite bool
}

// AskSize asks for a new W or L for transistor Device (the prompt).
type AskSize struct{ Device int }

// Resize asks to try transistor Device at W x L (metres): the design is
// re-settled with it and its history replayed.
type Resize struct {
	Device int
	W, L   float64
}

// Search asks to start the reachable-state search, or to stop it.
type Search struct{ Stop bool }

// OpenFinding asks to make finding Index (of the search's report) the
// session's steps: its shortest input sequence, walked from the start.
type OpenFinding struct{ Index int }

// Canceled says a question was closed without an answer.
type Canceled struct{ What string }

// Note is a panel saying why a key did nothing, or what it needs: the
// root shows it on the status line as information, not as a failure.
type Note struct{ Text string }

// Names are the names people read, copied from the netlist once
// (Netlist.DisplayName, DeviceDisplayName) and made printable
// (diag.Printable): a name comes from a file and may hold control codes,
// which must never reach the terminal.
type Names struct {
	Node   []string // by node
	Device []string // by device
}

// NewNames copies a netlist's names.
func NewNames(nl *switchsim.Netlist) *Names {
	n := &Names{Node: make([]string, nl.NumNodes()), Device: make([]string, nl.NumDevices())}
	for i := range n.Node {
		n.Node[i] = diag.Printable(nl.DisplayName(i))
	}
	for d := range n.Device {
		n.Device[d] = diag.Printable(nl.DeviceDisplayName(d))
	}
	return n
}

// FullLevel reports whether v volts is at a rail's level (within 10 mV of
// ground or of the supply's vdd): what prints as 0.00 or as vdd with two
// decimals, and so needs no volts beside the logic value. NaN (ideal mode,
// or unknown) counts as full: there is nothing to add.
func FullLevel(v, vdd float64) bool {
	if math.IsNaN(v) || math.IsNaN(vdd) {
		return true
	}
	return math.Abs(v) < 0.01 || math.Abs(v-vdd) < 0.01
}

// Volts prints a voltage with two decimals, "-" where unknown (ideal mode).
func Volts(v float64) string {
	if math.IsNaN(v) {
		return "-"
	}
	return fmt.Sprintf("%.2f", v)
}

// Seconds prints a delay estimate with an engineering prefix (ps, ns, us),
// "-" where there is none.
func Seconds(s float64) string {
	switch {
	case math.IsNaN(s) || math.IsInf(s, 0):
		return "-"
	case s < 1e-9:
		return fmt.Sprintf("%.3gps", s*1e12)
	case s < 1e-6:
		return fmt.Sprintf("%.3gns", s*1e9)
	case s < 1e-3:
		return fmt.Sprintf("%.3gus", s*1e6)
	}
	return fmt.Sprintf("%.3gs", s)
}

// Ohms prints a resistance with its unit ("12.4 kohm"), "open" where
// there is none.
func Ohms(r float64) string {
	switch {
	case math.IsInf(r, 0) || math.IsNaN(r):
		return "open"
	case r >= 1e6:
		return fmt.Sprintf("%.3g Mohm", r/1e6)
	case r >= 1e3:
		return fmt.Sprintf("%.3g kohm", r/1e3)
	}
	return fmt.Sprintf("%.3g ohm", r)
}
