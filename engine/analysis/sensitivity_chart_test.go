package analysis

import (
	"bytes"
	"context"
	"image/png"
	"os"
	"path/filepath"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/plot"

	"github.com/ramify-app/ramify/engine"
)

func TestSensitivityChartsSaveInEveryFormat(t *testing.T) {
	p, err := engine.Load("../../assets/demos/chiller-cover.ramify.json")
	require.NoError(t, err)
	r := sensEvaluated(t, p)
	sw, err := Sweep(context.Background(), p, r, VariableInput("p_holds"), SweepOptions{Range: &Range{Low: sdec("0"), High: sdec("1")}})
	require.NoError(t, err)
	tor, err := Tornado(context.Background(), p, r)
	require.NoError(t, err)
	rm, err := Regions(context.Background(), p, r, VariableInput("p_holds"), VariableInput("rent_week"), RegionOptions{Steps: 30})
	require.NoError(t, err)
	charts := map[string]func() (*plot.Plot, error){"sweep": sw.Chart, "tornado": tor.Chart, "regions": rm.Chart}
	dir := t.TempDir()
	for name, build := range charts {
		pl, err := build()
		require.NoError(t, err, name)
		for _, ext := range []string{"png", "svg", "pdf"} {
			path := filepath.Join(dir, name+"."+ext)
			require.NoError(t, SaveSensitivityChart(pl, path), path)
			data, err := os.ReadFile(path)
			require.NoError(t, err)
			assert.Greater(t, len(data), 1000, path)
			if ext == "png" {
				img, err := png.Decode(bytes.NewReader(data))
				require.NoError(t, err)
				assert.Greater(t, img.Bounds().Dx(), 500)
			}
		}
		img := SensitivityChartImage(pl, 320, 200)
		assert.Equal(t, 320, img.Bounds().Dx())
	}
	pl, _ := sw.Chart()
	err = SaveSensitivityChart(pl, filepath.Join(dir, "chart.gif"))
	assert.ErrorContains(t, err, ".png, .svg or .pdf")
	if out := os.Getenv("RAMIFY_CHART_DIR"); out != "" { // for looking at the charts by eye
		for name, build := range charts {
			pl, _ := build()
			require.NoError(t, SaveSensitivityChart(pl, filepath.Join(out, name+".png")))
		}
	}
}
