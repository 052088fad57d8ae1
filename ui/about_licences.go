package ui

//go:generate go run github.com/ramify-app/ramify/cmd/genlicenses -o about_licences_gen.go -pkg ui

import "strings"

// shippedModule is one module linked into Ramify, as listed by cmd/genlicenses
// in about_licences_gen.go.
type shippedModule struct {
	Path    string   // module path; "go" for the Go standard library and runtime
	Version string   // module version
	Licence string   // SPDX identifiers found in its licence files, comma-separated
	Files   []string // licence files, relative to the module root
	Texts   []int    // index into licenceTexts, one per file
}

// Title is the line the About dialog lists the module under.
func (m shippedModule) Title() string {
	name := m.Path
	if m.Path == "go" {
		name = "Go standard library"
	}
	return name + " " + m.Version
}

// Text returns the module's licence files, each under its file name.
func (m shippedModule) Text() string {
	var b strings.Builder
	for i, f := range m.Files {
		if i > 0 {
			b.WriteString("\n")
		}
		if len(m.Files) > 1 {
			b.WriteString("── " + f + " ──\n\n")
		}
		b.WriteString(licenceTexts[m.Texts[i]])
	}
	return b.String()
}
