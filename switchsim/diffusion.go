package switchsim

// Structural defaults of a node's charge (switchsim §1): a node that only
// device channels touch is a diffusion node, the junction between two
// series devices or between pass devices.

// Diffusion reports whether node n is a diffusion node: an internal node
// that some device's channel touches, that gates no device and is no
// input, output or rail. Unless the design gives them, such a node's
// charge class is small and its capacitance the technology's cdiff.
func (nl *Netlist) Diffusion(n int) bool {
	return nl.nodeKind[n] == Internal && nl.nodeFlag[n]&nodeOutput == 0 &&
		nl.gateStart[n] == nl.gateStart[n+1] && nl.chanStart[n] < nl.chanStart[n+1]
}

// DefaultCap is the capacitance node n has when the design gives none:
// the technology's cdiff on a diffusion node, cnode elsewhere.
func (nl *Netlist) DefaultCap(n int) float64 {
	if nl.Diffusion(n) {
		return nl.Tech.Cdiff
	}
	return nl.Tech.Cnode
}

// DefaultCharge is the charge class node n has when the design gives
// none: small on a diffusion node, medium (the IEEE 1364-2005 trireg
// default) elsewhere.
func (nl *Netlist) DefaultCharge(n int) Strength {
	if nl.Diffusion(n) {
		return Small
	}
	return Medium
}

// diffusionDefaults flags the diffusion nodes (nodeDiffusion) and gives each
// one that the design left without a capacitance or a charge class the
// diffusion defaults (the capacitances where nodeCap is made at all); an
// explicit cap= or charge= keeps its own value (a netlist's C card on a
// stack node sets the capacitance, the class still follows the structure).
func (nl *Netlist) diffusionDefaults(nodes []bnode) {
	for i, n := range nodes {
		diff := nl.Diffusion(i)
		if diff {
			nl.nodeFlag[i] |= nodeDiffusion
		}
		if nl.nodeCap != nil {
			nl.nodeCap[i] = n.cap
			if n.cap == 0 {
				nl.nodeCap[i] = nl.DefaultCap(i)
			}
		}
		if diff && n.charge == HighZ {
			nl.nodeCharge[i] = Small
		}
	}
}
