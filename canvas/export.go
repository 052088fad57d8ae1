package canvas

import (
	"bufio"
	"errors"
	"fmt"
	"image/color"
	"io"
	"os"
	"path/filepath"
	"strings"
	"time"

	"github.com/ramify-app/ramify/engine"
)

// ExportOptions control a file export of the tree.
type ExportOptions struct {
	Theme     string    // light (default), dark or print
	Page      string    // PDF page: A4 (default), A3, Letter, Legal
	Landscape bool      // PDF page turned sideways
	Tile      bool      // PDF: full size across several pages instead of fitting one page
	DPI       int       // PNG resolution; 0 means 150
	Title     string    // title block text; empty means the project title
	Date      time.Time // title block date; zero means today
	Scene     *Options  // what the drawing shows (nil: DefaultOptions); its Theme is replaced by Theme above
}

func (eo ExportOptions) title(p *engine.Project) string {
	if t := strings.TrimSpace(eo.Title); t != "" {
		return cleanText(t)
	}
	if p != nil && strings.TrimSpace(p.Title) != "" {
		return cleanText(p.Title)
	}
	return "Decision tree"
}

func (eo ExportOptions) dateText() string {
	d := eo.Date
	if d.IsZero() {
		d = time.Now()
	}
	return d.Format("2 January 2006")
}

// exportMargin is the blank border around an SVG or PNG drawing, in points.
const exportMargin = 18

// Formats lists the file extensions Export writes.
var Formats = []string{".png", ".svg", ".pdf"}

// Export draws the tree of p (values from r, which may be nil) to path. The
// format follows the extension. The file is written to a temporary file in the
// same folder and renamed into place, so a failed export leaves nothing behind.
func Export(p *engine.Project, r *engine.Result, path string, eo ExportOptions) error {
	ext := strings.ToLower(filepath.Ext(path))
	switch ext {
	case ".png", ".svg", ".pdf":
	case "":
		return fmt.Errorf("export %s: no file extension; name the file .png, .svg or .pdf", path)
	default:
		return fmt.Errorf("export %s: unknown format %q; use .png, .svg or .pdf", path, ext)
	}
	if p == nil || p.Root == nil {
		return fmt.Errorf("export %s: the project has no tree to draw", path)
	}
	th, ok := ThemeByName(eo.Theme)
	if !ok {
		return fmt.Errorf("export %s: unknown theme %q; use %s", path, eo.Theme, strings.Join(ThemeNames, ", "))
	}
	if eo.Page == "" {
		eo.Page = "A4"
	}
	if _, _, ok := PageSize(eo.Page, false); !ok {
		return fmt.Errorf("export %s: unknown page size %q; use %s", path, eo.Page, strings.Join(PageNames, ", "))
	}
	if eo.DPI == 0 {
		eo.DPI = 150
	}
	if eo.DPI < 10 || eo.DPI > 2400 {
		return fmt.Errorf("export %s: dpi %d is out of range (10 to 2400)", path, eo.DPI)
	}
	// Paper is white; only the dark theme keeps its own background.
	bg := color.NRGBA{0xff, 0xff, 0xff, 0xff}
	if th.Name == "dark" {
		bg = th.Background
	}
	opts := DefaultOptions()
	if eo.Scene != nil {
		opts = *eo.Scene
	}
	opts.Theme = th
	l := LayoutTree(p, r, FontMeasurer{}, opts)

	write := func(w io.Writer) error {
		switch ext {
		case ".pdf":
			return writePDF(w, p, r, l, opts, eo, bg)
		case ".svg":
			return WriteSVG(w, withHeader(Build(p, r, l, opts, Rect{}), eo, p), exportMargin, bg)
		default:
			return writePNG(w, withHeader(Build(p, r, l, opts, Rect{}), eo, p), exportMargin, eo.DPI, bg)
		}
	}
	return writeAtomically(path, write)
}

// writeAtomically writes through a temporary file in the target folder and
// renames it over path only when everything succeeded.
func writeAtomically(path string, write func(io.Writer) error) (err error) {
	dir := filepath.Dir(path)
	if fi, statErr := os.Stat(dir); statErr != nil {
		return fmt.Errorf("export %s: folder %s does not exist", path, dir)
	} else if !fi.IsDir() {
		return fmt.Errorf("export %s: %s is not a folder", path, dir)
	}
	if fi, statErr := os.Stat(path); statErr == nil && fi.IsDir() {
		return fmt.Errorf("export %s: that is a folder, not a file name", path)
	}
	f, err := os.CreateTemp(dir, "."+filepath.Base(path)+".*.tmp")
	if err != nil {
		return fmt.Errorf("export %s: cannot write in %s: %w", path, dir, unwrapPathErr(err))
	}
	tmp := f.Name()
	defer func() {
		if err != nil {
			f.Close()
			os.Remove(tmp)
		}
	}()
	defer func() {
		if rec := recover(); rec != nil { // a back-end panicked: no partial file
			err = fmt.Errorf("export %s: drawing failed: %v", path, rec)
			f.Close()
			os.Remove(tmp)
		}
	}()
	bw := bufio.NewWriterSize(f, 256<<10)
	if err = write(bw); err != nil {
		return fmt.Errorf("export %s: %w", path, err)
	}
	if err = bw.Flush(); err != nil {
		return fmt.Errorf("export %s: %w", path, unwrapPathErr(err))
	}
	if err = f.Close(); err != nil {
		return fmt.Errorf("export %s: %w", path, unwrapPathErr(err))
	}
	if err = os.Chmod(tmp, 0o644); err != nil {
		return fmt.Errorf("export %s: %w", path, unwrapPathErr(err))
	}
	if err = os.Rename(tmp, path); err != nil {
		return fmt.Errorf("export %s: cannot replace the file: %w", path, unwrapPathErr(err))
	}
	return nil
}

func unwrapPathErr(err error) error {
	var pe *os.PathError
	if errors.As(err, &pe) {
		return pe.Err
	}
	return err
}

// headerHeight is the height of the title block.
func headerHeight(th *Theme) float64 {
	return th.lineHeight(th.TitleSize) + th.lineHeight(th.NoteSize) + 8
}

// headerPrims is the title block: title at the left, date at the right, the
// page label under the date, and a rule under it all.
func headerPrims(th *Theme, r Rect, title, date, page string) []Prim {
	b := sceneBuilder{s: &Scene{}, th: th}
	mc := FontMeasurer{}
	fitTitle := cutText{text: title, width: mc.TextWidth(title, th.TitleSize, true)}
	if maxW := r.W * 0.7; fitTitle.width > maxW {
		fitTitle = cutToWidth(title, maxW, func(s string) float64 { return mc.TextWidth(s, th.TitleSize, true) })
	}
	b.text(RoleTitle, TextRun{Text: fitTitle.text, Width: fitTitle.width}, r.X, r.Y, th.TitleSize, true, AlignLeft)
	b.text(RoleTitle, TextRun{Text: date, Width: mc.TextWidth(date, th.NoteSize*1.2, false)}, r.X+r.W, r.Y, th.NoteSize*1.2, false, AlignRight)
	if page != "" {
		b.text(RoleNote, TextRun{Text: page, Width: mc.TextWidth(page, th.NoteSize, false)}, r.X+r.W, r.Y+th.lineHeight(th.TitleSize), th.NoteSize, false, AlignRight)
	}
	y := r.Y + r.H - 3
	b.s.Prims = append(b.s.Prims, Prim{Kind: PrimLine, Role: RoleFrame, Points: []Point{{r.X, y}, {r.X + r.W, y}}})
	return b.s.Prims
}

// withHeader puts the title block above the drawing and widens the viewport to hold it.
func withHeader(s *Scene, eo ExportOptions, p *engine.Project) *Scene {
	th := &s.Theme
	h := headerHeight(th)
	vp := s.Viewport
	w := vp.W
	if min := 320.0; w < min {
		w = min
	}
	hr := Rect{vp.X, vp.Y - h - 6, w, h}
	s.Prims = append(headerPrims(th, hr, eo.title(p), eo.dateText(), ""), s.Prims...)
	s.Viewport = Rect{vp.X, hr.Y, w, vp.H + h + 6}
	return s
}
