package switchsim

// SetPhysFastPath switches s's one-node fast path of physical mode (and
// its precomputed rail limits) on or off, so that the external tests can
// compare it with the general path. It is on in every new Sim.
func (s *Sim) SetPhysFastPath(on bool) { s.phys.slow = !on }

// SetPhysAlone switches s's lone-node solve of physical mode (physAlone,
// which takes such a group before it is collected) on or off, so that the
// external tests can compare it with the group's path, physSingle
// included. It is on in every new Sim.
func (s *Sim) SetPhysAlone(on bool) { s.phys.noAlone = !on }

// SetPhysMemo switches s's group memo of physical mode on or off, so that
// the external tests can compare it with solving every group afresh. It is
// on in every new Sim (and off while the fast path is).
func (s *Sim) SetPhysMemo(on bool) { s.phys.memo.off = !on }

// SetPhysSettlesAlone switches physical mode's steps without an undo log
// (settlesAlone) on or off, so that the external tests can compare them
// with the logged step. They are on in every new Sim.
func (s *Sim) SetPhysSettlesAlone(on bool) { s.phys.logAll = !on }

// PhysFastPath reports whether s's fast path is on.
func (s *Sim) PhysFastPath() bool { return !s.phys.slow }

// SetIdealFastPaths switches ideal mode's fast paths of resolve (one node;
// a group every device of which is on and passes at strong, reached by a
// source) on or off, so that the external tests can compare them with the
// general path. They are on in every new Sim.
func (s *Sim) SetIdealFastPaths(on bool) { s.slowIdeal = !on }

// VertexDecided reports whether the vertex solve decided node n's present
// value (physical_vertex.go).
func (s *Sim) VertexDecided(n int) bool { return s.mode == Physical && s.phys.info[n].Vertex }
