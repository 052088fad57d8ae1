package ui

import (
	"encoding/xml"
	"image/png"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/ramify-app/ramify/assets"
	"github.com/ramify-app/ramify/canvas"
	"github.com/ramify-app/ramify/engine"
)

func TestExportDiagramFromTheWindow(t *testing.T) {
	d, ok := assets.DemoByName("open-air-cinema")
	require.True(t, ok)
	p, err := engine.Parse(d.Data, d.Name)
	require.NoError(t, err)
	e := newTestEditor(t, p)
	dir := t.TempDir()

	svgPath := filepath.Join(dir, "tree.svg")
	require.NoError(t, exportDiagram(e, svgPath, canvas.ExportOptions{Theme: "print"}))
	data, err := os.ReadFile(svgPath)
	require.NoError(t, err)
	require.NoError(t, xml.Unmarshal(data, new(struct{})), "the SVG parses as XML")
	for _, want := range []string{"Large with a marquee", e.Result().Format(e.Result().ValueOf(p.Root))} {
		assert.Contains(t, string(data), want)
	}

	pngPath := filepath.Join(dir, "tree.png")
	require.NoError(t, exportDiagram(e, pngPath, canvas.ExportOptions{DPI: 72}))
	f, err := os.Open(pngPath)
	require.NoError(t, err)
	defer f.Close()
	img, err := png.Decode(f)
	require.NoError(t, err)
	assert.Greater(t, img.Bounds().Dx(), 100)

	err = exportDiagram(e, filepath.Join(dir, "tree.docx"), canvas.ExportOptions{})
	require.Error(t, err)
	assert.True(t, strings.Contains(err.Error(), "must end in .pdf, .png or .svg"))
	_, statErr := os.Stat(filepath.Join(dir, "tree.docx"))
	assert.True(t, os.IsNotExist(statErr), "nothing written for a refused name")
}
