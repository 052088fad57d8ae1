package main

import (
	"context"
	"fmt"
	"io"
	"strings"

	"gonum.org/v1/plot/vg"

	"github.com/ramify-app/ramify/canvas"
	"github.com/ramify-app/ramify/canvas/report"
	"github.com/ramify-app/ramify/engine"
)

func init() {
	register("report", "write the decision report as PDF (-o FILE, --page A4|Letter, --theme print|colour, --prepared-by NAME)", runReport)
}

// reportTree draws the report's tree diagram with the canvas, in the print
// theme (or the light theme for a colour report).
func reportTree(p *engine.Project, r *engine.Result, theme string) (report.TreeDiagram, error) {
	th := canvas.PrintTheme()
	if theme == "colour" {
		th = canvas.LightTheme()
	}
	opts := canvas.Options{Theme: th, RevealColumns: -1}
	l := canvas.LayoutTree(p, r, canvas.FontMeasurer{}, opts)
	return &treeDiagram{p: p, r: r, opts: opts, w: vg.Length(l.Bounds.W), h: vg.Length(l.Bounds.H)}, nil
}

type treeDiagram struct {
	p    *engine.Project
	r    *engine.Result
	opts canvas.Options
	w, h vg.Length
}

func (d *treeDiagram) Size() (vg.Length, vg.Length) { return d.w, d.h }

// Draw relies on DrawTree's fit: a rect of exactly k times the natural size
// draws the tree at scale k with its top-left corner at the rect's.
func (d *treeDiagram) Draw(c vg.Canvas, topLeft vg.Point, k float64) error {
	rect := vg.Rectangle{Min: vg.Point{X: topLeft.X, Y: topLeft.Y - d.h*vg.Length(k)},
		Max: vg.Point{X: topLeft.X + d.w*vg.Length(k), Y: topLeft.Y}}
	return canvas.DrawTree(c, rect, d.p, d.r, d.opts)
}

func runReport(args []string, stdout, stderr io.Writer) int {
	fs := newFlags("report", stderr)
	out := fs.String("o", "", "PDF file to write (required)")
	page := fs.String("page", "A4", "page size: "+strings.Join(report.PageNames, " or "))
	theme := fs.String("theme", "print", "look: "+strings.Join(report.ThemeNames, " or "))
	by := fs.String("prepared-by", "", "name for the title page (default: the project's prepared-by field)")
	path, ok := parseArgs(fs, args, stderr)
	if !ok {
		return exitUsage
	}
	if *out == "" {
		fmt.Fprintln(stderr, "ramify report: -o FILE is required (where to write the PDF)")
		return exitUsage
	}
	opts := report.Options{Page: *page, Theme: *theme, PreparedBy: *by, Tree: reportTree}
	if err := opts.Check(); err != nil {
		fmt.Fprintln(stderr, "ramify report:", err)
		return exitUsage
	}
	p, r, code := loadProject(path, stderr)
	if code != exitOK {
		return code
	}
	if code := requireValid(path, r, stderr); code != exitOK {
		return code
	}
	if err := report.WriteFile(context.Background(), *out, p, r, opts); err != nil {
		fmt.Fprintf(stderr, "ramify report: %s: %v\n", *out, err)
		return exitInvalid
	}
	fmt.Fprintf(stdout, "wrote %s\n", *out)
	return exitOK
}
