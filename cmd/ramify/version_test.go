package main

import (
	"bytes"
	"fmt"
	"testing"

	"github.com/BurntSushi/toml"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

func TestVersionIsFyneAppTOML(t *testing.T) {
	var doc struct {
		Details struct {
			Name, Version string
			Build         int
		}
	}
	_, err := toml.DecodeFile("../../FyneApp.toml", &doc)
	require.NoError(t, err)
	require.NotEmpty(t, doc.Details.Version)

	var stdout, stderr bytes.Buffer
	code := run([]string{"--version"}, &stdout, &stderr)
	require.Equal(t, exitOK, code, stderr.String())
	assert.Equal(t, fmt.Sprintf("%s %s (build %d)\n", doc.Details.Name, doc.Details.Version, doc.Details.Build), stdout.String())
	assert.Empty(t, stderr.String())
}
