package ui

import (
	"fmt"
	"os"
	"strings"
	"testing"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/test"
	"fyne.io/fyne/v2/widget"
	"github.com/BurntSushi/toml"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/ramify-app/ramify/engine"
)

// texts collects the text of every label reachable from o, tabs included.
func texts(o fyne.CanvasObject) []string {
	var out []string
	switch v := o.(type) {
	case *widget.Label:
		out = append(out, v.Text)
	case *fyne.Container:
		for _, c := range v.Objects {
			out = append(out, texts(c)...)
		}
	case *container.AppTabs:
		for _, it := range v.Items {
			out = append(out, texts(it.Content)...)
		}
	case *container.Split:
		out = append(out, texts(v.Leading)...)
		out = append(out, texts(v.Trailing)...)
	case *container.Scroll:
		out = append(out, texts(v.Content)...)
	}
	return out
}

func TestMetadataIsFyneAppTOML(t *testing.T) {
	var doc struct {
		Details struct {
			ID, Name, Version string
			Build             int
		}
	}
	_, err := toml.DecodeFile("../FyneApp.toml", &doc)
	require.NoError(t, err)

	m, err := Metadata()
	require.NoError(t, err)
	assert.Equal(t, doc.Details.ID, m.ID)
	assert.Equal(t, doc.Details.Name, m.Name)
	assert.Equal(t, doc.Details.Version, m.Version)
	assert.Equal(t, doc.Details.Build, m.Build)
	require.NotNil(t, m.Icon)
	assert.NotEmpty(t, m.Icon.Content())
	assert.Equal(t, fmt.Sprintf("Ramify %s (build %d)", doc.Details.Version, doc.Details.Build), VersionLine(m))
}

func TestAboutShowsVersionDescriptionCautionAndLicences(t *testing.T) {
	test.NewTempApp(t)
	tabs, err := aboutContent()
	require.NoError(t, err)
	w := test.NewTempWindow(t, tabs)
	w.Resize(fyne.NewSize(760, 560))

	m, err := Metadata()
	require.NoError(t, err)
	all := strings.Join(texts(tabs), "\n")
	tests := []struct {
		name, want string
	}{
		{"version", VersionLine(m)},
		{"description", Description},
		{"caution", engine.Caution},
		{"application ID", m.ID},
		{"first licence, selected on opening", shippedModules[0].Text()},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			assert.Contains(t, all, tt.want)
		})
	}
	require.Len(t, tabs.Items, 2)
	assert.Equal(t, "Licences", tabs.Items[1].Text)
}

func TestLicenceListSelectShowsThatModule(t *testing.T) {
	test.NewTempApp(t)
	view := licencesView()
	var list *widget.List
	var find func(o fyne.CanvasObject)
	find = func(o fyne.CanvasObject) {
		switch v := o.(type) {
		case *widget.List:
			list = v
		case *fyne.Container:
			for _, c := range v.Objects {
				find(c)
			}
		case *container.Split:
			find(v.Leading)
			find(v.Trailing)
		}
	}
	find(view)
	require.NotNil(t, list)
	for _, i := range []int{len(shippedModules) - 1, 0} {
		list.Select(i)
		all := strings.Join(texts(view), "\n")
		assert.Contains(t, all, shippedModules[i].Text())
		assert.Contains(t, all, shippedModules[i].Licence)
	}
}

func TestShippedModulesCarryLicences(t *testing.T) {
	require.NotEmpty(t, shippedModules)
	var paths []string
	for _, m := range shippedModules {
		paths = append(paths, m.Path)
		t.Run(m.Path, func(t *testing.T) {
			assert.NotEmpty(t, m.Version)
			assert.NotEmpty(t, m.Licence)
			require.Len(t, m.Texts, len(m.Files))
			for _, i := range m.Texts {
				require.Less(t, i, len(licenceTexts))
				assert.NotEmpty(t, strings.TrimSpace(licenceTexts[i]))
			}
		})
	}
	// The Go runtime and Fyne are linked into every build.
	assert.Contains(t, paths, "go")
	assert.Contains(t, paths, "fyne.io/fyne/v2")
	assert.IsIncreasing(t, paths)

	info, err := os.Stat("about_licences_gen.go")
	require.NoError(t, err)
	assert.Less(t, info.Size(), int64(250*1024), "generated licences should stay under 250 KB")
}

func TestMenusRegistered(t *testing.T) {
	want := map[string]string{"About Ramify": "Help", "Preferences…": "File"}
	found := map[string]string{}
	for _, e := range menuEntries {
		if _, ok := want[e.Label]; ok {
			found[e.Label] = e.Menu
			assert.NotNil(t, e.Action, e.Label)
		}
	}
	assert.Equal(t, want, found)
}
