package engine

// History is an unlimited undo/redo list of applied commands. Each step keeps
// an opaque selection value (whatever the front end uses) so that undo can put
// the selection back where it was before the edit, and redo where it was after.
type History struct {
	undo, redo []step
	state      int // id of the project's current state
	next       int
	saved      int // state at the last save
}

type step struct {
	inverse   Command
	desc      string
	selection any // the selection to restore when this step is replayed
	before    int // state ids around the step
	after     int
}

// Do applies c to p and records its inverse with the selection before the edit.
func (h *History) Do(p *Project, c Command, selection any) error {
	inv, err := c.Apply(p)
	if err != nil {
		return err
	}
	h.next++
	h.undo = append(h.undo, step{inverse: inv, desc: c.Describe(), selection: selection, before: h.state, after: h.next})
	h.state = h.next
	h.redo = nil
	return nil
}

// Undo reverts the last edit. current is the selection now (restored by Redo);
// the returned selection is the one from before the edit. ok is false when
// there is nothing to undo.
func (h *History) Undo(p *Project, current any) (selection any, ok bool, err error) {
	return h.replay(p, &h.undo, &h.redo, current, true)
}

// Redo re-applies the last undone edit and returns the selection from after it.
func (h *History) Redo(p *Project, current any) (selection any, ok bool, err error) {
	return h.replay(p, &h.redo, &h.undo, current, false)
}

func (h *History) replay(p *Project, from, to *[]step, current any, undo bool) (any, bool, error) {
	if len(*from) == 0 {
		return nil, false, nil
	}
	s := (*from)[len(*from)-1]
	inv, err := s.inverse.Apply(p)
	if err != nil {
		return nil, false, err
	}
	*from = (*from)[:len(*from)-1]
	*to = append(*to, step{inverse: inv, desc: s.desc, selection: current, before: s.before, after: s.after})
	if undo {
		h.state = s.before
	} else {
		h.state = s.after
	}
	return s.selection, true, nil
}

// CanUndo and CanRedo report whether there is a step; UndoName and RedoName
// name it for the menu ("Undo Change probability").
func (h *History) CanUndo() bool { return len(h.undo) > 0 }
func (h *History) CanRedo() bool { return len(h.redo) > 0 }

func (h *History) UndoName() string {
	if len(h.undo) == 0 {
		return ""
	}
	return h.undo[len(h.undo)-1].desc
}

func (h *History) RedoName() string {
	if len(h.redo) == 0 {
		return ""
	}
	return h.redo[len(h.redo)-1].desc
}

// MarkSaved records the current state as the one on disk.
func (h *History) MarkSaved() { h.saved = h.state }

// Dirty reports whether the project differs from the last saved state
// (undoing back to the saved state makes it clean again).
func (h *History) Dirty() bool { return h.state != h.saved }

// Clear forgets every step, e.g. after opening another file.
func (h *History) Clear() { *h = History{} }

// Contains reports whether n is one of the nodes this result evaluated, so a
// front end can tell whether a selected node is still in the tree after an edit.
func (r *Result) Contains(n *Node) bool { return r.has(n) }
