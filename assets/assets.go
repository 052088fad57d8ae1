// Package assets embeds the demo projects and the application icon.
package assets

import (
	"embed"
	"io/fs"
	"sort"
	"strings"
)

//go:embed demos/*.ramify.json
var demos embed.FS

// Demo is one bundled example project.
type Demo struct {
	Name string // file name, e.g. chiller-cover.ramify.json
	Data []byte
}

// Demos lists the bundled demo projects in name order.
func Demos() []Demo {
	entries, _ := fs.ReadDir(demos, "demos") // embedded: cannot fail
	var out []Demo
	for _, e := range entries {
		data, _ := demos.ReadFile("demos/" + e.Name())
		out = append(out, Demo{Name: e.Name(), Data: data})
	}
	sort.Slice(out, func(i, j int) bool { return out[i].Name < out[j].Name })
	return out
}

// DemoByName returns a demo by file name (with or without the .ramify.json suffix).
func DemoByName(name string) (Demo, bool) {
	for _, d := range Demos() {
		if d.Name == name || strings.TrimSuffix(d.Name, ".ramify.json") == name {
			return d, true
		}
	}
	return Demo{}, false
}
