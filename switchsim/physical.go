package switchsim

import "math"

// Physical mode (MODEL.md §4). This file holds the hooks the solver calls;
// in ideal mode each is a no-op.

// physState is the Sim's physical-mode state.
type physState struct{}

type physSnapshot struct{}

func (s *Sim) physInit()                         {}
func (s *Sim) physSave() physSnapshot            { return physSnapshot{} }
func (s *Sim) physRestore(physSnapshot)          {}
func (s *Sim) physGateMoved(d int32) bool        { return false }
func (s *Sim) physGroup(g *group)                {}
func (s *Sim) physDelay(g *group, i int) float64 { return math.NaN() }

// physSourceVolts is a driven source's voltage: 0 or vdd, NaN for X or in ideal mode.
func (s *Sim) physSourceVolts(v Value) float64 {
	if s.mode != Physical || v == VX {
		return math.NaN()
	}
	if v == V1 {
		return s.nl.Tech.Vdd
	}
	return 0
}

// physWarnings adds physical-mode warnings for node n after a settle.
func (s *Sim) physWarnings(n int, add func(kind string, n, d, o int)) {}
