package main

import (
	"os"
	"path/filepath"
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
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			assert.Equal(t, tt.want, classify(tt.text))
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
	if !assert.Equal(t, string(src), string(committed), "ui/about_licences_gen.go is stale: run `go generate ./ui`") {
		return
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
