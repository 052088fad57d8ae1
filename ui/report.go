package ui

import (
	"context"
	"fmt"
	"io"
	"path/filepath"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/dialog"
	"fyne.io/fyne/v2/driver/desktop"
	"fyne.io/fyne/v2/storage"
	"fyne.io/fyne/v2/widget"
	"gonum.org/v1/plot/vg"

	"github.com/ramify-app/ramify/canvas"
	"github.com/ramify-app/ramify/canvas/report"
	"github.com/ramify-app/ramify/engine"
)

func init() {
	RegisterMenu(MenuEntry{Menu: "File", Label: "Report…", Order: 60,
		Shortcut: &desktop.CustomShortcut{KeyName: fyne.KeyP, Modifier: fyne.KeyModifierShortcutDefault},
		Action:   ShowReportDialog})
	RegisterMenu(MenuEntry{Menu: "File", Label: "Export table as CSV…", Order: 61, Action: ShowCSVExport})
}

// ReportTree draws the report's tree diagram with the canvas: the print theme,
// or the light theme for a colour report. The CLI's report uses it too.
func ReportTree(p *engine.Project, r *engine.Result, theme string) (report.TreeDiagram, error) {
	th := canvas.PrintTheme()
	if theme == "colour" {
		th = canvas.LightTheme()
	}
	opts := canvas.Options{Theme: th, RevealColumns: -1}
	l := canvas.LayoutTree(p, r, canvas.FontMeasurer{}, opts)
	return &reportTreeDiagram{p: p, r: r, opts: opts, w: vg.Length(l.Bounds.W), h: vg.Length(l.Bounds.H)}, nil
}

type reportTreeDiagram struct {
	p    *engine.Project
	r    *engine.Result
	opts canvas.Options
	w, h vg.Length
}

func (d *reportTreeDiagram) Size() (vg.Length, vg.Length) { return d.w, d.h }

// Draw relies on DrawTree's fit: a rect of exactly k times the natural size
// draws the tree at scale k with its top-left corner at the rect's.
func (d *reportTreeDiagram) Draw(c vg.Canvas, topLeft vg.Point, k float64) error {
	rect := vg.Rectangle{Min: vg.Point{X: topLeft.X, Y: topLeft.Y - d.h*vg.Length(k)},
		Max: vg.Point{X: topLeft.X + d.w*vg.Length(k), Y: topLeft.Y}}
	return canvas.DrawTree(c, rect, d.p, d.r, d.opts)
}

// reportSnapshot copies the project and evaluates the copy, so the report can
// be written on another goroutine while the user keeps editing.
func reportSnapshot(h Host) (*engine.Project, *engine.Result, error) {
	p := h.Project()
	if p == nil || p.Root == nil {
		return nil, nil, fmt.Errorf("there is no tree to report on")
	}
	c := p.Clone()
	r := engine.Evaluate(c)
	if !r.Valid() {
		return nil, nil, fmt.Errorf("the project has %d problem(s) to fix first; the first: %s", len(r.Problems), r.Problems[0].Msg)
	}
	return c, r, nil
}

// suggestedName makes a file name from the project title.
func suggestedName(p *engine.Project, ext string) string {
	name := strings.Map(func(r rune) rune {
		if strings.ContainsRune(`/\:*?"<>|`, r) {
			return '-'
		}
		return r
	}, strings.TrimSpace(p.Title))
	if name == "" {
		name = "decision"
	}
	return name + ext
}

// ShowReportDialog asks for the title-page name, page size and look, then
// where to save, and writes the PDF in the background with a Cancel button.
func ShowReportDialog(h Host) {
	p := h.Project()
	if p == nil {
		return
	}
	by := widget.NewEntry()
	by.SetText(p.PreparedBy)
	by.SetPlaceHolder("name on the title page")
	page := widget.NewSelect(report.PageNames, nil)
	page.SetSelected(report.PageNames[0])
	theme := widget.NewSelect(report.ThemeNames, nil)
	theme.SetSelected(report.ThemeNames[0])
	items := []*widget.FormItem{
		widget.NewFormItem("Prepared by", by),
		widget.NewFormItem("Page", page),
		widget.NewFormItem("Look", theme),
	}
	d := dialog.NewForm("Report", "Choose file…", "Cancel", items, func(ok bool) {
		if !ok {
			return
		}
		opts := report.Options{Page: page.Selected, Theme: theme.Selected, PreparedBy: strings.TrimSpace(by.Text), Tree: ReportTree}
		chooseSavePath(h, suggestedName(p, ".pdf"), ".pdf", func(path string) { writeReportInBackground(h, path, opts) })
	}, h.Window())
	d.Resize(fyne.NewSize(440, d.MinSize().Height))
	d.Show()
}

// chooseSavePath shows a save dialog and hands back a local path. The file the
// dialog creates is closed at once: the writers replace it atomically.
func chooseSavePath(h Host, name, ext string, then func(path string)) {
	d := dialog.NewFileSave(func(w fyne.URIWriteCloser, err error) {
		if err != nil {
			h.ShowError("Save", err)
			return
		}
		if w == nil {
			return // cancelled
		}
		path := w.URI().Path()
		_ = w.Close()
		if filepath.Ext(path) == "" {
			path += ext
		}
		then(path)
	}, h.Window())
	d.SetFileName(name)
	d.SetFilter(storage.NewExtensionFileFilter([]string{ext}))
	d.Show()
}

// writeReportInBackground writes the report on its own goroutine and shows
// progress with a Cancel button; the result comes back through fyne.Do.
func writeReportInBackground(h Host, path string, opts report.Options) {
	p, r, err := reportSnapshot(h)
	if err != nil {
		h.ShowError("Report", err)
		return
	}
	ctx, cancel := context.WithCancel(context.Background())
	bar := widget.NewProgressBarInfinite()
	var progress *dialog.CustomDialog
	progress = dialog.NewCustomWithoutButtons("Writing the report",
		container.NewVBox(widget.NewLabel(filepath.Base(path)), bar,
			widget.NewButton("Cancel", func() { cancel() })), h.Window())
	progress.Show()
	go func() {
		err := report.WriteFile(ctx, path, p, r, opts)
		cancelled := ctx.Err() != nil
		fyne.Do(func() {
			cancel()
			progress.Hide()
			switch {
			case cancelled && err != nil:
				// Cancelled: nothing was replaced, nothing to say.
			case err != nil:
				h.ShowError("Report", fmt.Errorf("%s: %w", path, err))
			default:
				dialog.ShowInformation("Report", "Wrote "+path, h.Window())
			}
		})
	}()
}

// csvTableTitles names engine.CSVTables for people.
var csvTableTitles = map[string]string{"paths": "Path table", "strategies": "Strategy table", "variables": "Variables"}

// ShowCSVExport asks which table to export and where, and writes it as CSV
// with exact decimal values.
func ShowCSVExport(h Host) {
	p := h.Project()
	if p == nil {
		return
	}
	var names []string
	for _, t := range engine.CSVTables {
		names = append(names, csvTableTitles[t])
	}
	which := widget.NewRadioGroup(names, nil)
	which.SetSelected(names[0])
	dialog.ShowForm("Export table as CSV", "Choose file…", "Cancel",
		[]*widget.FormItem{widget.NewFormItem("Table", which)}, func(ok bool) {
			if !ok {
				return
			}
			table := engine.CSVTables[0]
			for _, t := range engine.CSVTables {
				if csvTableTitles[t] == which.Selected {
					table = t
				}
			}
			chooseSavePath(h, suggestedName(p, "-"+table+".csv"), ".csv", func(path string) {
				if err := writeCSVTable(h, path, table); err != nil {
					h.ShowError("Export table as CSV", fmt.Errorf("%s: %w", path, err))
				}
			})
		}, h.Window())
}

// writeCSVTable writes one table of the current evaluation atomically.
func writeCSVTable(h Host, path, table string) error {
	r := h.Result()
	if r == nil || !r.Valid() {
		return fmt.Errorf("the project has problems to fix before its tables can be exported")
	}
	return engine.WriteAtomic(path, func(w io.Writer) error { return engine.WriteCSV(w, r, table) })
}
