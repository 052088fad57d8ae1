package ui

import (
	"fmt"
	"math"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/dialog"
	"fyne.io/fyne/v2/widget"
	"github.com/shopspring/decimal"

	"github.com/ramify-app/ramify/engine"
	"github.com/ramify-app/ramify/engine/analysis"
)

// toleranceHelper is the small dialog that suggests a risk tolerance R from a
// 50-50 gamble or from company figures; every number comes from engine/analysis.
type toleranceHelper struct {
	unit     string
	decimals int
	use      func(text string)
	dlg      dialog.Dialog

	gambleX     *widget.Entry
	gambleOut   *widget.Label
	sales       *widget.Entry
	income      *widget.Entry
	equity      *widget.Entry
	companyOut  *widget.Label
	suggestions *fyne.Container
}

// showToleranceHelper opens the dialog; use receives the chosen R as text.
func showToleranceHelper(parent fyne.Window, unit string, decimals int, use func(text string)) {
	h := newToleranceHelper(unit, decimals, use)
	h.dlg = dialog.NewCustom("Choose a risk tolerance", "Close", h.content(), parent)
	h.dlg.Resize(fyne.NewSize(520, 480))
	h.dlg.Show()
}

func newToleranceHelper(unit string, decimals int, use func(text string)) *toleranceHelper {
	h := &toleranceHelper{unit: unit, decimals: decimals, use: use}
	h.gambleX = widget.NewEntry()
	h.gambleX.SetPlaceHolder("largest X you would risk")
	h.gambleOut = widget.NewLabel("")
	h.gambleOut.Wrapping = fyne.TextWrapWord
	h.sales, h.income, h.equity = widget.NewEntry(), widget.NewEntry(), widget.NewEntry()
	h.companyOut = widget.NewLabel("")
	h.companyOut.Wrapping = fyne.TextWrapWord
	h.suggestions = container.NewVBox()
	for _, e := range []*widget.Entry{h.gambleX, h.sales, h.income, h.equity} {
		e.OnChanged = func(string) { h.recompute() }
	}
	return h
}

func (h *toleranceHelper) content() fyne.CanvasObject {
	intro := widget.NewLabel("R is in the project's unit. A larger R means more willing to take risks; " +
		"R > 0 is risk-averse, R < 0 risk-seeking.")
	intro.Wrapping = fyne.TextWrapWord
	gamble := widget.NewLabel("A coin is tossed: heads you win X, tails you lose X/2. What is the largest X " +
		"for which you would still play? R is about that X (a rule of thumb).")
	gamble.Wrapping = fyne.TextWrapWord
	company := widget.NewLabel("Or, for a company, from its accounts (rules of thumb from published practice; " +
		"fill any of them):")
	company.Wrapping = fyne.TextWrapWord
	form := widget.NewForm(
		widget.NewFormItem("Net sales", h.sales),
		widget.NewFormItem("Net income", h.income),
		widget.NewFormItem("Equity", h.equity),
	)
	return container.NewVBox(intro, widget.NewSeparator(), gamble,
		container.NewBorder(nil, nil, widget.NewLabel("X"), nil, h.gambleX), h.gambleOut,
		widget.NewSeparator(), company, form, h.companyOut, h.suggestions)
}

func (h *toleranceHelper) format(d decimal.Decimal) string {
	return engine.FormatValue(d, h.decimals, h.unit)
}

// recompute refreshes both suggestions and their "Use" buttons.
func (h *toleranceHelper) recompute() {
	h.suggestions.RemoveAll()
	h.gambleOut.SetText("")
	if h.gambleX.Text != "" {
		x, err := analysis.ParsePositive("X", h.gambleX.Text)
		if err == nil {
			var R decimal.Decimal
			R, err = analysis.ToleranceFromGamble(x)
			if err == nil {
				xf := x.InexactFloat64()
				exact := decimal.NewFromFloat(math.Round(analysis.ExactGambleTolerance(xf)))
				h.gambleOut.SetText(fmt.Sprintf("R ≈ %s. (At exactly %s the gamble is worth nothing to you.)",
					h.format(R), h.format(exact)))
				h.addUse(R, "the 50-50 gamble")
			}
		}
		if err != nil {
			h.gambleOut.SetText(err.Error())
		}
	}
	h.companyOut.SetText("")
	if h.sales.Text+h.income.Text+h.equity.Text != "" {
		est, err := analysis.ToleranceFromCompany(analysis.CompanyFigures{NetSales: h.sales.Text, NetIncome: h.income.Text, Equity: h.equity.Text})
		if err != nil {
			h.companyOut.SetText(err.Error())
		}
		for _, e := range est {
			h.addUse(e.R, e.Basis)
		}
	}
}

func (h *toleranceHelper) addUse(R decimal.Decimal, basis string) {
	R = R.Round(int32(max(h.decimals, 0)))
	h.suggestions.Add(widget.NewButton(fmt.Sprintf("Use R = %s (%s)", h.format(R), basis), func() {
		h.use(R.String())
		if h.dlg != nil {
			h.dlg.Hide()
		}
	}))
}
