package main

import (
	"os"
	"path/filepath"
	"sort"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// Opening sentences of each licence as published in the SPDX licence list
// (spdx.org/licenses); values from memory, each also checked by the module
// cache test below against the real files.
func TestClassify(t *testing.T) {
	tests := []struct {
		name, text, want string
	}{
		{"MIT", "Permission is hereby granted, free of charge, to any person obtaining a copy of this software", "MIT"},
		{"BSD-3-Clause", "Redistribution and use in source and binary forms, with or without modification, are permitted ... Neither the name of the copyright holder nor the names of its contributors may be used", "BSD-3-Clause"},
		{"BSD-2-Clause", "Redistribution and use in source and binary forms, with or without modification, are permitted provided that the following conditions are met: 1. ... 2. ...", "BSD-2-Clause"},
		{"Apache-2.0", "Apache License\n   Version 2.0, January 2004\n http://www.apache.org/licenses/", "Apache-2.0"},
		{"ISC", "Permission to use, copy, modify, and/or distribute this software for any purpose with or without fee is hereby granted", "ISC"},
		{"OFL-1.1 reuses MIT's first words", "SIL OPEN FONT LICENSE Version 1.1 ... Permission is hereby granted, free of charge, to any person obtaining a copy of the Font Software", "OFL-1.1"},
		{"Zlib", "This software is provided 'as-is', without any express or implied warranty. ... 1. The origin of this software must not be misrepresented", "Zlib"},
		{"Unlicense", "This is free and unencumbered software released into the public domain.", "Unlicense"},
		{"dual, line breaks anywhere", "Permission is hereby granted,\nfree of charge ...\n\nRedistribution and use in source and\nbinary forms ... Neither the name", "MIT, BSD-3-Clause"},
		{"unknown", "All rights reserved. Ask us.", "see text"},
		{"choice by SPDX expression", "provided under the terms of the UNLICENSE or the BSD license ... SPDX-License-Identifier: Unlicense OR BSD-3-Clause ... Redistribution and use in source and binary forms ... Neither the name", "Unlicense OR BSD-3-Clause"},
		{"choice in words", "subject to your choice of exactly one of the following two licenses: The FreeType License ... The GNU General Public License (GPL), version 2 or later", "FTL OR GPL-2.0-or-later"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			assert.Equal(t, tt.want, classify(tt.text))
		})
	}
}

func TestModuleLicence(t *testing.T) {
	tests := []struct {
		name  string
		exprs []string
		want  string
	}{
		{"one file", []string{"MIT"}, "MIT"},
		{"choice notice beside full texts", []string{"FTL OR GPL-2.0-or-later", "FTL", "GPL-2.0-or-later"}, "FTL OR GPL-2.0-or-later"},
		{"choice plus a bundled part", []string{"Unlicense OR BSD-3-Clause", "MIT"}, "Unlicense OR BSD-3-Clause; MIT"},
		{"code and fonts", []string{"BSD-3-Clause", "OFL-1.1", "Bitstream-Vera", "OFL-1.1"}, "BSD-3-Clause; OFL-1.1; Bitstream-Vera"},
		{"pointer file", []string{"CC-BY-4.0", "see text"}, "CC-BY-4.0"},
		{"nothing recognised", []string{"see text"}, "see text"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			assert.Equal(t, tt.want, moduleLicence(tt.exprs))
		})
	}
}

func TestLicenceFileNames(t *testing.T) {
	for name, want := range map[string]bool{
		"LICENSE": true, "LICENSE.md": true, "LICENSE.txt": true, "COPYING": true, "COPYING.txt": true,
		"LICENCE": true, "UNLICENSE": true, "LICENSE-SIL": true, "LICENSE_Inter.txt": true,
		"license.go": false,
		"README.md":  false, "licensed.go": false, "main.go": false,
	} {
		assert.Equal(t, want, isLicenceFile(name), name)
	}
}

// The committed ui/about_licences_gen.go must match what the generator makes
// now; when a dependency changes, run `go generate ./ui`.
func TestGeneratedFileIsCurrent(t *testing.T) {
	if testing.Short() {
		t.Skip("lists the module graph for three systems; skipped with -short")
	}
	root, err := filepath.Abs("../..")
	require.NoError(t, err)
	mods, err := shippedModules(root, []string{"linux", "windows", "darwin"}, []string{"./..."})
	require.NoError(t, err)
	src, err := render("ui", mods)
	require.NoError(t, err)
	committed, err := os.ReadFile(filepath.Join(root, "ui", "about_licences_gen.go"))
	require.NoError(t, err)
	if string(src) != string(committed) {
		t.Fatalf("ui/about_licences_gen.go is stale: run `go generate ./ui`\n%s", moduleDiff(string(committed), string(src)))
	}
	assert.Less(t, len(src), 250*1024)
	for _, m := range mods {
		for _, f := range m.Files {
			id := classify(f.Text)
			// Every licence text of a shipped module is recognised, except a
			// pointer file that names a licence given in full in a sibling file.
			if id == "see text" {
				assert.True(t, len(m.Files) > 1 && len(f.Text) < 2000, "%s: %s is not a licence this tool recognises", m.Path, f.Name)
			}
		}
		assert.False(t, strings.Contains(m.Path, "testify"), "test-only module %s listed as shipped", m.Path)
	}
}

// moduleDiff names the module lines that differ between two generated files,
// so a stale file reports "+ gonum.org/v1/plot ..." rather than a page of text.
func moduleDiff(old, new string) string {
	lines := func(src string) map[string]bool {
		m := map[string]bool{}
		for _, l := range strings.Split(src, "\n") {
			if l = strings.TrimSpace(l); strings.HasPrefix(l, "{Path:") {
				l, _, _ = strings.Cut(l, ", Texts:") // indexes shift when any text is added
				m[l] = true
			}
		}
		return m
	}
	o, n := lines(old), lines(new)
	var b strings.Builder
	for l := range n {
		if !o[l] {
			b.WriteString("+ " + l + "\n")
		}
	}
	for l := range o {
		if !n[l] {
			b.WriteString("- " + l + "\n")
		}
	}
	if b.Len() == 0 {
		return "(same modules; licence texts changed)"
	}
	diff := strings.Split(strings.TrimSpace(b.String()), "\n")
	sort.Strings(diff)
	return strings.Join(diff, "\n")
}
