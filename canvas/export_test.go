package canvas

import (
	"bytes"
	"encoding/xml"
	"errors"
	"image/color"
	"image/png"
	"io"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
	"time"

	"gonum.org/v1/plot/vg"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/ramify-app/ramify/canvas/pdfdoc"
	"github.com/ramify-app/ramify/engine"
)

var fixedDate = time.Date(2026, 3, 14, 0, 0, 0, 0, time.UTC)

// svgTexts parses an SVG with encoding/xml and returns the text of every
// <text> (including its <title> tooltip) and the root's width and height.
func svgTexts(t *testing.T, data []byte) (texts []string, w, h float64) {
	t.Helper()
	dec := xml.NewDecoder(bytes.NewReader(data))
	depth := 0
	var cur strings.Builder
	for {
		tok, err := dec.Token()
		if errors.Is(err, io.EOF) {
			break
		}
		require.NoError(t, err, "SVG must be well-formed XML")
		switch el := tok.(type) {
		case xml.StartElement:
			if el.Name.Local == "svg" {
				for _, a := range el.Attr {
					v, _ := strconv.ParseFloat(strings.TrimSuffix(a.Value, "pt"), 64)
					switch a.Name.Local {
					case "width":
						w = v
					case "height":
						h = v
					}
				}
			}
			if el.Name.Local == "text" || el.Name.Local == "title" {
				depth++
				if el.Name.Local == "title" {
					texts = append(texts, cur.String())
					cur.Reset()
				}
			}
		case xml.EndElement:
			if el.Name.Local == "text" || el.Name.Local == "title" {
				depth--
				texts = append(texts, cur.String())
				cur.Reset()
			}
		case xml.CharData:
			if depth > 0 {
				cur.Write(el)
			}
		}
	}
	return texts, w, h
}

func TestExportSVG(t *testing.T) {
	tests := []struct {
		name  string
		theme string
	}{{"light", "light"}, {"dark", "dark"}, {"print", "print"}, {"presentation", "light-presentation"}}
	p, r := demoProject(t)
	long := strings.Repeat("a very long branch label ", 12) + "<&> \"quoted\" 東京"
	p.Root.Branches[0].Label = long
	r = engine.Evaluate(p)
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			path := filepath.Join(t.TempDir(), "tree.svg")
			require.NoError(t, Export(p, r, path, ExportOptions{Theme: tc.theme, Date: fixedDate}))
			data, err := os.ReadFile(path)
			require.NoError(t, err)
			texts, _, _ := svgTexts(t, data)
			all := strings.Join(texts, "\n")
			engine.Walk(p.Root, func(n *engine.Node, _ int) bool {
				for _, b := range n.Branches {
					assert.Contains(t, texts, b.Label, "label in a <text> or its <title>")
				}
				if n.Kind == engine.End {
					assert.Contains(t, all, r.Format(r.PathValue(n)))
				} else {
					assert.Contains(t, all, r.Format(r.ValueOf(n)))
				}
				return true
			})
			assert.Contains(t, all, p.Title)
			assert.Contains(t, all, "14 March 2026")
			assert.Contains(t, all, "A decision aid only")
		})
	}
}

func havePoppler(t *testing.T) {
	for _, tool := range []string{"pdfinfo", "pdftotext"} {
		if _, err := exec.LookPath(tool); err != nil {
			t.Skipf("%s not installed (apt-get install poppler-utils); skipping the PDF reader check", tool)
		}
	}
}

func pdfPages(t *testing.T, path string) int {
	out, err := exec.Command("pdfinfo", path).CombinedOutput()
	require.NoError(t, err, "pdfinfo must open the file: %s", out)
	m := regexp.MustCompile(`(?m)^Pages:\s+(\d+)`).FindSubmatch(out)
	require.NotNil(t, m, "%s", out)
	n, _ := strconv.Atoi(string(m[1]))
	return n
}

func pdfText(t *testing.T, path string) string {
	out, err := exec.Command("pdftotext", "-layout", path, "-").CombinedOutput()
	require.NoError(t, err, "%s", out)
	return string(out)
}

func TestExportPDF(t *testing.T) {
	havePoppler(t)
	p, r := demoProject(t)
	dir := t.TempDir()

	t.Run("fit on one page", func(t *testing.T) {
		for _, page := range PageNames {
			path := filepath.Join(dir, page+".pdf")
			require.NoError(t, Export(p, r, path, ExportOptions{Page: page, Landscape: true, Date: fixedDate}))
			assert.Equal(t, 1, pdfPages(t, path))
			text := pdfText(t, path)
			engine.Walk(p.Root, func(n *engine.Node, _ int) bool {
				for _, b := range n.Branches {
					assert.Contains(t, text, b.Label)
				}
				if n.Kind != engine.End {
					assert.Contains(t, text, r.Format(r.ValueOf(n)))
				}
				return true
			})
			assert.Contains(t, text, "page 1 of 1")
			assert.Contains(t, text, p.Title)
			assert.Contains(t, text, "A decision aid only")
		}
	})

	t.Run("tiles across pages", func(t *testing.T) {
		big := bigTree(400)
		rb := engine.Evaluate(big)
		path := filepath.Join(dir, "tiles.pdf")
		require.NoError(t, Export(big, rb, path, ExportOptions{Page: "A4", Tile: true, Date: fixedDate}))
		l := LayoutTree(big, rb, FontMeasurer{}, DefaultOptions())
		// independent count: the content area of portrait A4 less margins and
		// title block, stepping by the area less the overlap
		w, h, _ := PageSize("A4", false)
		th := LightTheme()
		areaW, areaH := w-2*pageMargin, h-2*pageMargin-headerHeight(&th)-footerHeight(&th, w-2*pageMargin)-6
		cols := math.Ceil((l.Bounds.W - tileOverlap) / (areaW - tileOverlap))
		rows := math.Ceil((l.Bounds.H - tileOverlap) / (areaH - tileOverlap))
		want := int(cols * rows)
		require.Greater(t, want, 1)
		assert.Equal(t, want, pdfPages(t, path))
		text := pdfText(t, path)
		assert.Contains(t, text, "page 2 of "+strconv.Itoa(want))
		assert.Contains(t, text, "row 1, column 2")
		engine.Walk(big.Root, func(n *engine.Node, _ int) bool {
			for _, b := range n.Branches {
				assert.Contains(t, text, b.Label)
			}
			return true
		})
	})

	t.Run("non-Latin text does not break the file", func(t *testing.T) {
		q, _ := demoProject(t)
		q.Title = "Coût − 東京 🚢 “quoted”"
		q.Root.Branches[0].Label = "Zürich – €5 “déjà vu”"
		path := filepath.Join(dir, "unicode.pdf")
		require.NoError(t, Export(q, engine.Evaluate(q), path, ExportOptions{Date: fixedDate}))
		text := pdfText(t, path)
		assert.Contains(t, text, "Zürich – €5 “déjà vu”")
		assert.Contains(t, text, "Coût − 東京", "Unicode fonts: no more Windows-1252 '?' or '-'")
		assert.Contains(t, text, "“quoted”", "the text after an emoji is still there")
	})
}

// negativeProject is a small invented tree whose values are mostly negative.
func negativeProject() *engine.Project {
	end := func(id, payoff string) *engine.Node { return &engine.Node{ID: id, Kind: engine.End, Payoff: payoff} }
	season := &engine.Node{ID: "season", Kind: engine.Chance, Name: "Footfall", Branches: []*engine.Branch{
		{Label: "Busy summer", Probability: "0.35", To: end("busy", "21474.50")},
		{Label: "Washed-out summer", Probability: "rest", To: end("wet", "-7411.75")},
	}}
	root := &engine.Node{ID: "choice", Kind: engine.Decision, Name: "Kiosk lease", Branches: []*engine.Branch{
		{Label: "Sign the 11-month lease", Cash: "-11111.11", To: season},
		{Label: "Walk away", To: end("walk", "-1234.56")},
	}}
	return &engine.Project{Title: "Pop-up kiosk AVAWAY 11,111", Currency: "EUR", Decimals: 2, Root: root}
}

func TestExportPDFUnicodeValues(t *testing.T) {
	havePoppler(t)
	p := negativeProject()
	r := engine.Evaluate(p)
	require.Empty(t, r.Problems)
	dir := t.TempDir()
	for _, tile := range []bool{false, true} {
		path := filepath.Join(dir, "neg-"+strconv.FormatBool(tile)+".pdf")
		require.NoError(t, Export(p, r, path, ExportOptions{Tile: tile, Date: fixedDate}))
		text := pdfText(t, path)
		var want []string
		engine.Walk(p.Root, func(n *engine.Node, _ int) bool {
			v := r.ValueOf(n)
			if n.Kind == engine.End {
				v = r.PathValue(n)
			}
			want = append(want, engine.FormatValue(v, p.Decimals, p.Currency))
			for i, b := range n.Branches {
				if b.Cash != "" {
					want = append(want, engine.FormatValue(r.Cash(n, i), p.Decimals, p.Currency))
				}
			}
			return true
		})
		// Hand arithmetic: the wet path is −7,411.75 − 11,111.11; the chance
		// node is 0.35 × 21,474.50 + 0.65 × (−7,411.75) = 2,698.4375.
		assert.Subset(t, want, []string{"−18,522.86 EUR", "2,698.44 EUR", "−1,234.56 EUR", "−11,111.11 EUR"})
		for _, v := range want {
			assert.Contains(t, text, v, "tile=%v: the value exactly as FormatValue prints it", tile)
			if strings.HasPrefix(v, "−") {
				assert.NotContains(t, text, "-"+strings.TrimPrefix(v, "−"), "no hyphen stands in for the minus sign")
			}
		}
		assert.Contains(t, text, "−", "U+2212 MINUS SIGN")
	}
}

var bboxWord = regexp.MustCompile(`<word xMin="([\d.]+)" yMin="[\d.]+" xMax="([\d.]+)" yMax="[\d.]+">([^<]*)</word>`)

// The PDF embeds the faces FontMeasurer measures with: poppler, laying the
// words out from the embedded fonts' own widths, finds them exactly as wide
// as the layout measured them (kerning included), and right-aligned text
// ends on the margin.
func TestExportPDFTextIsAsWideAsMeasured(t *testing.T) {
	havePoppler(t)
	p := negativeProject()
	r := engine.Evaluate(p)
	path := filepath.Join(t.TempDir(), "widths.pdf")
	require.NoError(t, Export(p, r, path, ExportOptions{Date: fixedDate}))
	out, err := exec.Command("pdftotext", "-bbox", path, "-").CombinedOutput()
	require.NoError(t, err, "%s", out)
	boxes := map[string][2]float64{}
	for _, m := range bboxWord.FindAllStringSubmatch(string(out), -1) {
		x0, _ := strconv.ParseFloat(m[1], 64)
		x1, _ := strconv.ParseFloat(m[2], 64)
		boxes[m[3]] = [2]float64{x0, x1}
	}
	th := LightTheme()
	pw, _, _ := PageSize("A4", false)
	tests := []struct {
		word string
		size float64
		bold bool
	}{
		{"AVAWAY", th.TitleSize, true}, // heavily kerned
		{"11,111", th.TitleSize, true},
		{"Pop-up", th.TitleSize, true},
		{"2026", th.NoteSize * 1.2, false},
	}
	for _, tc := range tests {
		b, ok := boxes[tc.word]
		require.True(t, ok, "%q in %v", tc.word, boxes)
		want := FontMeasurer{}.TextWidth(tc.word, tc.size, tc.bold)
		assert.InDelta(t, want, b[1]-b[0], 0.002*tc.size*float64(len(tc.word)), "%q", tc.word)
	}
	assert.InDelta(t, pw-pageMargin, boxes["2026"][1], 0.05, "the right-aligned date ends on the margin")
	assert.Contains(t, boxes, "Walk")
}

func TestDrawTreeIntoReportCanvas(t *testing.T) {
	// The report draws the tree into part of its own PDF page.
	havePoppler(t)
	p, r := demoProject(t)
	path := filepath.Join(t.TempDir(), "report.pdf")
	err := writeAtomically(path, func(w io.Writer) error {
		return drawTreePage(w, p, r)
	})
	require.NoError(t, err)
	assert.Equal(t, 1, pdfPages(t, path))
	assert.Contains(t, pdfText(t, path), p.Root.Branches[0].Label)
}

func TestExportPNG(t *testing.T) {
	p, r := demoProject(t)
	dir := t.TempDir()
	svgPath := filepath.Join(dir, "tree.svg")
	require.NoError(t, Export(p, r, svgPath, ExportOptions{Date: fixedDate}))
	data, err := os.ReadFile(svgPath)
	require.NoError(t, err)
	_, wpt, hpt := svgTexts(t, data)
	require.Positive(t, wpt)
	for _, dpi := range []int{72, 96, 150, 300} {
		path := filepath.Join(dir, "tree.png")
		require.NoError(t, Export(p, r, path, ExportOptions{DPI: dpi, Date: fixedDate}))
		f, err := os.Open(path)
		require.NoError(t, err)
		img, err := png.Decode(f)
		f.Close()
		require.NoError(t, err)
		// same drawing as the SVG, whose size is in points (1/72 inch)
		assert.Equal(t, int(math.Ceil(wpt*float64(dpi)/72-0.02)), img.Bounds().Dx(), "dpi %d", dpi)
		assert.Equal(t, int(math.Ceil(hpt*float64(dpi)/72-0.02)), img.Bounds().Dy(), "dpi %d", dpi)
		// white paper by default
		rr, gg, bb, _ := img.At(1, 1).RGBA()
		assert.Equal(t, [3]uint32{0xffff, 0xffff, 0xffff}, [3]uint32{rr, gg, bb})
	}
}

func TestExportBadInput(t *testing.T) {
	p, r := demoProject(t)
	dir := t.TempDir()
	notDir := filepath.Join(dir, "plain-file")
	require.NoError(t, os.WriteFile(notDir, []byte("x"), 0o644))
	tests := []struct {
		name string
		path string
		opts ExportOptions
		want string
		big  bool
	}{
		{"unknown extension", filepath.Join(dir, "tree.gif"), ExportOptions{}, `unknown format ".gif"`, false},
		{"no extension", filepath.Join(dir, "tree"), ExportOptions{}, "no file extension", false},
		{"missing folder", filepath.Join(dir, "nope", "tree.png"), ExportOptions{}, "does not exist", false},
		{"folder is a file", filepath.Join(notDir, "tree.svg"), ExportOptions{}, "is not a folder", false},
		{"unwritable folder", "/proc/tree.pdf", ExportOptions{}, "cannot write in /proc", false},
		{"unknown theme", filepath.Join(dir, "tree.svg"), ExportOptions{Theme: "neon"}, `unknown theme "neon"`, false},
		{"unknown page", filepath.Join(dir, "tree.pdf"), ExportOptions{Page: "B5"}, `unknown page size "B5"`, false},
		{"bad dpi", filepath.Join(dir, "tree.png"), ExportOptions{DPI: 5}, "dpi 5 is out of range", false},
		{"image too large", filepath.Join(dir, "huge.png"), ExportOptions{DPI: 1200}, "lower the dpi", true},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			before, _ := os.ReadDir(dir)
			p, r := p, r
			if tc.big {
				p = bigTree(3000)
				r = engine.Evaluate(p)
			}
			err := Export(p, r, tc.path, tc.opts)
			require.Error(t, err)
			assert.Contains(t, err.Error(), tc.want)
			assert.Contains(t, err.Error(), tc.path, "the message names the file")
			after, _ := os.ReadDir(dir)
			assert.Equal(t, len(before), len(after), "no partial or temporary file is left")
		})
	}
	err := Export(&engine.Project{}, nil, filepath.Join(dir, "empty.svg"), ExportOptions{})
	assert.ErrorContains(t, err, "no tree")
}

func TestExportKeepsOldFileOnFailure(t *testing.T) {
	p := bigTree(3000)
	r := engine.Evaluate(p)
	path := filepath.Join(t.TempDir(), "tree.png")
	require.NoError(t, os.WriteFile(path, []byte("previous export"), 0o644))
	require.Error(t, Export(p, r, path, ExportOptions{DPI: 1200}))
	data, err := os.ReadFile(path)
	require.NoError(t, err)
	assert.Equal(t, "previous export", string(data))
}

// drawTreePage is how the report uses DrawTree: its own pdfdoc page, the tree
// in the lower two thirds.
func drawTreePage(w io.Writer, p *engine.Project, r *engine.Result) error {
	c := pdfdoc.New(vg.Length(595), vg.Length(842), pdfdoc.Info{})
	c.NextPage()
	rect := vg.Rectangle{Min: vg.Point{X: 40, Y: 40}, Max: vg.Point{X: 555, Y: 560}}
	if err := DrawTree(c, rect, p, r, DefaultOptions()); err != nil {
		return err
	}
	_, err := c.WriteTo(w)
	return err
}

func TestExportAnyTextAnyDepth(t *testing.T) {
	weird := []string{"\x00\x01\x02bad\xff\xfe", "\u202eevil override", "line\nbreak\ttab", "\U0001F600 🚢 東京 ﷺ", "\uFFFE\uFFFF", "<svg onload=x>&amp;", "]]> <!-- -->", strings.Repeat("Ω", 500), ""}
	root := &engine.Node{ID: "root", Kind: engine.Chance, Name: weird[0]}
	for i, w := range weird {
		root.Branches = append(root.Branches, &engine.Branch{Label: w, Probability: "1/9", Cash: w, To: &engine.Node{ID: "e" + strconv.Itoa(i), Kind: engine.End, Payoff: w}})
	}
	p := &engine.Project{Title: weird[1] + weird[3], Currency: "€", Root: root}
	r := engine.Evaluate(p) // full of problems: every one of them is drawn
	dir := t.TempDir()
	for _, ext := range Formats {
		path := filepath.Join(dir, "weird"+ext)
		require.NotPanics(t, func() { require.NoError(t, Export(p, r, path, ExportOptions{DPI: 72})) }, ext)
		if ext == ".svg" {
			data, err := os.ReadFile(path)
			require.NoError(t, err)
			svgTexts(t, data)
		}
	}
	deep := chain(2500)
	require.NoError(t, Export(deep, engine.Evaluate(deep), filepath.Join(dir, "deep.svg"), ExportOptions{}))
	require.NoError(t, Export(deep, engine.Evaluate(deep), filepath.Join(dir, "deep.pdf"), ExportOptions{}))
	err := Export(deep, nil, filepath.Join(dir, "deep-tiles.pdf"), ExportOptions{Tile: true})
	require.Error(t, err, "thousands of pages are refused")
	assert.Contains(t, err.Error(), "pages")
}

// benchPDF measures writePDF alone (layout done once): the drawing and the
// PDF encoding, with the file size per export.
func benchPDF(b *testing.B, n int, tile bool) {
	p, r := benchTree(b, n)
	opts := DefaultOptions()
	l := LayoutTree(p, r, FontMeasurer{}, opts)
	eo := ExportOptions{Page: "A3", Landscape: true, Tile: tile, Date: fixedDate}
	bg := color.NRGBA{0xff, 0xff, 0xff, 0xff}
	var size int64
	b.ResetTimer()
	start := cpuTime()
	for b.Loop() {
		cw := &byteCounter{}
		if err := writePDF(cw, p, r, l, opts, eo, bg); err != nil {
			b.Fatal(err)
		}
		size = cw.n
	}
	reportCPU(b, start)
	b.ReportMetric(float64(size), "bytes")
}

type byteCounter struct{ n int64 }

func (c *byteCounter) Write(p []byte) (int, error) { c.n += int64(len(p)); return len(p), nil }

func BenchmarkPDFFit1k(b *testing.B)   { benchPDF(b, 1000, false) }
func BenchmarkPDFTiles1k(b *testing.B) { benchPDF(b, 1000, true) }
