package main

import (
	"context"
	"fmt"
	"io"
	"strings"

	"github.com/ramify-app/ramify/canvas/report"
	"github.com/ramify-app/ramify/ui"
)

func init() {
	register("report", "write the decision report as PDF (-o FILE, --page A4|Letter, --theme print|colour, --prepared-by NAME)", runReport)
}

// reportTree draws the diagram with the canvas, as the app's report does.
var reportTree report.TreeDrawer = ui.ReportTree

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
	p, r, code := loadValid(path, stderr)
	if code != exitOK {
		return code
	}
	if err := report.WriteFile(context.Background(), *out, p, r, opts); err != nil {
		fmt.Fprintf(stderr, "ramify report: %s: %v\n", *out, err)
		return exitInvalid
	}
	fmt.Fprintf(stdout, "wrote %s\n", *out)
	return exitOK
}
