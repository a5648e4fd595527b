package switchsim

import "strings"

// Value is a logic value carried by a node or a signal.
type Value uint8

const (
	V0 Value = iota
	V1
	VX
)

func (v Value) String() string {
	switch v {
	case V0:
		return "0"
	case V1:
		return "1"
	}
	return "X"
}

// lub combines two values that arrive at the same strength:
// equal values stay, different values give X (IEEE 1364-2005 §7).
func lub(a, b Value) Value {
	if a == b {
		return a
	}
	return VX
}

// Strength is a signal strength. The constants are in the engine's rank
// order: every charge strength (small, medium, large) ranks below every
// driving strength (weak, pull, strong, supply), as in Bryant 1984, so a
// node reached by any driving path never takes its value from stored charge.
// Among driving strengths and among charge strengths the order is that of the
// IEEE 1364-2005 §7 ladder; IEEE returns the standard's level number.
type Strength uint8

const (
	HighZ Strength = iota
	Small
	Medium
	Large
	Weak
	Pull
	Strong
	Supply
)

var strengthNames = [...]string{"highz", "small", "medium", "large", "weak", "pull", "strong", "supply"}

func (s Strength) String() string {
	if int(s) < len(strengthNames) {
		return strengthNames[s]
	}
	return "invalid"
}

// IEEE returns the IEEE 1364-2005 §7 strength level: supply 7, strong 6,
// pull 5, large 4, weak 3, medium 2, small 1, highz 0.
func (s Strength) IEEE() int {
	return [...]int{0, 1, 2, 4, 3, 5, 6, 7}[s]
}

// IsCharge reports whether s is a charge strength (what a floating node holds).
func (s Strength) IsCharge() bool { return s >= Small && s <= Large }

// ParseStrength reads a strength name (any case).
func ParseStrength(name string) (Strength, bool) {
	name = strings.ToLower(name)
	for i, n := range strengthNames {
		if n == name {
			return Strength(i), true
		}
	}
	return HighZ, false
}

// State is the six-letter summary of a node, with the letters of IEEE 1164.
type State uint8

const (
	State0 State = iota // strong or supply 0 at full level, uncontested
	State1              // strong or supply 1 at full level, uncontested
	StateL              // weak, degraded or contested 0
	StateH              // weak, degraded or contested 1
	StateZ              // floating: the node holds its stored value as charge
	StateX              // conflict or unknown while driven
)

func (s State) String() string { return string("01LHZX"[s]) }

// ParseState reads one of the letters 0 1 L H Z X (any case).
func ParseState(c string) (State, bool) {
	switch strings.ToUpper(c) {
	case "0":
		return State0, true
	case "1":
		return State1, true
	case "L":
		return StateL, true
	case "H":
		return StateH, true
	case "Z":
		return StateZ, true
	case "X":
		return StateX, true
	}
	return StateX, false
}

// Drive is what the user applies to a primary input.
type Drive uint8

const (
	Drive0 Drive = iota
	Drive1
	DriveX
	DriveZ // released: the input floats and keeps its charge
)

func (d Drive) String() string { return string("01xz"[d]) }

// ParseDrive reads 0, 1, x or z (any case).
func ParseDrive(c string) (Drive, bool) {
	switch strings.ToLower(c) {
	case "0":
		return Drive0, true
	case "1":
		return Drive1, true
	case "x":
		return DriveX, true
	case "z":
		return DriveZ, true
	}
	return DriveX, false
}

// Value returns the logic value a drive applies (X for a released input).
func (d Drive) Value() Value {
	switch d {
	case Drive0:
		return V0
	case Drive1:
		return V1
	}
	return VX
}

// Conduction is a device's state from its gate's value.
type Conduction uint8

const (
	Off Conduction = iota
	On
	Unknown
)

func (c Conduction) String() string { return [...]string{"off", "on", "unknown"}[c] }

// DeviceKind is the kind of a switch.
type DeviceKind uint8

const (
	NMOS     DeviceKind = iota // conducts for gate 1 (common practice)
	PMOS                       // conducts for gate 0 (common practice)
	PullUp                     // a resistive pull to the power rail: always on
	PullDown                   // a resistive pull to the ground rail: always on
	Tran                       // always on between two nodes: an IEEE 1364 tran, rtran, or a resistor
)

func (k DeviceKind) String() string {
	return [...]string{"nmos", "pmos", "pullup", "pulldown", "tran"}[k]
}

// conduction gives a device's state for its gate value.
func conduction(k DeviceKind, g Value) Conduction {
	switch {
	case k >= PullUp:
		return On
	case g == VX:
		return Unknown
	case (k == NMOS) == (g == V1):
		return On
	}
	return Off
}

// NodeKind tells rails and inputs from internal nodes.
type NodeKind uint8

const (
	Internal NodeKind = iota
	Input
	Power
	Ground
)
