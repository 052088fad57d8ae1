package pdfdoc

import (
	"bytes"
	"html"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"sort"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	xfont "golang.org/x/image/font"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/font/liberation"
	"gonum.org/v1/plot/vg"
)

var faces = font.NewCache(liberation.Collection())

func face(size vg.Length, bold bool) font.Face {
	f := font.Font{Typeface: "Liberation", Variant: "Sans"}
	if bold {
		f.Weight = xfont.WeightBold
	}
	return faces.Lookup(f, size)
}

func needPoppler(t *testing.T) {
	t.Helper()
	for _, tool := range []string{"pdftotext", "pdffonts", "pdfinfo"} {
		if _, err := exec.LookPath(tool); err != nil {
			t.Skipf("%s not installed (apt-get install poppler-utils); skipping the PDF reader check", tool)
		}
	}
}

func write(t *testing.T, c *Canvas) string {
	t.Helper()
	path := filepath.Join(t.TempDir(), "out.pdf")
	var buf bytes.Buffer
	n, err := c.WriteTo(&buf)
	require.NoError(t, err)
	assert.Equal(t, int64(buf.Len()), n)
	require.NoError(t, os.WriteFile(path, buf.Bytes(), 0o644))
	return path
}

func tool(t *testing.T, name string, args ...string) string {
	t.Helper()
	out, err := exec.Command(name, args...).CombinedOutput()
	require.NoError(t, err, "%s: %s", name, out)
	return string(out)
}

type word struct {
	text       string
	xMin, xMax float64
}

var wordRE = regexp.MustCompile(`<word xMin="([\d.]+)" yMin="[\d.]+" xMax="([\d.]+)" yMax="[\d.]+">([^<]*)</word>`)

// words reads every word's box with poppler, which places glyphs by the
// widths the embedded font declares: an independent reading of the file.
func words(t *testing.T, path string) []word {
	var out []word
	for _, m := range wordRE.FindAllStringSubmatch(tool(t, "pdftotext", "-bbox", path, "-"), -1) {
		x0, _ := strconv.ParseFloat(m[1], 64)
		x1, _ := strconv.ParseFloat(m[2], 64)
		out = append(out, word{html.UnescapeString(m[3]), x0, x1})
	}
	return out
}

func find(t *testing.T, ws []word, text string) word {
	t.Helper()
	for _, w := range ws {
		if w.text == text {
			return w
		}
	}
	require.Failf(t, "word not found", "%q in %v", text, ws)
	return word{}
}

func TestUnicodeTextSurvives(t *testing.T) {
	needPoppler(t)
	texts := []string{"−1,234.56 EUR", "3 × 0.25 ≤ 1 – “quoted” €5", "Zürich déjà vu größer", "Ωmega ±2 °C"}
	c := New(vg.Points(400), vg.Points(300), Info{Title: "Coût − × 東京", Date: time.Date(2026, 3, 14, 0, 0, 0, 0, time.UTC)})
	c.NextPage()
	for i, s := range texts {
		c.FillString(face(12, i%2 == 1), vg.Point{X: 20, Y: vg.Length(260 - 30*i)}, s)
	}
	c.NextPage()
	c.FillString(face(12, false), vg.Point{X: 20, Y: 260}, "second page")
	assert.Equal(t, 2, c.Pages())
	path := write(t, c)
	text := tool(t, "pdftotext", "-enc", "UTF-8", "-layout", path, "-")
	for _, s := range texts {
		assert.Contains(t, text, s, "true minus sign and other non-Windows-1252 text come out as drawn")
	}
	assert.Contains(t, text, "second page")
	info := tool(t, "pdfinfo", "-enc", "UTF-8", path)
	assert.Regexp(t, `(?m)^Title:\s+Coût − × 東京$`, info)
	assert.Regexp(t, `(?m)^Pages:\s+2$`, info)
}

func TestOneEmbeddedFontPerFace(t *testing.T) {
	needPoppler(t)
	c := New(vg.Points(300), vg.Points(300), Info{})
	c.NextPage()
	for i, size := range []vg.Length{6, 8.5, 10, 14, 30} {
		c.FillString(face(size, false), vg.Point{X: 10, Y: vg.Length(280 - 40*i)}, "regular")
		c.FillString(face(size, true), vg.Point{X: 150, Y: vg.Length(280 - 40*i)}, "bold")
	}
	out := tool(t, "pdffonts", write(t, c))
	lines := strings.Split(strings.TrimSpace(out), "\n")[2:] // after the two heading lines
	require.Len(t, lines, 2, "one font per face whatever the size:\n%s", out)
	var names []string
	for _, l := range lines {
		names = append(names, strings.Fields(strings.ToLower(l))[0])
	}
	sort.Strings(names) // fpdf writes fonts in map order
	assert.Regexp(t, `liberationsans-\d+$`, names[0])
	assert.Regexp(t, `liberationsans-bold-\d+$`, names[1])
	for _, l := range lines {
		assert.Regexp(t, `CID TrueType\s+Identity-H\s+yes\s+\S+\s+yes`, l, "embedded, with a Unicode map")
	}
}

// What the layout measures with gonum's Face.Width (glyph advances plus
// kerning) must be what a PDF reader lays out, or labels run into lines.
func TestDrawnWidthIsMeasuredWidth(t *testing.T) {
	needPoppler(t)
	words1 := []string{"AVAWAY", "11,111.11", "Tokyo", "Type", "−7,411.75", "LTAV", "plain"}
	const x0 = 20
	c := New(vg.Points(500), vg.Points(600), Info{})
	c.NextPage()
	y := vg.Length(560)
	for _, bold := range []bool{false, true} {
		for _, size := range []vg.Length{9, 24} {
			for _, w := range words1 {
				c.FillString(face(size, bold), vg.Point{X: x0, Y: y}, w)
				y -= size * 1.1
			}
		}
	}
	ws := words(t, write(t, c))
	i := 0
	for _, bold := range []bool{false, true} {
		for _, size := range []vg.Length{9, 24} {
			for _, w := range words1 {
				got := ws[i]
				i++
				require.Equal(t, w, got.text)
				f := face(size, bold)
				want := f.Width(w).Points()
				assert.InDelta(t, x0, got.xMin, 0.02, "%q starts at the drawing point", w)
				// poppler reads widths the PDF declares in 1/1000 em: allow that rounding
				assert.InDelta(t, want, got.xMax-got.xMin, 0.002*float64(size)*float64(len(w)), "%q bold=%v size=%v", w, bold, size)
			}
		}
	}
	// The check can tell: without kerning "AVAWAY" at 24 pt is over 5 points wider.
	f := face(24, false)
	var plain vg.Length
	for _, r := range "AVAWAY" {
		plain += f.Width(string(r))
	}
	assert.Greater(t, (plain - f.Width("AVAWAY")).Points(), 5.0)
}

// Text after a rune the font lacks (CJK) or cannot hold (emoji) still starts
// where the measured width puts it, and nothing panics.
func TestMissingGlyphsKeepTheRestInPlace(t *testing.T) {
	needPoppler(t)
	tests := []struct{ lead, tail string }{
		{"東京 ", "office"},
		{"ship 🚢 ", "Zürich"},
		{"\U0001F600\U0001F600 ", "tail"},
	}
	c := New(vg.Points(400), vg.Points(300), Info{})
	c.NextPage()
	f := face(14, false)
	for i, tc := range tests {
		c.FillString(f, vg.Point{X: 30, Y: vg.Length(260 - 30*i)}, tc.lead+tc.tail)
	}
	require.NoError(t, c.Err())
	ws := words(t, write(t, c))
	for _, tc := range tests {
		w := find(t, ws, tc.tail)
		assert.InDelta(t, 30+f.Width(tc.lead).Points(), w.xMin, 0.02, "%q after %q", tc.tail, tc.lead)
	}
	find(t, ws, "\uFFFD") // astral runes are written as U+FFFD
}

func TestSameDrawingSameBytes(t *testing.T) {
	draw := func() []byte {
		c := New(vg.Points(200), vg.Points(100), Info{Title: "t", Date: time.Date(2026, 3, 14, 0, 0, 0, 0, time.UTC)})
		c.NextPage()
		c.FillString(face(10, false), vg.Point{X: 10, Y: 50}, "regular −1")
		c.FillString(face(10, true), vg.Point{X: 10, Y: 20}, "bold ×2")
		var buf bytes.Buffer
		_, err := c.WriteTo(&buf)
		require.NoError(t, err)
		return buf.Bytes()
	}
	first := draw()
	for range 5 {
		assert.True(t, bytes.Equal(first, draw()), "a fixed date gives a reproducible file")
	}
}
