package session

// Sizes tried on a design (the explorer's keeper sizing): the netlist with
// the sizes changed, and the .sw text that says so, which is what the
// edited design is saved as and what its content hash is of.

import (
	"bytes"
	"fmt"
	"strings"

	"railyard/switchsim"
	"railyard/switchsim/netfile"
)

// Edit is one device whose size was changed: its size in the design as
// loaded (WasW, WasL) and the size tried (W, L), in metres.
type Edit struct {
	Device     int
	W, L       float64
	WasW, WasL float64
}

// editedDesign returns orig with the edits applied. Its Source is .sw
// text: for a .sw design the file itself in canonical form with the
// changed options, where every edit names a statement that makes that
// one device (a transistor at the top level, or in a cell of the file
// used once); otherwise (a netlist read from elsewhere, a device of a
// library cell or of a cell used several times, a transmission gate's
// shared length) the flat .sw of netfile.WriteConverted with every
// instance expanded. Comment lines at the top list the edits. Either text
// is read back and checked to give the edited sizes before it is used.
func editedDesign(orig *netfile.Design, edits []Edit) (*netfile.Design, error) {
	nl := orig.Netlist
	for _, e := range edits {
		var err error
		if nl, err = nl.WithSize(e.Device, e.W, e.L); err != nil {
			return nil, err
		}
	}
	var head strings.Builder
	fmt.Fprintf(&head, "# railyard explore: sizes tried on %s\n", printableName(orig))
	for _, e := range edits {
		fmt.Fprintf(&head, "#   %s\n", EditString(orig.Netlist, e))
	}
	// The edited design is .sw text whatever it was read from; it keeps
	// the files it included, so that no output is written over one.
	d := &netfile.Design{Name: orig.Name, Desc: orig.Desc, Netlist: nl, File: orig.File, Notes: orig.Notes,
		Format: "sw", Includes: orig.Includes, Corners: orig.Corners}
	if tree := editTree(orig, edits); tree != nil {
		var body bytes.Buffer
		if netfile.Write(&body, &netfile.Design{Tree: tree}) == nil {
			src := append([]byte(head.String()), body.Bytes()...)
			if sameSizes(orig.File, src, nl) == nil {
				d.Source, d.Tree, d.Corners = src, tree, orig.Corners
				return d, nil
			}
		}
	}
	var body bytes.Buffer
	if err := netfile.WriteConverted(&body, d); err != nil {
		return nil, fmt.Errorf("the edited design cannot be written as .sw: %v", err)
	}
	src := append([]byte(head.String()), body.Bytes()...)
	if err := sameSizes(orig.File, src, nl); err != nil {
		return nil, fmt.Errorf("the edited design's .sw does not read back as edited: %v", err)
	}
	d.Source = src
	return d, nil
}

func printableName(d *netfile.Design) string {
	if d.File != "" {
		return d.File
	}
	return d.Name
}

// EditString words an edit: "keep.n W 1.44u -> 0.72u", both sizes where
// both changed.
func EditString(nl *switchsim.Netlist, e Edit) string {
	var parts []string
	if e.W != e.WasW {
		parts = append(parts, "W "+netfile.FormatNumber(e.WasW)+" -> "+netfile.FormatNumber(e.W))
	}
	if e.L != e.WasL {
		parts = append(parts, "L "+netfile.FormatNumber(e.WasL)+" -> "+netfile.FormatNumber(e.L))
	}
	if len(parts) == 0 {
		parts = append(parts, "W/L as loaded")
	}
	return nl.DeviceDisplayName(e.Device) + " " + strings.Join(parts, ", ")
}

// sameSizes reads src back and checks it holds every device of want, by
// name, with want's kind and size, and as many nodes.
func sameSizes(file string, src []byte, want *switchsim.Netlist) error {
	got, err := netfile.Read(file, src)
	if err != nil {
		return err
	}
	if got.Netlist.NumDevices() != want.NumDevices() || got.Netlist.NumNodes() != want.NumNodes() {
		return fmt.Errorf("%d devices and %d nodes, want %d and %d",
			got.Netlist.NumDevices(), got.Netlist.NumNodes(), want.NumDevices(), want.NumNodes())
	}
	for d := 0; d < want.NumDevices(); d++ {
		w := want.Device(d)
		g, ok := got.Netlist.LookupDevice(w.Name)
		if !ok {
			return fmt.Errorf("device %s is missing", w.Name)
		}
		if gd := got.Netlist.Device(g); gd.Kind != w.Kind || gd.W != w.W || gd.L != w.L {
			return fmt.Errorf("device %s is %s %g/%g, want %s %g/%g", w.Name, gd.Kind, gd.W, gd.L, w.Kind, w.W, w.L)
		}
	}
	return nil
}

// editTree returns a copy of orig's statements with every edit written
// into the statement that makes its device, or nil when some edit cannot
// be said there without changing another device too.
func editTree(orig *netfile.Design, edits []Edit) *netfile.Tree {
	if orig.Tree == nil {
		return nil
	}
	tree := copyTree(orig.Tree)
	cells := map[string]*netfile.Stmt{}
	for _, s := range tree.Stmts {
		if s.Kind == "cell" && len(s.Args) > 0 {
			cells[s.Args[0].Text] = s
		}
	}
	uses := instanceCounts(tree, cells)
	for _, e := range edits {
		dv := orig.Netlist.Device(e.Device)
		st, side, cell := findStatement(tree.Stmts, cells, dv.Name, 0)
		if st == nil || (cell != "" && uses[cell] != 1) {
			return nil
		}
		wKey, lKey := "w", "l"
		if st.Kind == "tgate" {
			wKey = "w" + side // wn or wp
			if e.L != e.WasL {
				return nil // a transmission gate's length is both halves'
			}
		}
		if e.W != e.WasW {
			setOpt(st, wKey, e.W)
		}
		if e.L != e.WasL {
			setOpt(st, lKey, e.L)
		}
	}
	return tree
}

// findStatement finds the statement that makes the device named name
// within stmts: a transistor of that name, a transmission gate's half
// (NAME.n or NAME.p, side "n" or "p"), or, through a use of a cell of the
// file (INSTANCE.rest), the statement in that cell's body. cell is the
// innermost cell it is in ("" at the top level). A device of a library
// cell is not found: its statement is not in the file.
func findStatement(stmts []*netfile.Stmt, cells map[string]*netfile.Stmt, name string, depth int) (st *netfile.Stmt, side, cell string) {
	if depth > 64 {
		return nil, "", ""
	}
	for _, s := range stmts {
		if len(s.Args) == 0 {
			continue
		}
		switch first := s.Args[0].Text; s.Kind {
		case "nmos", "pmos":
			if first == name {
				return s, "", ""
			}
		case "tgate":
			if name == first+".n" || name == first+".p" {
				return s, name[len(name)-1:], ""
			}
		}
	}
	for _, s := range stmts {
		if s.Kind != "use" || len(s.Args) < 2 || !strings.HasPrefix(name, s.Args[1].Text+".") {
			continue
		}
		c := cells[s.Args[0].Text]
		if c == nil {
			return nil, "", "" // a library cell
		}
		st, side, inner := findStatement(c.Body, cells, name[len(s.Args[1].Text)+1:], depth+1)
		if inner == "" {
			inner = s.Args[0].Text
		}
		return st, side, inner
	}
	return nil, "", ""
}

// instanceCounts counts the instances of each cell of the file in the
// expanded design: one for each use at the top level, and for each use in
// another cell's body as many as that cell has (worked out once a cell).
func instanceCounts(t *netfile.Tree, cells map[string]*netfile.Stmt) map[string]int {
	// users[C] lists, per use of C, the cell whose body holds it ("" the top)
	users := map[string][]string{}
	note := func(stmts []*netfile.Stmt, in string) {
		for _, s := range stmts {
			if s.Kind == "use" && len(s.Args) > 0 && cells[s.Args[0].Text] != nil {
				users[s.Args[0].Text] = append(users[s.Args[0].Text], in)
			}
		}
	}
	note(t.Stmts, "")
	for name, c := range cells {
		note(c.Body, name)
	}
	count := map[string]int{}
	busy := map[string]bool{}
	var of func(name string) int
	of = func(name string) int {
		if name == "" {
			return 1
		}
		if n, ok := count[name]; ok {
			return n
		}
		if busy[name] {
			return 0 // a cycle: the reader refuses those, so never expanded
		}
		busy[name] = true
		n := 0
		for _, in := range users[name] {
			n += of(in)
		}
		count[name] = n
		return n
	}
	for name := range cells {
		of(name)
	}
	return count
}

func setOpt(s *netfile.Stmt, key string, v float64) {
	val := netfile.FormatNumber(v)
	for i := range s.Opts {
		if s.Opts[i].Key == key {
			s.Opts[i].Val = val
			return
		}
	}
	s.Opts = append(s.Opts, netfile.Opt{Key: key, Val: val})
}

// copyTree copies the statements deep enough that editing options of the
// copy leaves the original alone.
func copyTree(t *netfile.Tree) *netfile.Tree {
	var cp func([]*netfile.Stmt) []*netfile.Stmt
	cp = func(list []*netfile.Stmt) []*netfile.Stmt {
		if list == nil {
			return nil
		}
		out := make([]*netfile.Stmt, len(list))
		for i, s := range list {
			c := *s
			c.Opts = append([]netfile.Opt(nil), s.Opts...)
			c.Body = cp(s.Body)
			out[i] = &c
		}
		return out
	}
	return &netfile.Tree{File: t.File, Stmts: cp(t.Stmts)}
}
