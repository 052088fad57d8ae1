package ui

import (
	"fmt"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/canvas"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/theme"
	"fyne.io/fyne/v2/widget"

	"github.com/ramify-app/ramify/engine"
)

// inspector shows and edits the selected node and the branch leading to it.
type inspector struct {
	e        *Editor
	content  *fyne.Container
	heading  *widget.Label
	value    *widget.Label
	kind     *widget.RadioGroup
	fields   map[string]*formField // name, note, label, probability, cash, payoff
	branch   *fyne.Container       // the incoming branch's fields
	payoff   *fyne.Container
	showing  bool // suppresses kind-change callbacks while filling in
	nodePart []fyne.CanvasObject
}

// formField is an entry that commits on Enter or when it loses focus, with its
// error shown underneath; a refused value leaves the typed text for correction.
type formField struct {
	entry *commitEntry
	err   *canvas.Text
	box   *fyne.Container
}

func newFormField(label string, multi bool, commit func(string) error) *formField {
	f := &formField{entry: newCommitEntry(multi)}
	f.err = canvas.NewText("", theme.Color(theme.ColorNameError))
	f.err.TextSize = theme.CaptionTextSize()
	f.entry.commit = func(text string) {
		if err := commit(text); err != nil {
			f.setError(err.Error())
			return
		}
		f.setError("")
	}
	f.box = container.NewVBox(widget.NewLabelWithStyle(label, fyne.TextAlignLeading, fyne.TextStyle{Bold: true}), f.entry, f.err)
	return f
}

func (f *formField) setError(msg string) {
	f.err.Text = msg
	f.err.Refresh()
}

// set shows the model's text unless the user is mid-way through a refused edit.
func (f *formField) set(text string) {
	if f.err.Text != "" && f.entry.editing {
		return
	}
	f.setError("")
	f.entry.committed = text
	if f.entry.Text != text {
		f.entry.SetText(text)
	}
}

// Error returns the error shown under the field (for tests).
func (f *formField) Error() string { return f.err.Text }

// commitEntry commits on Enter (single line) or on leaving the field.
type commitEntry struct {
	widget.Entry
	commit    func(string)
	committed string // text last shown from the model
	editing   bool
}

func newCommitEntry(multi bool) *commitEntry {
	en := &commitEntry{}
	en.MultiLine = multi
	if multi {
		en.Wrapping = fyne.TextWrapWord
		en.SetMinRowsVisible(3)
	}
	en.ExtendBaseWidget(en)
	en.OnChanged = func(string) { en.editing = true }
	en.OnSubmitted = func(text string) { en.finish() }
	return en
}

func (en *commitEntry) finish() {
	if en.Text != en.committed && en.commit != nil {
		en.commit(en.Text)
	}
	en.editing = false
}

func (en *commitEntry) FocusLost() {
	en.Entry.FocusLost()
	en.finish()
}

func newInspector(e *Editor) *inspector {
	in := &inspector{e: e, fields: map[string]*formField{}}
	in.heading = widget.NewLabelWithStyle("", fyne.TextAlignLeading, fyne.TextStyle{Bold: true})
	in.heading.Wrapping = fyne.TextWrapWord
	in.value = widget.NewLabel("")
	in.value.Wrapping = fyne.TextWrapWord
	in.kind = widget.NewRadioGroup([]string{"Decision", "Chance", "End"}, func(s string) {
		if in.showing || s == "" {
			return
		}
		e.changeKind(engine.Kind(strings.ToLower(s)))
	})
	in.kind.Horizontal = true
	nodeField := func(field string, multi bool) *formField {
		f := newFormField(strings.ToUpper(field[:1])+field[1:], multi, func(text string) error {
			n := e.selectedNode()
			if n == nil {
				return nil
			}
			return e.Apply(&engine.SetNodeField{Node: n, Field: field, Value: text})
		})
		in.fields[field] = f
		return f
	}
	branchField := func(field string) *formField {
		f := newFormField("Branch "+field, false, func(text string) error {
			parent, i := e.project.Parent(e.selectedNode())
			if parent == nil {
				return nil
			}
			return e.Apply(&engine.SetBranchField{Node: parent, Branch: i, Field: field, Value: text})
		})
		in.fields[field] = f
		return f
	}
	name, note := nodeField(engine.FieldName, false), nodeField(engine.FieldNote, true)
	payoff := nodeField(engine.FieldPayoff, false)
	label, prob, cash := branchField(engine.FieldLabel), branchField(engine.FieldProbability), branchField(engine.FieldCash)
	in.branch = container.NewVBox(widget.NewSeparator(), label.box, prob.box, cash.box)
	in.payoff = container.NewVBox(payoff.box)
	in.nodePart = []fyne.CanvasObject{in.kind, name.box, note.box, in.payoff}
	in.content = container.NewVBox()
	in.order(false)
	return in
}

// order puts the branch's fields first when a branch text is selected, the
// node's fields first otherwise.
func (in *inspector) order(branchFirst bool) {
	objs := []fyne.CanvasObject{in.heading, in.value}
	if branchFirst {
		objs = append(append(objs, in.branch), in.nodePart...)
	} else {
		objs = append(append(objs, in.nodePart...), in.branch)
	}
	if len(in.content.Objects) == len(objs) && in.content.Objects[2] == objs[2] {
		return
	}
	in.content.Objects = objs
	in.content.Refresh()
}

// Field returns the entry for a field name (for tests).
func (in *inspector) Field(name string) *formField { return in.fields[name] }

// show fills the inspector from the selection.
func (in *inspector) show() {
	e := in.e
	n := e.selectedNode()
	if n == nil || e.result == nil {
		return
	}
	in.showing = true
	defer func() { in.showing = false }()
	r := e.result
	in.heading.SetText(fmt.Sprintf("%s node %q", strings.ToUpper(string(n.Kind[:1]))+string(n.Kind[1:]), n.ID))
	val := fmt.Sprintf("%s: %s", r.ValueWord(), r.Format(r.DisplayValue(n)))
	for _, p := range r.ProblemsAt(n) {
		val += "\n⚠ " + p.Msg
	}
	in.value.SetText(val)
	in.kind.SetSelected(strings.ToUpper(string(n.Kind[:1])) + string(n.Kind[1:]))
	in.fields[engine.FieldName].set(n.Name)
	in.fields[engine.FieldNote].set(n.Note)
	in.fields[engine.FieldPayoff].set(n.Payoff)
	if n.Kind == engine.End {
		in.payoff.Show()
	} else {
		in.payoff.Hide()
	}
	parent, i := r.ParentOf(n)
	if parent == nil {
		in.branch.Hide()
		in.order(false)
		return
	}
	in.branch.Show()
	in.order(e.sel.Branch >= 0)
	if e.sel.Branch >= 0 {
		in.heading.SetText(fmt.Sprintf("Branch %q of %s, leading to %s node %q",
			engine.BranchTitle(parent, i), engine.NodeTitle(parent), n.Kind, engine.NodeTitle(n)))
	}
	b := parent.Branches[i]
	in.fields[engine.FieldLabel].set(b.Label)
	in.fields[engine.FieldProbability].set(b.Probability)
	in.fields[engine.FieldCash].set(b.Cash)
	if parent.Kind == engine.Chance {
		in.fields[engine.FieldProbability].box.Show()
	} else {
		in.fields[engine.FieldProbability].box.Hide()
	}
}
