package ui

import (
	"strconv"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/dialog"
	"fyne.io/fyne/v2/widget"

	"github.com/ramify-app/ramify/engine"
)

// projectSettings edits title, notes, prepared by, objective, unit, decimals
// and risk attitude as one undoable change.
func (e *Editor) projectSettings() {
	s := engine.SettingsOf(e.project)
	title := widget.NewEntry()
	title.SetText(s.Title)
	notes := widget.NewMultiLineEntry()
	notes.Wrapping = fyne.TextWrapWord
	notes.SetMinRowsVisible(4)
	notes.SetText(s.Notes)
	by := widget.NewEntry()
	by.SetText(s.PreparedBy)
	objective := widget.NewRadioGroup([]string{"Maximize (benefit, profit)", "Minimize (cost, time)"}, nil)
	objective.SetSelected(objective.Options[0])
	if s.Objective == engine.Minimize {
		objective.SetSelected(objective.Options[1])
	}
	currency := widget.NewEntry()
	currency.SetText(s.Currency)
	currency.SetPlaceHolder("EUR, $, days…")
	decimals := widget.NewEntry()
	decimals.SetText(strconv.Itoa(s.Decimals))
	risk := widget.NewCheck("Use an exponential utility (risk tolerance R)", nil)
	risk.SetChecked(s.Risk.Mode == engine.RiskExponential)
	tolerance := widget.NewEntry()
	tolerance.SetText(s.Risk.Tolerance)
	tolerance.SetPlaceHolder("R, a formula; > 0 risk averse")
	items := []*widget.FormItem{
		widget.NewFormItem("Title", title),
		widget.NewFormItem("Notes", notes),
		widget.NewFormItem("Prepared by", by),
		widget.NewFormItem("Objective", objective),
		widget.NewFormItem("Currency or unit", currency),
		widget.NewFormItem("Decimals shown", decimals),
		widget.NewFormItem("Risk attitude", risk),
		widget.NewFormItem("Risk tolerance", tolerance),
	}
	d := dialog.NewForm("Project settings", "Apply", "Cancel", items, func(ok bool) {
		if !ok {
			return
		}
		n := s
		n.Title, n.Notes, n.PreparedBy = title.Text, notes.Text, by.Text
		n.Objective = engine.Maximize
		if objective.Selected == objective.Options[1] {
			n.Objective = engine.Minimize
		}
		n.Currency = strings.TrimSpace(currency.Text)
		dec, err := strconv.Atoi(strings.TrimSpace(decimals.Text))
		if err != nil {
			e.ShowError("Project settings", errDecimals(decimals.Text))
			return
		}
		n.Decimals = dec
		n.Risk = engine.RiskAttitude{}
		if risk.Checked {
			n.Risk = engine.RiskAttitude{Mode: engine.RiskExponential, Tolerance: strings.TrimSpace(tolerance.Text)}
		}
		if err := e.Apply(&engine.SetSettings{Settings: n}); err != nil {
			e.ShowError("Project settings", err)
		}
	}, e.win)
	d.Resize(fyne.NewSize(560, 560))
	d.Show()
}

type errDecimals string

func (s errDecimals) Error() string {
	return "decimals: " + strconv.Quote(string(s)) + " is not a whole number"
}
