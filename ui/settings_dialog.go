package ui

import (
	"errors"
	"fmt"
	"strconv"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/dialog"
	"fyne.io/fyne/v2/widget"
)

func init() {
	RegisterMenu(MenuEntry{Menu: "File", Label: "Preferences…", Order: 900, Action: func(h Host) {
		ShowSettings(h.Window(), AppSettings())
	}})
}

var themeLabels = map[CanvasTheme]string{
	ThemeLight: "Light",
	ThemeDark:  "Dark",
	ThemePrint: "Print (black on white)",
}

// settingsForm holds the Preferences dialog's fields; save writes them back.
type settingsForm struct {
	s         Settings
	theme     *widget.Select
	currency  *widget.Entry
	decimals  *widget.Select
	autosave  *widget.Entry
	recent    *widget.Label
	clear     *widget.Button
	clearWant bool
}

func newSettingsForm(s Settings) *settingsForm {
	f := &settingsForm{s: s}
	var themes []string
	for _, t := range CanvasThemes {
		themes = append(themes, themeLabels[t])
	}
	f.theme = widget.NewSelect(themes, nil)
	f.theme.SetSelected(themeLabels[s.Theme()])

	f.currency = widget.NewEntry()
	f.currency.SetPlaceHolder("none, or e.g. EUR, $, days")
	f.currency.SetText(s.DefaultCurrency())
	f.currency.Validator = func(t string) error { return checkCurrency(strings.TrimSpace(t)) }

	var decimals []string
	for d := 0; d <= MaxDecimals; d++ {
		decimals = append(decimals, strconv.Itoa(d))
	}
	f.decimals = widget.NewSelect(decimals, nil)
	f.decimals.SetSelected(strconv.Itoa(s.DefaultDecimals()))

	f.autosave = widget.NewEntry()
	f.autosave.SetText(strconv.Itoa(s.AutosaveSeconds()))
	f.autosave.Validator = func(t string) error {
		_, err := parseAutosave(t)
		return err
	}

	f.recent = widget.NewLabel("")
	f.clear = widget.NewButton("Forget recent files", func() {
		f.clearWant = true
		f.showRecentCount()
	})
	f.showRecentCount()
	return f
}

func (f *settingsForm) showRecentCount() {
	n := len(f.s.RecentFiles())
	if f.clearWant {
		n = 0
	}
	switch n {
	case 0:
		f.recent.SetText("No recent files")
		f.clear.Disable()
	case 1:
		f.recent.SetText("1 recent file")
	default:
		f.recent.SetText(fmt.Sprintf("%d recent files", n))
	}
}

func parseAutosave(t string) (int, error) {
	n, err := strconv.Atoi(strings.TrimSpace(t))
	if err != nil {
		return 0, fmt.Errorf("autosave: expected whole seconds, found %q", t)
	}
	return n, checkAutosave(n)
}

func (f *settingsForm) items() []*widget.FormItem {
	return []*widget.FormItem{
		{Text: "Canvas theme", Widget: f.theme},
		{Text: "Currency for new projects", Widget: f.currency, HintText: "the unit shown beside values"},
		{Text: "Decimals for new projects", Widget: f.decimals},
		{Text: "Autosave every", Widget: f.autosave, HintText: "seconds; 0 turns autosave off"},
		{Text: "Recent files", Widget: container.NewHBox(f.recent, f.clear)},
	}
}

// save validates every field and writes them all, or none when one is wrong.
func (f *settingsForm) save() error {
	var theme CanvasTheme
	for t, label := range themeLabels {
		if label == f.theme.Selected {
			theme = t
		}
	}
	if theme == "" {
		return errors.New("theme: choose light, dark or print")
	}
	currency := strings.TrimSpace(f.currency.Text)
	if err := checkCurrency(currency); err != nil {
		return err
	}
	decimals, err := strconv.Atoi(f.decimals.Selected)
	if err != nil {
		return fmt.Errorf("decimals: choose 0 to %d", MaxDecimals)
	}
	autosave, err := parseAutosave(f.autosave.Text)
	if err != nil {
		return err
	}
	// Checked above, so the setters cannot fail half-way.
	for _, err := range []error{
		f.s.SetTheme(theme),
		f.s.SetDefaultCurrency(currency),
		f.s.SetDefaultDecimals(decimals),
		f.s.SetAutosaveSeconds(autosave),
	} {
		if err != nil {
			return err
		}
	}
	if f.clearWant {
		f.s.ClearRecentFiles()
	}
	return nil
}

// ShowSettings opens the Preferences dialog over w.
func ShowSettings(w fyne.Window, s Settings) {
	f := newSettingsForm(s)
	d := dialog.NewForm("Preferences", "Save", "Cancel", f.items(), func(ok bool) {
		if !ok {
			return
		}
		if err := f.save(); err != nil {
			dialog.ShowError(fmt.Errorf("Preferences not saved: %w", err), w)
		}
	}, w)
	d.Resize(fyne.NewSize(520, d.MinSize().Height))
	d.Show()
}
