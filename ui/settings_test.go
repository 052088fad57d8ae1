package ui

import (
	"path/filepath"
	"strconv"
	"testing"

	"fyne.io/fyne/v2/test"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/ramify-app/ramify/engine"
)

func newTestSettings(t *testing.T) Settings {
	a := test.NewTempApp(t)
	return NewSettings(a.Preferences())
}

func TestSettingsDefaults(t *testing.T) {
	s := newTestSettings(t)
	assert.Equal(t, ThemeLight, s.Theme())
	assert.Empty(t, s.RecentFiles())
	assert.Equal(t, "", s.DefaultCurrency())
	// A file without "decimals" opens with engine.Parse's default; new projects start the same.
	p, err := engine.Parse(minimalProject(""), "minimal.ramify.json")
	require.NoError(t, err)
	assert.Equal(t, p.Decimals, s.DefaultDecimals())
	assert.Equal(t, DefaultAutosaveSeconds, s.AutosaveSeconds())
}

func minimalProject(extra string) []byte {
	return []byte(`{"format":"ramify","version":1,` + extra + `"root":{"kind":"end","name":"Only","payoff":"1"}}`)
}

// The decimals the dialog accepts are exactly those engine.Parse accepts.
func TestDecimalsRangeMatchesEngine(t *testing.T) {
	s := newTestSettings(t)
	for d := -1; d <= MaxDecimals+1; d++ {
		_, parseErr := engine.Parse(minimalProject(`"decimals":`+strconv.Itoa(d)+`,`), "d.ramify.json")
		setErr := s.SetDefaultDecimals(d)
		assert.Equal(t, parseErr == nil, setErr == nil, "decimals %d: engine %v, settings %v", d, parseErr, setErr)
	}
}

func TestSettingsSetters(t *testing.T) {
	tests := []struct {
		name    string
		set     func(Settings) error
		get     func(Settings) any
		want    any
		wantErr string
	}{
		{"dark theme", func(s Settings) error { return s.SetTheme(ThemeDark) }, func(s Settings) any { return s.Theme() }, ThemeDark, ""},
		{"print theme", func(s Settings) error { return s.SetTheme(ThemePrint) }, func(s Settings) any { return s.Theme() }, ThemePrint, ""},
		{"unknown theme", func(s Settings) error { return s.SetTheme("sepia") }, func(s Settings) any { return s.Theme() }, ThemeLight, "theme"},
		{"currency trimmed", func(s Settings) error { return s.SetDefaultCurrency("  EUR ") }, func(s Settings) any { return s.DefaultCurrency() }, "EUR", ""},
		{"currency too long", func(s Settings) error { return s.SetDefaultCurrency("thirteen-char") }, func(s Settings) any { return s.DefaultCurrency() }, "", "currency"},
		{"decimals 0", func(s Settings) error { return s.SetDefaultDecimals(0) }, func(s Settings) any { return s.DefaultDecimals() }, 0, ""},
		{"decimals 12", func(s Settings) error { return s.SetDefaultDecimals(12) }, func(s Settings) any { return s.DefaultDecimals() }, 12, ""},
		{"decimals 13", func(s Settings) error { return s.SetDefaultDecimals(13) }, func(s Settings) any { return s.DefaultDecimals() }, DefaultDecimals, "decimals"},
		{"decimals -1", func(s Settings) error { return s.SetDefaultDecimals(-1) }, func(s Settings) any { return s.DefaultDecimals() }, DefaultDecimals, "decimals"},
		{"autosave off", func(s Settings) error { return s.SetAutosaveSeconds(0) }, func(s Settings) any { return s.AutosaveSeconds() }, 0, ""},
		{"autosave 30 s", func(s Settings) error { return s.SetAutosaveSeconds(30) }, func(s Settings) any { return s.AutosaveSeconds() }, 30, ""},
		{"autosave 5 s", func(s Settings) error { return s.SetAutosaveSeconds(5) }, func(s Settings) any { return s.AutosaveSeconds() }, DefaultAutosaveSeconds, "autosave"},
		{"autosave 2 h", func(s Settings) error { return s.SetAutosaveSeconds(7200) }, func(s Settings) any { return s.AutosaveSeconds() }, DefaultAutosaveSeconds, "autosave"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			s := newTestSettings(t)
			err := tt.set(s)
			if tt.wantErr != "" {
				require.Error(t, err)
				assert.Contains(t, err.Error(), tt.wantErr)
			} else {
				require.NoError(t, err)
			}
			assert.Equal(t, tt.want, tt.get(s))
		})
	}
}

// Values written by hand or by an older version read as defaults, never as errors.
func TestSettingsDamagedValuesReadAsDefaults(t *testing.T) {
	s := newTestSettings(t)
	s.prefs.SetString(PrefTheme, "neon")
	s.prefs.SetInt(PrefDefaultDecimals, 99)
	s.prefs.SetInt(PrefAutosaveSeconds, -4)
	s.prefs.SetString(PrefDefaultCurrency, "two\nlines")
	assert.Equal(t, ThemeLight, s.Theme())
	assert.Equal(t, DefaultDecimals, s.DefaultDecimals())
	assert.Equal(t, DefaultAutosaveSeconds, s.AutosaveSeconds())
	assert.Equal(t, "", s.DefaultCurrency())
}

func TestRecentFiles(t *testing.T) {
	s := newTestSettings(t)
	dir := t.TempDir()
	path := func(i int) string { return filepath.Join(dir, "p"+strconv.Itoa(i)+".ramify.json") }
	for i := 0; i < MaxRecentFiles+3; i++ {
		s.AddRecentFile(path(i))
	}
	got := s.RecentFiles()
	require.Len(t, got, MaxRecentFiles)
	assert.Equal(t, path(MaxRecentFiles+2), got[0], "most recent first")
	assert.Equal(t, path(3), got[MaxRecentFiles-1], "oldest beyond the limit dropped")

	s.AddRecentFile(path(5)) // reopened: moves to the front, no duplicate
	got = s.RecentFiles()
	assert.Equal(t, path(5), got[0])
	assert.Len(t, got, MaxRecentFiles)
	count := 0
	for _, f := range got {
		if f == path(5) {
			count++
		}
	}
	assert.Equal(t, 1, count)

	s.RemoveRecentFile(path(5))
	assert.NotContains(t, s.RecentFiles(), path(5))
	assert.Len(t, s.RecentFiles(), MaxRecentFiles-1)

	s.ClearRecentFiles()
	assert.Empty(t, s.RecentFiles())
}

func TestRecentFilesStoredAbsolute(t *testing.T) {
	s := newTestSettings(t)
	s.AddRecentFile("relative.ramify.json")
	got := s.RecentFiles()
	require.Len(t, got, 1)
	assert.True(t, filepath.IsAbs(got[0]), got[0])
	assert.Equal(t, "relative.ramify.json", filepath.Base(got[0]))
}

func TestApplyDefaults(t *testing.T) {
	s := newTestSettings(t)
	require.NoError(t, s.SetDefaultCurrency("days"))
	require.NoError(t, s.SetDefaultDecimals(1))
	p := &engine.Project{Currency: "EUR", Decimals: 2}
	s.ApplyDefaults(p)
	assert.Equal(t, "days", p.Currency)
	assert.Equal(t, 1, p.Decimals)
}

func TestSettingsFormSave(t *testing.T) {
	tests := []struct {
		name     string
		edit     func(f *settingsForm)
		wantErr  string
		check    func(t *testing.T, s Settings)
		unchange bool
	}{
		{
			name: "all fields",
			edit: func(f *settingsForm) {
				f.theme.SetSelected(themeLabels[ThemePrint])
				f.currency.SetText(" USD ")
				f.decimals.SetSelected("0")
				f.autosave.SetText("300")
			},
			check: func(t *testing.T, s Settings) {
				assert.Equal(t, ThemePrint, s.Theme())
				assert.Equal(t, "USD", s.DefaultCurrency())
				assert.Equal(t, 0, s.DefaultDecimals())
				assert.Equal(t, 300, s.AutosaveSeconds())
				assert.Len(t, s.RecentFiles(), 1)
			},
		},
		{
			name:    "bad autosave saves nothing",
			edit:    func(f *settingsForm) { f.theme.SetSelected(themeLabels[ThemeDark]); f.autosave.SetText("soon") },
			wantErr: "autosave",
			check: func(t *testing.T, s Settings) {
				assert.Equal(t, ThemeLight, s.Theme())
				assert.Equal(t, DefaultAutosaveSeconds, s.AutosaveSeconds())
			},
		},
		{
			name: "forget recent files",
			edit: func(f *settingsForm) { test.Tap(f.clear) },
			check: func(t *testing.T, s Settings) {
				assert.Empty(t, s.RecentFiles())
			},
		},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			s := newTestSettings(t)
			s.AddRecentFile(filepath.Join(t.TempDir(), "a.ramify.json"))
			f := newSettingsForm(s)
			assert.Equal(t, "1 recent file", f.recent.Text)
			tt.edit(f)
			err := f.save()
			if tt.wantErr != "" {
				require.Error(t, err)
				assert.Contains(t, err.Error(), tt.wantErr)
			} else {
				require.NoError(t, err)
			}
			tt.check(t, s)
		})
	}
}

func TestSettingsFormValidatesAsYouType(t *testing.T) {
	s := newTestSettings(t)
	f := newSettingsForm(s)
	assert.NoError(t, f.autosave.Validator("0"))
	assert.NoError(t, f.autosave.Validator("60"))
	assert.Error(t, f.autosave.Validator("3"))
	assert.Error(t, f.autosave.Validator("1.5"))
	assert.NoError(t, f.currency.Validator("€"))
	assert.Error(t, f.currency.Validator("far too long a unit"))
}
