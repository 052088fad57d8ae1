package assets

import (
	"bytes"
	"image/png"
	"os"
	"testing"

	"github.com/BurntSushi/toml"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// The embedded copy must be byte for byte the file the packaging tool reads.
func TestAppTOMLCopyMatchesTopLevel(t *testing.T) {
	top, err := os.ReadFile("../FyneApp.toml")
	require.NoError(t, err)
	assert.Equal(t, string(top), string(AppTOML()),
		"assets/FyneApp.toml differs from ../FyneApp.toml: run `go generate ./assets`")
}

func TestAppInfo(t *testing.T) {
	// Parse the top-level file independently of App, with the raw TOML map.
	var raw map[string]map[string]any
	_, err := toml.DecodeFile("../FyneApp.toml", &raw)
	require.NoError(t, err)
	details := raw["Details"]
	require.NotNil(t, details, "FyneApp.toml has no [Details] table")

	info, err := App()
	require.NoError(t, err)
	tests := []struct {
		field string
		got   any
		want  any
	}{
		{"Name", info.Name, details["Name"]},
		{"ID", info.ID, details["ID"]},
		{"Version", info.Version, details["Version"]},
		{"Build", int64(info.Build), details["Build"]},
		{"Icon", info.Icon, details["Icon"]},
	}
	for _, tt := range tests {
		t.Run(tt.field, func(t *testing.T) {
			assert.Equal(t, tt.want, tt.got)
		})
	}
	// Reverse-DNS application ID: at least three dot-separated parts.
	assert.Regexp(t, `^[a-z][a-z0-9]*(\.[a-z][a-z0-9]*){2,}$`, info.ID)
	// Semantic version x.y.z, as the packaging tool accepts.
	assert.Regexp(t, `^\d+\.\d+\.\d+$`, info.Version)
	assert.Positive(t, info.Build)
}

func TestIconIs512PNGUnder100KB(t *testing.T) {
	data := Icon()
	assert.Less(t, len(data), 100*1024)
	cfg, err := png.DecodeConfig(bytes.NewReader(data))
	require.NoError(t, err)
	assert.Equal(t, 512, cfg.Width)
	assert.Equal(t, 512, cfg.Height)
	onDisk, err := os.ReadFile("icon.png")
	require.NoError(t, err)
	assert.Equal(t, onDisk, data)
	_, err = os.Stat("icon.svg")
	assert.NoError(t, err, "the icon's vector source assets/icon.svg is missing")
}
