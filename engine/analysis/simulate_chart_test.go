package analysis

import (
	"bytes"
	"context"
	"os"
	"path/filepath"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

func TestSimulationChartsInEveryFormat(t *testing.T) {
	res, err := Simulate(context.Background(), vtWithDistributions(vtLoadDemo(t)), SimOptions{N: 20000, Seed: 2, Mode: SimFull})
	require.NoError(t, err)
	plots := res.Charts("EUR")
	require.Len(t, plots, 4, "histogram, cumulative, running mean, alternatives")
	assert.Contains(t, plots[0].X.Label.Text, "(EUR)")
	magic := map[string]string{"png": "\x89PNG", "svg": "<svg", "pdf": "%PDF"}
	for format, head := range magic {
		var buf bytes.Buffer
		require.NoError(t, WriteSimulationCharts(&buf, plots, format), format)
		assert.Contains(t, buf.String()[:min(buf.Len(), 200)], head, format)
	}
	dir := t.TempDir()
	require.NoError(t, SaveSimulationCharts(plots, filepath.Join(dir, "run.svg")))
	info, err := os.Stat(filepath.Join(dir, "run.svg"))
	require.NoError(t, err)
	assert.Greater(t, info.Size(), int64(1000))
	assert.ErrorContains(t, SaveSimulationCharts(plots, filepath.Join(dir, "run.gif")), "use .png, .svg or .pdf")
	img := SimulationChartImage(plots[0], 400, 300)
	assert.Equal(t, 400, img.Bounds().Dx())
}
