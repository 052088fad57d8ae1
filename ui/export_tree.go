package ui

import (
	"fmt"
	"path/filepath"
	"strings"

	"fyne.io/fyne/v2/dialog"
	"fyne.io/fyne/v2/widget"

	"github.com/ramify-app/ramify/canvas"
)

func init() {
	RegisterMenu(MenuEntry{Menu: "File", Label: "Export diagram…", Order: 59, Action: ShowDiagramExport})
}

// diagramFormats maps the dialog's choices to file extensions.
var diagramFormats = map[string]string{"PDF (print)": ".pdf", "PNG image": ".png", "SVG drawing": ".svg"}

// ShowDiagramExport asks how to draw the tree (format, theme, page, fit or
// tile) and where, then writes it through the same exporter as `ramify export`.
func ShowDiagramExport(h Host) {
	p := h.Project()
	if p == nil {
		return
	}
	format := widget.NewSelect([]string{"PDF (print)", "PNG image", "SVG drawing"}, nil)
	format.SetSelected("PDF (print)")
	theme := widget.NewSelect([]string{"print", "light", "dark"}, nil)
	theme.SetSelected("print")
	page := widget.NewSelect([]string{"A4", "A3", "Letter", "Legal"}, nil)
	page.SetSelected("A4")
	landscape := widget.NewCheck("Landscape", nil)
	landscape.SetChecked(true)
	tile := widget.NewCheck("Full size across several pages (PDF)", nil)
	dialog.ShowForm("Export diagram", "Choose file…", "Cancel", []*widget.FormItem{
		widget.NewFormItem("Format", format),
		widget.NewFormItem("Colours", theme),
		widget.NewFormItem("Page", page),
		widget.NewFormItem("", landscape),
		widget.NewFormItem("", tile),
	}, func(ok bool) {
		if !ok {
			return
		}
		ext := diagramFormats[format.Selected]
		eo := canvas.ExportOptions{Theme: theme.Selected, Page: page.Selected, Landscape: landscape.Checked, Tile: tile.Checked}
		chooseSavePath(h, suggestedName(p, "-tree"+ext), ext, func(path string) {
			if err := exportDiagram(h, path, eo); err != nil {
				h.ShowError("Export diagram", err)
			}
		})
	}, h.Window())
}

// exportDiagram draws the current tree as the canvas shows it (certainty
// equivalents, notes) into path; the format comes from the extension.
func exportDiagram(h Host, path string, eo canvas.ExportOptions) error {
	if ext := strings.ToLower(filepath.Ext(path)); ext != ".pdf" && ext != ".png" && ext != ".svg" {
		return fmt.Errorf("%s: the name must end in .pdf, .png or .svg", path)
	}
	if vh, ok := h.(ViewOptionsHost); ok {
		o := vh.ViewOptions()
		o.Selected = canvas.Target{} // the selection is not part of the drawing
		o.RevealColumns = -1
		eo.Scene = &o
	}
	return canvas.Export(h.Project(), h.Result(), path, eo)
}
