package ui

import (
	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/canvas"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/layout"
	"fyne.io/fyne/v2/theme"
	"fyne.io/fyne/v2/widget"

	"github.com/ramify-app/ramify/engine"
)

// variablesTable lists the project's variables as rows of entries: name
// (renaming updates every formula), value, low, high, note, and a remove button.
type variablesTable struct {
	e       *Editor
	content fyne.CanvasObject
	rows    *fyne.Container
	err     *canvas.Text
	shown   []*engine.Variable // the variables the rows were built for
	entries []map[string]*commitEntry
}

var variableColumns = []struct{ field, title string }{
	{"name", "Name"}, {engine.VarValue, "Value"}, {engine.VarLow, "Low"}, {engine.VarHigh, "High"}, {engine.VarNote, "Note"},
}

func newVariablesTable(e *Editor) *variablesTable {
	v := &variablesTable{e: e, rows: container.NewVBox()}
	v.err = canvas.NewText("", theme.Color(theme.ColorNameError))
	v.err.TextSize = theme.CaptionTextSize()
	add := widget.NewButtonWithIcon("Add variable", theme.ContentAddIcon(), v.add)
	e.buttons["add variable"] = add
	v.content = container.NewBorder(container.NewVBox(add, v.err), nil, nil, nil, container.NewVScroll(v.rows))
	return v
}

func (v *variablesTable) add() {
	p := v.e.project
	v.report(v.e.Apply(&engine.AddVariable{Variable: &engine.Variable{Name: engine.NewVariableName(p), Value: "0"}, At: -1}))
}

func (v *variablesTable) report(err error) {
	if err != nil {
		v.err.Text = err.Error()
	} else {
		v.err.Text = ""
	}
	v.err.Refresh()
}

// update refreshes the rows' texts; the rows are rebuilt only when the list of
// variables changed, so focus stays in the entry being edited.
func (v *variablesTable) update() {
	vars := v.e.project.Variables
	same := len(vars) == len(v.shown)
	for i := 0; same && i < len(vars); i++ {
		same = vars[i] == v.shown[i]
	}
	if !same {
		v.rebuild()
		return
	}
	for i, vr := range vars {
		for field, en := range v.entries[i] {
			text := variableText(vr, field)
			en.committed = text
			if en.Text != text && !en.editing {
				en.SetText(text)
			}
		}
	}
}

func variableText(vr *engine.Variable, field string) string {
	switch field {
	case "name":
		return vr.Name
	case engine.VarValue:
		return vr.Value
	case engine.VarLow:
		return vr.Low
	case engine.VarHigh:
		return vr.High
	}
	return vr.Note
}

func (v *variablesTable) rebuild() {
	v.rows.RemoveAll()
	v.shown = append([]*engine.Variable(nil), v.e.project.Variables...)
	v.entries = nil
	header := container.New(variableRow{})
	for _, c := range variableColumns {
		header.Add(widget.NewLabelWithStyle(c.title, fyne.TextAlignLeading, fyne.TextStyle{Bold: true}))
	}
	header.Add(layout.NewSpacer())
	v.rows.Add(header)
	for _, vr := range v.shown {
		vr := vr
		row := container.New(variableRow{})
		entries := map[string]*commitEntry{}
		for _, c := range variableColumns {
			field := c.field
			en := newCommitEntry(false)
			en.SetText(variableText(vr, field))
			en.committed = en.Text
			en.editing = false
			en.commit = func(text string) {
				var cmd engine.Command
				if field == "name" {
					cmd = &engine.RenameVariableCmd{Old: vr.Name, New: text}
				} else {
					cmd = &engine.SetVariableField{Name: vr.Name, Field: field, Value: text}
				}
				v.report(v.e.Apply(cmd))
			}
			entries[field] = en
			row.Add(en)
		}
		remove := widget.NewButtonWithIcon("", theme.DeleteIcon(), func() {
			v.report(v.e.Apply(&engine.RemoveVariable{Name: vr.Name}))
		})
		row.Add(remove)
		v.entries = append(v.entries, entries)
		v.rows.Add(row)
	}
	v.rows.Refresh()
}

// Entry returns a variable's entry for a field (for tests).
func (v *variablesTable) Entry(i int, field string) *widget.Entry { return &v.entries[i][field].Entry }

// Error is the message shown above the table (for tests).
func (v *variablesTable) Error() string { return v.err.Text }

// variableRow lays out one row of the table: name, value, low, high and note
// share the width by weight (the note gets most), the remove button keeps its own.
type variableRow struct{}

var variableWeights = []float32{0.22, 0.18, 0.13, 0.13, 0.34}

func (variableRow) Layout(objs []fyne.CanvasObject, size fyne.Size) {
	if len(objs) == 0 {
		return
	}
	pad := theme.Padding()
	last := objs[len(objs)-1]
	bw := last.MinSize().Width
	free := size.Width - bw - pad*float32(len(objs)-1)
	x := float32(0)
	for i, o := range objs[:len(objs)-1] {
		w := free * variableWeights[i]
		o.Move(fyne.NewPos(x, 0))
		o.Resize(fyne.NewSize(w, size.Height))
		x += w + pad
	}
	last.Move(fyne.NewPos(size.Width-bw, 0))
	last.Resize(fyne.NewSize(bw, size.Height))
}

func (variableRow) MinSize(objs []fyne.CanvasObject) fyne.Size {
	var w, h float32
	for _, o := range objs {
		m := o.MinSize()
		w += m.Width
		h = max(h, m.Height)
	}
	return fyne.NewSize(w, h)
}
