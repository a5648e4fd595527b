package switchsim

// Corners (DEVELOPERS.md, physical mode): the same design at other technology values.

// WithTech returns the netlist with technology t, validated: a shallow
// copy that shares the arrays of nl, so that a corner (the design's
// technology with some keys replaced, a `corner` statement) runs as a
// netlist of its own next to the nominal one. Where t changes a default
// size (wn, wp, l) or a default node capacitance (cnode, cdiff), the copy gets
// its own size or capacitance arrays, with every entry that held the old
// default taking the new one (a size or capacitance written equal to the
// default counts as the default, as everywhere in physical mode). nl is
// left unchanged. An error is a *TechError naming the key at fault.
func (nl *Netlist) WithTech(t Tech) (*Netlist, error) {
	if err := t.Validate(); err != nil {
		return nil, err
	}
	c := *nl
	c.Tech = t
	old := nl.Tech
	if t.Cnode != old.Cnode || t.Cdiff != old.Cdiff {
		c.nodeCap = append([]float64(nil), nl.nodeCap...)
		for n, v := range c.nodeCap {
			if v == nl.DefaultCap(n) {
				c.nodeCap[n] = c.DefaultCap(n) // cdiff on a diffusion node, cnode elsewhere (switchsim §1)
			}
		}
	}
	if t.Wn != old.Wn || t.Wp != old.Wp {
		c.devW = append([]float64(nil), nl.devW...)
		for d, w := range c.devW {
			switch {
			case c.devKind[d] == NMOS && w == old.Wn:
				c.devW[d] = t.Wn
			case c.devKind[d] == PMOS && w == old.Wp:
				c.devW[d] = t.Wp
			}
		}
	}
	if t.L != old.L {
		c.devL = append([]float64(nil), nl.devL...)
		for d, l := range c.devL {
			if c.devKind[d] < PullUp && l == old.L {
				c.devL[d] = t.L
			}
		}
	}
	return &c, nil
}
