package ui

import (
	"context"
	"image"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/dialog"
	"fyne.io/fyne/v2/widget"
	"gonum.org/v1/plot"

	"github.com/ramify-app/ramify/engine/analysis"
)

// latestRun runs a panel's analysis in the background so that only the newest
// run reports back: starting a run cancels the one before it, and the hand-back
// of a cancelled or replaced run is dropped.
type latestRun struct {
	cancel context.CancelFunc
}

// start cancels any earlier run and calls work with a fresh context through
// background (the panel's runner: runInBackground, or inline in tests). work
// runs off the event goroutine and returns what to do on it; that runs with
// fyne.Do unless the run was cancelled or replaced meanwhile.
func (lr *latestRun) start(background func(func()), work func(ctx context.Context) func()) {
	lr.stop()
	ctx, cancel := context.WithCancel(context.Background())
	lr.cancel = cancel
	background(func() {
		handBack := work(ctx)
		fyne.Do(func() {
			if ctx.Err() != nil {
				return // cancelled or replaced by a newer run
			}
			lr.cancel = nil
			handBack()
		})
	})
}

// stop cancels the current run, if any.
func (lr *latestRun) stop() {
	if lr.cancel != nil {
		lr.cancel()
		lr.cancel = nil
	}
}

// sensHandBack finishes a sensitivity run off the event goroutine: it draws the
// result's chart and returns what to do on the event goroutine, which is to show
// the result and its chart, or the error in the status line.
func sensHandBack(err error, chart func() (*plot.Plot, error), box *chartBox, status *widget.Label, show func()) func() {
	var pl *plot.Plot
	var img image.Image
	if err == nil {
		if pl, err = chart(); err == nil {
			img = analysis.SensitivityChartImage(pl, chartPxW, chartPxH)
		}
	}
	return func() {
		if err != nil {
			status.SetText(err.Error())
			return
		}
		show()
		box.show(pl, img)
	}
}

// askPathAndSave asks for a file name and hands its local path to save. The file
// the dialog creates is closed at once: the writers replace it atomically. A
// failure of the dialog or of save is shown under title.
func askPathAndSave(h Host, title, name string, save func(path string) error) {
	d := dialog.NewFileSave(func(w fyne.URIWriteCloser, err error) {
		if err != nil || w == nil {
			if err != nil {
				h.ShowError(title, err)
			}
			return
		}
		path := w.URI().Path()
		w.Close()
		if err := save(path); err != nil {
			h.ShowError(title, err)
		}
	}, h.Window())
	d.SetFileName(name)
	d.Show()
}
