package assets

//go:generate cp ../FyneApp.toml FyneApp.toml
//go:generate rsvg-convert -w 512 -h 512 icon.svg -o icon.png

import (
	_ "embed"
	"fmt"

	"github.com/BurntSushi/toml"
)

// fyneAppTOML is a copy of the top-level FyneApp.toml (go:embed cannot reach a
// parent folder); a test keeps the two equal.
//
//go:embed FyneApp.toml
var fyneAppTOML []byte

//go:embed icon.png
var iconPNG []byte

// AppInfo is the application's identity from FyneApp.toml's [Details] table.
type AppInfo struct {
	ID      string
	Name    string
	Version string
	Build   int
	Icon    string // path of the icon relative to the module root
}

// App parses the embedded FyneApp.toml. It fails only when the file was edited
// into something the packaging tool would reject too.
func App() (AppInfo, error) {
	var doc struct {
		Details AppInfo
	}
	if _, err := toml.Decode(string(fyneAppTOML), &doc); err != nil {
		return AppInfo{}, fmt.Errorf("assets/FyneApp.toml: %w", err)
	}
	d := doc.Details
	switch {
	case d.Name == "":
		return d, fmt.Errorf("assets/FyneApp.toml: [Details] Name is empty")
	case d.ID == "":
		return d, fmt.Errorf("assets/FyneApp.toml: [Details] ID is empty")
	case d.Version == "":
		return d, fmt.Errorf("assets/FyneApp.toml: [Details] Version is empty")
	}
	return d, nil
}

// AppTOML returns the embedded copy of FyneApp.toml.
func AppTOML() []byte { return fyneAppTOML }

// Icon returns the application icon, a 512×512 PNG rendered from icon.svg.
func Icon() []byte { return iconPNG }
