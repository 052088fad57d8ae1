package canvas_test

import (
	"context"
	"os"
	"os/exec"
	"path/filepath"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/plot/vg"

	"github.com/ramify-app/ramify/canvas"
	"github.com/ramify-app/ramify/canvas/report"
	"github.com/ramify-app/ramify/engine"
)

// The diagram is what the report's Options.Tree asks for.
var _ report.TreeDiagram = (*canvas.Diagram)(nil)

func reportTree(p *engine.Project, r *engine.Result, theme string) (report.TreeDiagram, error) {
	return canvas.NewDiagram(p, r, theme)
}

func TestDiagramInReport(t *testing.T) {
	if _, err := exec.LookPath("pdftotext"); err != nil {
		t.Skip("pdftotext not installed (apt-get install poppler-utils)")
	}
	data, err := os.ReadFile("../assets/demos/chiller-cover.ramify.json")
	require.NoError(t, err)
	p, err := engine.Parse(data, "demo")
	require.NoError(t, err)
	r := engine.Evaluate(p)
	for _, theme := range []string{"print", "colour"} {
		path := filepath.Join(t.TempDir(), "report.pdf")
		require.NoError(t, report.WriteFile(context.Background(), path, p, r, report.Options{Theme: theme, Tree: reportTree}))
		out, err := exec.Command("pdftotext", path, "-").CombinedOutput()
		require.NoError(t, err, "%s", out)
		text := string(out)
		assert.NotContains(t, text, "Decision tree (outline)", "the drawing, not the outline table")
		engine.Walk(p.Root, func(n *engine.Node, _ int) bool {
			for _, b := range n.Branches {
				assert.Contains(t, text, b.Label, "theme %s", theme)
			}
			return true
		})
		assert.Contains(t, text, r.Format(r.ValueOf(p.Root)), "values with a true minus sign survive the report's UTF-8 fonts")
	}
	d, err := canvas.NewDiagram(p, r, "print")
	require.NoError(t, err)
	w, h := d.Size()
	assert.Positive(t, float64(w))
	assert.Positive(t, float64(h))
	assert.Error(t, d.Draw(nil, vg.Point{}, 0))
	_, err = canvas.NewDiagram(p, r, "neon")
	assert.ErrorContains(t, err, "unknown theme")
	_, err = canvas.NewDiagram(&engine.Project{}, nil, "print")
	assert.Error(t, err)
}
