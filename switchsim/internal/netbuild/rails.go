package netbuild

import "strings"

// The rail names taken when a netlist is read without --power/--ground
// (the trade's habits, any case).
var (
	DefaultPower  = []string{"vdd", "vcc", "vpwr", "vdd!"}
	DefaultGround = []string{"gnd", "vss", "vgnd", "gnd!", "0"}
)

// Rails tells rail names from signal names, case-insensitively.
type Rails struct{ power, ground map[string]bool }

// NewRails makes the sets; a nil or empty list takes the default.
func NewRails(power, ground []string) Rails {
	if len(power) == 0 {
		power = DefaultPower
	}
	if len(ground) == 0 {
		ground = DefaultGround
	}
	r := Rails{map[string]bool{}, map[string]bool{}}
	for _, p := range power {
		r.power[strings.ToLower(p)] = true
	}
	for _, g := range ground {
		r.ground[strings.ToLower(g)] = true
	}
	return r
}

// AddPower and AddGround make one more name a rail.
func (r Rails) AddPower(name string)  { r.power[strings.ToLower(name)] = true }
func (r Rails) AddGround(name string) { r.ground[strings.ToLower(name)] = true }

// Kind is 1 for a power name, -1 for a ground name, 0 for a signal.
func (r Rails) Kind(name string) int {
	l := strings.ToLower(name)
	switch {
	case r.power[l]:
		return 1
	case r.ground[l]:
		return -1
	}
	return 0
}

// RailWant is the railyard name a rail spelled s asks for: s escaped
// (folded to lower case where the format ignores case), without the
// trailing ! that marks a global name, and gnd for node 0.
func RailWant(s string, power, fold bool) string {
	if fold {
		s = strings.ToLower(s)
	}
	s = strings.TrimSuffix(s, "!")
	if s == "" || s == "0" {
		if power {
			return "vdd"
		}
		return "gnd"
	}
	return Escape(s)
}
