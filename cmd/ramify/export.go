package main

import (
	"fmt"
	"io"
	"path/filepath"
	"strings"

	"github.com/ramify-app/ramify/canvas"
)

func init() {
	register("export", "draw the tree to -o tree.png|tree.svg|tree.pdf (--theme, --page, --tile, --dpi, --title)", runExport)
}

func runExport(args []string, stdout, stderr io.Writer) int {
	fs := newFlags("export", stderr)
	out := fs.String("o", "", "output file: .png, .svg or .pdf (required)")
	theme := fs.String("theme", "light", "colours: "+strings.Join(canvas.ThemeNames, ", "))
	page := fs.String("page", "A4", "PDF page size: "+strings.Join(canvas.PageNames, ", "))
	landscape := fs.Bool("landscape", false, "PDF: turn the page sideways")
	fit := fs.Bool("fit", false, "PDF: fit the whole tree on one page (the default)")
	tile := fs.Bool("tile", false, "PDF: draw at full size across several pages, with overlap and page labels")
	dpi := fs.Int("dpi", 150, "PNG resolution in dots per inch")
	title := fs.String("title", "", "title block text (default: the project title)")
	fs.Usage = func() {
		fmt.Fprintln(stderr, "usage: ramify export FILE -o tree.png|tree.svg|tree.pdf [--theme light|dark|print]")
		fmt.Fprintln(stderr, "                     [--page A4|A3|Letter|Legal] [--landscape] [--fit|--tile] [--dpi N] [--title TEXT]")
		fs.PrintDefaults()
	}
	path, ok := parseArgs(fs, args, stderr)
	if !ok {
		return exitUsage
	}
	usageErr := func(format string, a ...any) int {
		fmt.Fprintf(stderr, "ramify export: "+format+"\n", a...)
		return exitUsage
	}
	switch {
	case *out == "":
		return usageErr("name the output file with -o tree.png, tree.svg or tree.pdf")
	case *fit && *tile:
		return usageErr("choose --fit or --tile, not both")
	case !oneOf(filepath.Ext(*out), ".png", ".svg", ".pdf"):
		return usageErr("cannot tell the format of %s: the name must end in .png, .svg or .pdf", *out)
	case !oneOf(*theme, canvas.ThemeNames...):
		return usageErr("--theme takes %s, not %q", strings.Join(canvas.ThemeNames, ", "), *theme)
	case !oneOf(*page, canvas.PageNames...):
		return usageErr("--page takes %s, not %q", strings.Join(canvas.PageNames, ", "), *page)
	case *dpi < 10 || *dpi > 2400:
		return usageErr("--dpi must be between 10 and 2400, not %d", *dpi)
	}
	p, r, code := loadProject(path, stderr)
	if code != exitOK {
		return code
	}
	if !r.Valid() {
		// The drawing marks each problem; say so, but still draw.
		fmt.Fprintf(stderr, "ramify export: %s has %d problem(s); they are marked on the drawing\n", path, len(r.Problems))
	}
	err := canvas.Export(p, r, *out, canvas.ExportOptions{
		Theme: strings.ToLower(*theme), Page: *page, Landscape: *landscape, Tile: *tile, DPI: *dpi, Title: *title,
	})
	if err != nil {
		fmt.Fprintln(stderr, "ramify:", err)
		return exitInvalid
	}
	fmt.Fprintf(stdout, "wrote %s\n", *out)
	return exitOK
}
