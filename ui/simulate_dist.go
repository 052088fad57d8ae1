package ui

import (
	"fmt"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/dialog"
	"fyne.io/fyne/v2/widget"

	"github.com/ramify-app/ramify/engine"
	"github.com/ramify-app/ramify/engine/analysis"
)

const distNone = "none (always its value)"

var distKinds = []string{distNone, string(engine.DistUniform), string(engine.DistTriangular), string(engine.DistPERT),
	string(engine.DistNormal), string(engine.DistLognormal), string(engine.DistDiscrete)}

// distForm edits one variable's distribution at a time; each Apply is one undoable edit.
type distForm struct {
	host     Host
	variable *widget.Select
	kind     *widget.Select
	fields   map[string]*widget.Entry // min, mode, max, mean, sd, values, probabilities
	items    map[string]*widget.FormItem
	kindItem *widget.FormItem
	form     *widget.Form
	message  *widget.Label
	content  fyne.CanvasObject
}

func newDistForm(h Host) *distForm {
	f := &distForm{host: h, fields: map[string]*widget.Entry{}, items: map[string]*widget.FormItem{}}
	var names []string
	if p := h.Project(); p != nil {
		for _, v := range p.Variables {
			names = append(names, v.Name)
		}
	}
	f.message = widget.NewLabel("")
	f.message.Wrapping = fyne.TextWrapWord
	f.kind = widget.NewSelect(distKinds, func(string) { f.showFields() })
	f.kindItem = widget.NewFormItem("Kind", f.kind)
	f.form = widget.NewForm(f.kindItem)
	hints := map[string]string{
		"min": "lowest value (formula)", "mode": "most likely value", "max": "highest value",
		"mean": "mean of the variable", "sd": "standard deviation of the variable",
		"values": "values, separated by ;", "probabilities": "their probabilities, separated by ;",
	}
	for _, key := range []string{"min", "mode", "max", "mean", "sd", "values", "probabilities"} {
		e := widget.NewEntry()
		e.SetPlaceHolder(hints[key])
		f.fields[key] = e
		item := widget.NewFormItem(key, e)
		f.items[key] = item
	}
	f.variable = widget.NewSelect(names, func(string) { f.load() })
	apply := widget.NewButton("Apply", f.apply)
	apply.Importance = widget.HighImportance
	f.content = container.NewVBox(
		widget.NewLabel("Give a variable a distribution for simulation. Parameters may be formulas over the variables' values."),
		widget.NewForm(widget.NewFormItem("Variable", f.variable)),
		f.form, container.NewHBox(apply), f.message)
	if len(names) > 0 {
		f.variable.SetSelected(names[0])
	} else {
		f.message.SetText("The project has no variables; add one in the variables panel first.")
	}
	return f
}

// shown lists the parameters each kind uses.
var distShown = map[string][]string{
	string(engine.DistUniform): {"min", "max"}, string(engine.DistTriangular): {"min", "mode", "max"},
	string(engine.DistPERT): {"min", "mode", "max"}, string(engine.DistNormal): {"mean", "sd"},
	string(engine.DistLognormal): {"mean", "sd"}, string(engine.DistDiscrete): {"values", "probabilities"},
}

func (f *distForm) showFields() {
	items := []*widget.FormItem{f.kindItem}
	for _, k := range distShown[f.kind.Selected] {
		items = append(items, f.items[k])
	}
	f.form.Items = items
	f.form.Refresh()
}

func (f *distForm) load() {
	p := f.host.Project()
	if p == nil {
		return
	}
	v := p.Variable(f.variable.Selected)
	if v == nil {
		return
	}
	for _, e := range f.fields {
		e.SetText("")
	}
	f.message.SetText("")
	if v.Dist == nil || v.Dist.Kind == engine.DistFixed {
		f.kind.SetSelected(distNone)
		return
	}
	d := v.Dist
	f.fields["min"].SetText(d.Min)
	f.fields["mode"].SetText(d.Mode)
	f.fields["max"].SetText(d.Max)
	f.fields["mean"].SetText(d.Mean)
	f.fields["sd"].SetText(d.SD)
	f.fields["values"].SetText(strings.Join(d.Values, "; "))
	f.fields["probabilities"].SetText(strings.Join(d.Probs, "; "))
	f.kind.SetSelected(string(d.Kind))
}

func splitList(s string) []string {
	if strings.TrimSpace(s) == "" {
		return nil
	}
	var out []string
	for _, part := range strings.Split(s, ";") {
		out = append(out, strings.TrimSpace(part))
	}
	return out
}

func (f *distForm) apply() {
	name := f.variable.Selected
	if name == "" {
		f.message.SetText("Choose a variable first.")
		return
	}
	cmd := analysis.SetDistribution{Variable: name}
	if k := f.kind.Selected; k != distNone && k != "" {
		d := &engine.Distribution{Kind: engine.DistKind(k)}
		for _, key := range distShown[k] {
			text := strings.TrimSpace(f.fields[key].Text)
			switch key {
			case "min":
				d.Min = text
			case "mode":
				d.Mode = text
			case "max":
				d.Max = text
			case "mean":
				d.Mean = text
			case "sd":
				d.SD = text
			case "values":
				d.Values = splitList(text)
			case "probabilities":
				d.Probs = splitList(text)
			}
		}
		cmd.Dist = d
	}
	if err := f.host.Apply(cmd); err != nil {
		f.message.SetText(err.Error())
		return
	}
	if cmd.Dist == nil {
		f.message.SetText(fmt.Sprintf("%s now always takes its value.", name))
	} else {
		f.message.SetText(fmt.Sprintf("%s now has a %s distribution (Undo takes it back).", name, cmd.Dist.Kind))
	}
}

func showDistributionDialog(h Host) {
	if h.Project() == nil {
		return
	}
	f := newDistForm(h)
	d := dialog.NewCustom("Distributions", "Close", f.content, h.Window())
	d.Resize(fyne.NewSize(560, 520))
	d.Show()
}
