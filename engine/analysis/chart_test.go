package analysis

import (
	"bytes"
	"os"
	"path/filepath"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
)

func sampleChart(t *testing.T) *plot.Plot {
	t.Helper()
	p := NewChart("Sample", UnitLabel("Payoff", "EUR"), "Probability")
	line, err := plotter.NewLine(plotter.XYs{{X: -1000, Y: 0}, {X: 0, Y: 0.5}, {X: 2500, Y: 1}})
	require.NoError(t, err)
	line.LineStyle = SeriesStyle(1)
	p.Add(line)
	p.X.Tick.Marker = ValueTicks{Decimals: 0}
	return p
}

func TestSaveChartByExtension(t *testing.T) {
	// File signatures: PNG (ISO/IEC 15948), PDF (ISO 32000 "%PDF-"), SVG (XML with an <svg> element).
	tests := []struct {
		name  string
		file  string
		magic []byte
	}{
		{"png", "chart.png", []byte("\x89PNG\r\n\x1a\n")},
		{"pdf", "chart.PDF", []byte("%PDF-")},
		{"svg", "chart.svg", []byte("<?xml")},
	}
	dir := t.TempDir()
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			path := filepath.Join(dir, tc.file)
			require.NoError(t, SaveChart(sampleChart(t), path, 0, 0))
			data, err := os.ReadFile(path)
			require.NoError(t, err)
			assert.True(t, bytes.HasPrefix(data, tc.magic), "file starts %q", data[:min(len(data), 8)])
			if tc.name == "svg" {
				assert.Contains(t, string(data), "Payoff (EUR)")
			}
		})
	}
}

func TestSaveChartBadExtensionKeepsOldFile(t *testing.T) {
	dir := t.TempDir()
	for _, name := range []string{"chart.gif", "chart"} {
		path := filepath.Join(dir, name)
		require.NoError(t, os.WriteFile(path, []byte("old"), 0o644))
		err := SaveChart(sampleChart(t), path, 0, 0)
		require.Error(t, err)
		assert.Contains(t, err.Error(), ".png, .svg or .pdf")
		data, _ := os.ReadFile(path)
		assert.Equal(t, "old", string(data))
	}
}

func TestValueTicksDistinctAndSeparated(t *testing.T) {
	ticks := ValueTicks{Decimals: 0}.Ticks(0, 250000)
	seen := map[string]bool{}
	labelled := 0
	for _, tk := range ticks {
		if tk.Label == "" {
			continue
		}
		labelled++
		assert.False(t, seen[tk.Label], "label %q repeated", tk.Label)
		seen[tk.Label] = true
	}
	require.Greater(t, labelled, 1)
	assert.True(t, seen["100,000"] || seen["200,000"], "thousands separators expected, got %v", seen)

	// Small ranges gain decimals rather than printing one label twice.
	small := ValueTicks{Decimals: 0}.Ticks(0, 1)
	seen = map[string]bool{}
	for _, tk := range small {
		if tk.Label != "" {
			assert.False(t, seen[tk.Label], "label %q repeated", tk.Label)
			seen[tk.Label] = true
		}
	}
}

func TestChartImageSize(t *testing.T) {
	img := ChartImage(sampleChart(t), 320, 200)
	assert.Equal(t, 320, img.Bounds().Dx())
	assert.Equal(t, 200, img.Bounds().Dy())
}

func TestProbabilityTicksStopAtOne(t *testing.T) {
	tests := []struct {
		max  float64
		want []string
	}{
		{1.4, []string{"0", "0.2", "0.4", "0.6", "0.8", "1"}},
		{0.3, []string{"0", "0.05", "0.1", "0.15", "0.2", "0.25", "0.3"}},
		{0.05, []string{"0", "0.01", "0.02", "0.03", "0.04", "0.05"}},
	}
	for _, tc := range tests {
		var labels []string
		for _, tk := range (probabilityTicks{}).Ticks(0, tc.max) {
			assert.LessOrEqual(t, tk.Value, 1.0)
			if tk.Label != "" {
				labels = append(labels, tk.Label)
			}
		}
		assert.Equal(t, tc.want, labels, "max %g", tc.max)
	}
}
