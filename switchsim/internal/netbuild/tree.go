package netbuild

import (
	"strings"

	"railyard/switchsim/diag"
)

// Size is what expanding something adds: devices, and elements (devices
// and capacitors) for a reader that counts those too.
type Size [2]int

// Tree measures definitions that instantiate each other (subcircuits,
// modules) before anything is expanded: a definition that instantiates
// itself, directly or through others, and nesting past Depth are errors,
// and the expanded size of each is known, saturating just past Max, so
// that an exponential tree is refused in linear time.
type Tree[D comparable] struct {
	What string // "subcircuit", "module": for the messages
	Name func(D) string
	// Body goes through d's contents: it calls use for every instance of
	// another definition, with the instance's position, and returns the
	// size of d's own devices.
	Body  func(d D, use func(child D, at diag.Pos)) Size
	Depth int
	Max   Size
	Errs  *Sink
	info  map[D]*treeNode
	stack []D
}

type treeNode struct {
	visit uint8 // 0 new, 1 on the walk's stack, 2 measured
	size  Size
	bad   bool // on a cycle or nested too deep: never expanded
}

func (t *Tree[D]) node(d D) *treeNode {
	if t.info == nil {
		t.info = map[D]*treeNode{}
	}
	n := t.info[d]
	if n == nil {
		n = &treeNode{}
		t.info[d] = n
	}
	return n
}

// Bad reports whether d is on a cycle or nested too deep.
func (t *Tree[D]) Bad(d D) bool { return t.node(d).bad }

// Measure returns d's expanded size; at is where the walk came to d from
// (an instance, or d's own definition at the top of a walk).
func (t *Tree[D]) Measure(d D, at diag.Pos) Size {
	n := t.node(d)
	switch n.visit {
	case 2:
		return n.size
	case 1:
		i := len(t.stack) - 1
		for i > 0 && t.stack[i] != d {
			i--
		}
		var chain []string
		for _, x := range t.stack[i:] {
			chain = append(chain, t.Name(x))
			t.node(x).bad = true
		}
		t.Errs.Add(at, "%s %s instantiates itself: %s -> %s", t.What, t.Name(d), strings.Join(chain, " -> "), t.Name(d))
		return Size{}
	}
	if len(t.stack) >= t.Depth {
		t.Errs.Add(at, "instances nest more than %d deep (at %s %s)", t.Depth, t.What, t.Name(d))
		n.visit, n.bad = 2, true
		return Size{}
	}
	n.visit = 1
	t.stack = append(t.stack, d)
	var total Size
	own := t.Body(d, func(c D, at diag.Pos) {
		total = t.add(total, t.Measure(c, at))
		if t.node(c).bad {
			n.bad = true
		}
	})
	n.size = t.add(total, own)
	t.stack = t.stack[:len(t.stack)-1]
	n.visit = 2
	return n.size
}

func (t *Tree[D]) add(a, b Size) Size {
	for i := range a {
		a[i] = min(a[i]+b[i], t.Max[i]+1)
	}
	return a
}
