package canvas

import (
	"strings"
	"sync"
	"unicode"
	"unicode/utf8"

	stdfont "golang.org/x/image/font"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/font/liberation"
	"gonum.org/v1/plot/vg"
)

// TextMeasurer gives the advance width of a single line of text, in points,
// with the real metrics of the font a renderer draws with.
type TextMeasurer interface {
	TextWidth(text string, size float64, bold bool) float64
}

// Files are drawn with the Liberation Sans faces gonum/plot embeds, so the
// file measurer uses exactly those metrics.
var (
	fontOnce  sync.Once
	fontCache *font.Cache
)

func fileFonts() *font.Cache {
	fontOnce.Do(func() { fontCache = font.NewCache(liberation.Collection()) })
	return fontCache
}

// fileFace is the face files are drawn with at the given size and weight.
func fileFace(size float64, bold bool) font.Face {
	f := font.Font{Typeface: "Liberation", Variant: "Sans"}
	if bold {
		f.Weight = stdfont.WeightBold
	}
	return fileFonts().Lookup(f, vg.Length(size))
}

// FontMeasurer measures with the Liberation Sans metrics used by the SVG, PDF
// and PNG renderers. The zero value is ready to use and safe for one goroutine.
type FontMeasurer struct{}

func (FontMeasurer) TextWidth(text string, size float64, bold bool) float64 {
	if text == "" || size <= 0 {
		return 0
	}
	face := fileFace(size, bold)
	return float64(face.Width(text).Points())
}

// measureCache remembers widths by string so re-layout after an edit measures
// only the texts that changed. One map per style keeps the key a plain string.
type measureCache struct {
	m      TextMeasurer
	widths map[styleKey]map[string]float64
	cut    map[cutKey]cutText
}

type styleKey struct {
	size float64
	bold bool
}

type cutKey struct {
	text  string
	style styleKey
	max   float64
}

type cutText struct {
	text  string
	width float64
	cut   bool
}

func newMeasureCache(m TextMeasurer) *measureCache {
	return &measureCache{m: m, widths: map[styleKey]map[string]float64{}, cut: map[cutKey]cutText{}}
}

func (c *measureCache) table(size float64, bold bool) map[string]float64 {
	k := styleKey{size, bold}
	t := c.widths[k]
	if t == nil {
		t = map[string]float64{}
		c.widths[k] = t
	}
	return t
}

func (c *measureCache) width(t map[string]float64, s string, size float64, bold bool) float64 {
	if s == "" {
		return 0
	}
	if w, ok := t[s]; ok {
		return w
	}
	w := c.m.TextWidth(s, size, bold)
	t[s] = w
	return w
}

// fit returns s cut with an ellipsis so it is at most max wide.
func (c *measureCache) fit(s string, size float64, bold bool, max float64) cutText {
	k := cutKey{s, styleKey{size, bold}, max}
	if ct, ok := c.cut[k]; ok {
		return ct
	}
	t := c.table(size, bold)
	w := c.width(t, s, size, bold)
	ct := cutText{text: s, width: w}
	if w > max {
		ct = cutToWidth(s, max, func(x string) float64 { return c.width(t, x, size, bold) })
	}
	c.cut[k] = ct
	return ct
}

const ellipsis = "…"

// cutToWidth keeps the longest rune prefix that, followed by an ellipsis, fits max.
func cutToWidth(s string, max float64, width func(string) float64) cutText {
	runes := []rune(s)
	lo, hi := 0, len(runes) // lo fits (possibly empty prefix), find largest
	for lo < hi {
		mid := (lo + hi + 1) / 2
		if width(strings.TrimRightFunc(string(runes[:mid]), unicode.IsSpace)+ellipsis) <= max {
			lo = mid
		} else {
			hi = mid - 1
		}
	}
	out := strings.TrimRightFunc(string(runes[:lo]), unicode.IsSpace) + ellipsis
	return cutText{text: out, width: width(out), cut: true}
}

// cleanText makes any user text safe to draw on one line: invalid UTF-8 is
// replaced, control characters (including newlines and tabs) become spaces,
// and zero-width or bidi-control runes that upset some renderers are dropped.
func cleanText(s string) string {
	clean := true
	for i := 0; i < len(s); i++ {
		if c := s[i]; c < 0x20 || c == 0x7f || c >= 0x80 {
			clean = false
			break
		}
	}
	if clean {
		return s
	}
	if !utf8.ValidString(s) {
		s = strings.ToValidUTF8(s, "\uFFFD")
	}
	var b strings.Builder
	b.Grow(len(s))
	for _, r := range s {
		switch {
		case r == '\n' || r == '\t' || r == '\r':
			b.WriteByte(' ')
		case unicode.IsControl(r), r >= 0xFFFE && r <= 0xFFFF, unicode.Is(unicode.Cs, r):
			// dropped
		case unicode.Is(unicode.Bidi_Control, r):
			// dropped: keeps reading order stable in every renderer
		default:
			b.WriteRune(r)
		}
	}
	return b.String()
}
