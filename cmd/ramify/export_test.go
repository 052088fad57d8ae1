package main

import (
	"bytes"
	"os"
	"path/filepath"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/ramify-app/ramify/engine"
)

func TestExportCommand(t *testing.T) {
	demo := filepath.Join("..", "..", "assets", "demos", "chiller-cover.ramify.json")
	dir := t.TempDir()
	broken := filepath.Join(dir, "broken.ramify.json")
	require.NoError(t, os.WriteFile(broken, []byte(`{"format": "ramify", "root": [`), 0o644))
	tests := []struct {
		name   string
		args   []string
		code   int
		file   string // expected to exist afterwards
		stderr string
	}{
		{"svg", []string{"export", demo, "-o", filepath.Join(dir, "t.svg")}, exitOK, "t.svg", ""},
		{"pdf tiles landscape", []string{"export", demo, "-o", filepath.Join(dir, "t.pdf"), "--page", "Letter", "--landscape", "--tile", "--theme", "print", "--title", "Cooling options"}, exitOK, "t.pdf", ""},
		{"png dark", []string{"export", "--dpi", "96", "--theme", "dark", demo, "-o", filepath.Join(dir, "t.png")}, exitOK, "t.png", ""},
		{"no -o", []string{"export", demo}, exitUsage, "", "-o"},
		{"unknown extension", []string{"export", demo, "-o", filepath.Join(dir, "t.gif")}, exitUsage, "", ".png, .svg or .pdf"},
		{"fit and tile", []string{"export", demo, "-o", filepath.Join(dir, "x.pdf"), "--fit", "--tile"}, exitUsage, "", "not both"},
		{"bad theme", []string{"export", demo, "-o", filepath.Join(dir, "x.svg"), "--theme", "neon"}, exitUsage, "", "--theme"},
		{"bad page", []string{"export", demo, "-o", filepath.Join(dir, "x.pdf"), "--page", "B5"}, exitUsage, "", "--page"},
		{"bad dpi", []string{"export", demo, "-o", filepath.Join(dir, "x.png"), "--dpi", "0"}, exitUsage, "", "--dpi"},
		{"no file", []string{"export", "-o", filepath.Join(dir, "x.svg")}, exitUsage, "", "expected one project FILE"},
		{"missing project", []string{"export", filepath.Join(dir, "nope.json"), "-o", filepath.Join(dir, "x.svg")}, exitInvalid, "", "nope.json"},
		{"broken project", []string{"export", broken, "-o", filepath.Join(dir, "x.svg")}, exitInvalid, "", "broken.ramify.json"},
		{"unwritable place", []string{"export", demo, "-o", "/proc/ramify-tree.svg"}, exitInvalid, "", "cannot write in /proc"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			var stdout, stderr bytes.Buffer
			code := run(tc.args, &stdout, &stderr)
			assert.Equal(t, tc.code, code, "stderr: %s", stderr.String())
			if tc.file != "" {
				fi, err := os.Stat(filepath.Join(dir, tc.file))
				require.NoError(t, err)
				assert.Positive(t, fi.Size())
				assert.Contains(t, stdout.String(), tc.file)
			}
			if tc.stderr != "" {
				assert.Contains(t, stderr.String(), tc.stderr)
			}
		})
	}
	_, err := os.Stat(filepath.Join(dir, "x.svg"))
	assert.True(t, os.IsNotExist(err), "failed exports leave no file")
}

func TestExportCommandDrawsProblems(t *testing.T) {
	data, err := os.ReadFile(filepath.Join("..", "..", "assets", "demos", "chiller-cover.ramify.json"))
	require.NoError(t, err)
	p, err := engine.Parse(data, "demo")
	require.NoError(t, err)
	p.Root.Branches[0].Label = "Rent <with a broken cash>"
	p.Root.Branches[0].Cash = "rent_week * ("
	dir := t.TempDir()
	in := filepath.Join(dir, "with-problem.ramify.json")
	require.NoError(t, engine.Save(in, p))
	out := filepath.Join(dir, "tree.svg")
	var stdout, stderr bytes.Buffer
	code := run([]string{"export", in, "-o", out}, &stdout, &stderr)
	assert.Equal(t, exitOK, code, "a tree with problems still draws")
	assert.Contains(t, stderr.String(), "problem(s); they are marked on the drawing")
	svg, err := os.ReadFile(out)
	require.NoError(t, err)
	assert.Contains(t, string(svg), "rent_week * (", "the bad formula is shown as typed")
}
