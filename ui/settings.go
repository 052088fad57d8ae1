package ui

import (
	"fmt"
	"path/filepath"
	"slices"
	"strings"
	"unicode/utf8"

	"fyne.io/fyne/v2"

	"github.com/ramify-app/ramify/engine"
)

// Preference keys, as stored by Fyne's preferences API.
const (
	PrefTheme           = "theme"
	PrefRecentFiles     = "recentFiles"
	PrefDefaultCurrency = "defaultCurrency"
	PrefDefaultDecimals = "defaultDecimals"
	PrefAutosaveSeconds = "autosaveSeconds"
)

// CanvasTheme is how the canvas draws the tree.
type CanvasTheme string

const (
	ThemeLight CanvasTheme = "light"
	ThemeDark  CanvasTheme = "dark"
	ThemePrint CanvasTheme = "print" // black on white, for paper and slides
)

// CanvasThemes lists the themes in the order the Preferences dialog offers them.
var CanvasThemes = []CanvasTheme{ThemeLight, ThemeDark, ThemePrint}

// Limits and defaults of the user's preferences.
const (
	MaxRecentFiles         = 10
	DefaultDecimals        = 2  // as engine.Parse assumes when a file gives none
	DefaultAutosaveSeconds = 30 // the editor's own fallback in StartAutosave
	MinAutosaveSeconds     = 10
	MaxAutosaveSeconds     = 3600
	MaxDecimals            = 12 // engine.Parse accepts 0 to 12
	MaxCurrencyLength      = 12
)

// Settings reads and writes the user's preferences. Values that are missing or
// out of range read as their defaults, so a damaged preferences file never
// stops the editor.
type Settings struct {
	prefs fyne.Preferences
}

// NewSettings wraps a preferences store, such as fyne.CurrentApp().Preferences().
func NewSettings(p fyne.Preferences) Settings { return Settings{p} }

// AppSettings returns the running application's settings.
func AppSettings() Settings { return Settings{fyne.CurrentApp().Preferences()} }

// OnChange calls f after any preference changes, on the event goroutine.
func (s Settings) OnChange(f func()) { s.prefs.AddChangeListener(f) }

// Theme is the canvas theme; light when unset or unknown.
func (s Settings) Theme() CanvasTheme {
	t := CanvasTheme(s.prefs.StringWithFallback(PrefTheme, string(ThemeLight)))
	if !slices.Contains(CanvasThemes, t) {
		return ThemeLight
	}
	return t
}

func (s Settings) SetTheme(t CanvasTheme) error {
	if !slices.Contains(CanvasThemes, t) {
		return fmt.Errorf("theme: expected light, dark or print, found %q", t)
	}
	s.prefs.SetString(PrefTheme, string(t))
	return nil
}

// RecentFiles lists recently opened project files, most recent first.
func (s Settings) RecentFiles() []string {
	var out []string
	for _, f := range s.prefs.StringList(PrefRecentFiles) {
		if f != "" && !slices.Contains(out, f) {
			out = append(out, f)
		}
	}
	if len(out) > MaxRecentFiles {
		out = out[:MaxRecentFiles]
	}
	return out
}

// AddRecentFile puts path first in the recent files, as an absolute path, and
// drops the oldest beyond MaxRecentFiles.
func (s Settings) AddRecentFile(path string) {
	if path == "" {
		return
	}
	if abs, err := filepath.Abs(path); err == nil {
		path = abs
	}
	list := []string{path}
	for _, f := range s.RecentFiles() {
		if f != path && len(list) < MaxRecentFiles {
			list = append(list, f)
		}
	}
	s.prefs.SetStringList(PrefRecentFiles, list)
}

// RemoveRecentFile forgets one file, for example one that no longer exists.
func (s Settings) RemoveRecentFile(path string) {
	list := slices.DeleteFunc(s.RecentFiles(), func(f string) bool { return f == path })
	s.prefs.SetStringList(PrefRecentFiles, list)
}

func (s Settings) ClearRecentFiles() { s.prefs.RemoveValue(PrefRecentFiles) }

// DefaultCurrency is the unit label given to new projects ("" for none).
func (s Settings) DefaultCurrency() string {
	c := s.prefs.String(PrefDefaultCurrency)
	if checkCurrency(c) != nil {
		return ""
	}
	return c
}

func (s Settings) SetDefaultCurrency(c string) error {
	c = strings.TrimSpace(c)
	if err := checkCurrency(c); err != nil {
		return err
	}
	s.prefs.SetString(PrefDefaultCurrency, c)
	return nil
}

func checkCurrency(c string) error {
	if utf8.RuneCountInString(c) > MaxCurrencyLength {
		return fmt.Errorf("currency: at most %d characters, found %d", MaxCurrencyLength, utf8.RuneCountInString(c))
	}
	if strings.ContainsAny(c, "\n\r\t") {
		return fmt.Errorf("currency: must be on one line")
	}
	return nil
}

// DefaultDecimals is the number of decimals shown for new projects.
func (s Settings) DefaultDecimals() int {
	d := s.prefs.IntWithFallback(PrefDefaultDecimals, DefaultDecimals)
	if d < 0 || d > MaxDecimals {
		return DefaultDecimals
	}
	return d
}

func (s Settings) SetDefaultDecimals(d int) error {
	if d < 0 || d > MaxDecimals {
		return fmt.Errorf("decimals: expected 0 to %d, found %d", MaxDecimals, d)
	}
	s.prefs.SetInt(PrefDefaultDecimals, d)
	return nil
}

// AutosaveSeconds is the autosave interval; 0 means autosave is off.
func (s Settings) AutosaveSeconds() int {
	n := s.prefs.IntWithFallback(PrefAutosaveSeconds, DefaultAutosaveSeconds)
	if checkAutosave(n) != nil {
		return DefaultAutosaveSeconds
	}
	return n
}

func (s Settings) SetAutosaveSeconds(n int) error {
	if err := checkAutosave(n); err != nil {
		return err
	}
	s.prefs.SetInt(PrefAutosaveSeconds, n)
	return nil
}

func checkAutosave(n int) error {
	if n != 0 && (n < MinAutosaveSeconds || n > MaxAutosaveSeconds) {
		return fmt.Errorf("autosave: expected 0 (off) or %d to %d seconds, found %d", MinAutosaveSeconds, MaxAutosaveSeconds, n)
	}
	return nil
}

// ApplyDefaults gives a new project the user's default currency and decimals.
func (s Settings) ApplyDefaults(p *engine.Project) {
	p.Currency = s.DefaultCurrency()
	p.Decimals = s.DefaultDecimals()
}
