package canvas

import (
	"strings"
	"sync"
	"sync/atomic"
	"unicode"
	"unicode/utf8"

	stdfont "golang.org/x/image/font"
	"golang.org/x/image/font/opentype"
	"golang.org/x/image/font/sfnt"
	"golang.org/x/image/math/fixed"
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
// and PNG renderers. It sums glyph advances and kerning in font units exactly
// as gonum/plot's font.Face.Width does (unhinted), but remembers each rune's
// glyph and each pair's kerning, which makes the first layout of a large tree
// several times faster. The zero value is ready and safe for concurrent use.
type FontMeasurer struct{}

func (FontMeasurer) TextWidth(text string, size float64, bold bool) float64 {
	if text == "" || size <= 0 {
		return 0
	}
	m := &metrics[0]
	if bold {
		m = &metrics[1]
	}
	return m.width(text, size)
}

var metrics = [2]fontMetrics{{bold: false}, {bold: true}}

type glyph struct {
	idx sfnt.GlyphIndex
	adv fixed.Int26_6
}

// fastRunes is how many runes have a slot in the lock-free tables: ASCII plus
// the few other characters the layout itself writes (see slotOf).
const fastRunes = 136

// slotOf gives r's slot in the lock-free tables, or -1.
func slotOf(r rune) int {
	if r < 128 {
		return int(r)
	}
	switch r {
	case '−': // the minus sign of negative values
		return 128
	case '…': // cut texts
		return 129
	case '—': // values that could not be computed
		return 130
	case '–':
		return 131
	case '€':
		return 132
	case '£':
		return 133
	case '×':
		return 134
	case '¥':
		return 135
	}
	return -1
}

// fontMetrics caches one face's metrics. Runes with a slot (slotOf) and pairs
// of them are read without a lock: a table entry is written once, atomically,
// with a flag bit marking it known, and always with the same value. Other runes
// and pairs go through maps under the mutex.
type fontMetrics struct {
	bold bool
	once sync.Once
	font *opentype.Font
	upem fixed.Int26_6

	fastGlyph [fastRunes]atomic.Uint64             // known<<63 | idx<<32 | uint32(adv)
	fastKern  [fastRunes * fastRunes]atomic.Uint64 // known | uint32(kern)

	mu   sync.Mutex
	buf  sfnt.Buffer
	gl   map[rune]glyph
	kern map[[2]sfnt.GlyphIndex]fixed.Int26_6
}

const known = 1 << 63

func (m *fontMetrics) init() {
	m.font = fileFace(10, m.bold).Face
	m.upem = fixed.Int26_6(m.font.UnitsPerEm())
	m.gl = map[rune]glyph{}
	m.kern = map[[2]sfnt.GlyphIndex]fixed.Int26_6{}
}

// glyphLocked looks r up in the font; a rune the font cannot map takes no room.
func (m *fontMetrics) glyphLocked(r rune) glyph {
	g, ok := m.gl[r]
	if ok {
		return g
	}
	idx, err := m.font.GlyphIndex(&m.buf, r)
	if err == nil {
		g.idx = idx
		g.adv, err = m.font.GlyphAdvance(&m.buf, idx, m.upem, stdfont.HintingNone)
	}
	if err != nil {
		g = glyph{}
	}
	m.gl[r] = g
	return g
}

func (m *fontMetrics) kernLocked(a, b sfnt.GlyphIndex) fixed.Int26_6 {
	pair := [2]sfnt.GlyphIndex{a, b}
	k, ok := m.kern[pair]
	if !ok {
		var err error
		k, err = m.font.Kern(&m.buf, a, b, m.upem, stdfont.HintingNone)
		if err != nil {
			k = 0
		}
		m.kern[pair] = k
	}
	return k
}

// glyphOf is r's glyph; slot is slotOf(r).
func (m *fontMetrics) glyphOf(r rune, slot int) glyph {
	if slot >= 0 {
		if v := m.fastGlyph[slot].Load(); v&known != 0 {
			return glyph{idx: sfnt.GlyphIndex(v >> 32), adv: fixed.Int26_6(int32(uint32(v)))}
		}
	}
	m.mu.Lock()
	g := m.glyphLocked(r)
	m.mu.Unlock()
	if slot >= 0 {
		m.fastGlyph[slot].Store(known | uint64(g.idx)<<32 | uint64(uint32(g.adv)))
	}
	return g
}

// kernOf is the kerning between glyphs a and b; when both runes have a slot,
// slots is their pair's index in fastKern, otherwise -1.
func (m *fontMetrics) kernOf(a, b sfnt.GlyphIndex, slots int) fixed.Int26_6 {
	if slots >= 0 {
		if v := m.fastKern[slots].Load(); v&known != 0 {
			return fixed.Int26_6(int32(uint32(v)))
		}
	}
	m.mu.Lock()
	k := m.kernLocked(a, b)
	m.mu.Unlock()
	if slots >= 0 {
		m.fastKern[slots].Store(known | uint64(uint32(k)))
	}
	return k
}

func (m *fontMetrics) width(s string, size float64) float64 {
	m.once.Do(m.init)
	total, ok := m.asciiWidth(s)
	if !ok {
		total = m.runeWidth(s)
	}
	return float64(total) * size / float64(m.upem)
}

// asciiWidth sums a text whose runes (ASCII and the slotted few) and pairs
// are all in the lock-free tables; ok is false for any other text.
func (m *fontMetrics) asciiWidth(s string) (total fixed.Int26_6, ok bool) {
	prev := -1
	for i := 0; i < len(s); i++ {
		c := int(s[i])
		if c >= 0x80 {
			r, size := utf8.DecodeRuneInString(s[i:])
			if c = slotOf(r); c < 0 || r == utf8.RuneError {
				return 0, false
			}
			i += size - 1
		}
		g := m.fastGlyph[c].Load()
		if g&known == 0 {
			return 0, false
		}
		if prev >= 0 {
			k := m.fastKern[prev*fastRunes+c].Load()
			if k&known == 0 {
				return 0, false
			}
			total += fixed.Int26_6(int32(uint32(k)))
		}
		total += fixed.Int26_6(int32(uint32(g)))
		prev = c
	}
	return total, true
}

// runeWidth sums any text, filling the tables and maps as it goes.
func (m *fontMetrics) runeWidth(s string) fixed.Int26_6 {
	var total fixed.Int26_6
	var prev glyph
	prevSlot := -1
	for i, r := range s {
		slot := slotOf(r)
		g := m.glyphOf(r, slot)
		if i > 0 {
			pair := -1
			if slot >= 0 && prevSlot >= 0 {
				pair = prevSlot*fastRunes + slot
			}
			total += m.kernOf(prev.idx, g.idx, pair)
		}
		total += g.adv
		prev, prevSlot = g, slot
	}
	return total
}

// measureCache remembers widths by string so re-layout after an edit measures
// only the texts that changed. One map per style keeps the key a plain string.
// FontMeasurer's own tables make measuring cheaper than a map look-up, so with
// it the cache measures directly and keeps only the cut texts.
type measureCache struct {
	m      TextMeasurer
	direct bool
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
	_, direct := m.(FontMeasurer)
	return &measureCache{m: m, direct: direct, widths: map[styleKey]map[string]float64{}, cut: map[cutKey]cutText{}}
}

func (c *measureCache) table(size float64, bold bool) map[string]float64 {
	if c.direct {
		return nil
	}
	k := styleKey{size, bold}
	t := c.widths[k]
	if t == nil {
		t = map[string]float64{}
		c.widths[k] = t
	}
	return t
}

// width measures s; t is the table of its style (nil when measuring directly).
func (c *measureCache) width(t map[string]float64, s string, size float64, bold bool) float64 {
	if s == "" {
		return 0
	}
	if c.direct {
		return c.m.TextWidth(s, size, bold)
	}
	if w, ok := t[s]; ok {
		return w
	}
	w := c.m.TextWidth(s, size, bold)
	t[s] = w
	return w
}

// fit returns s cut with an ellipsis so it is at most max wide. Only cut
// texts are remembered: a text that fits costs one width look-up anyway.
func (c *measureCache) fit(s string, size float64, bold bool, max float64) cutText {
	t := c.table(size, bold)
	w := c.width(t, s, size, bold)
	if w <= max {
		return cutText{text: s, width: w}
	}
	k := cutKey{s, styleKey{size, bold}, max}
	if ct, ok := c.cut[k]; ok {
		return ct
	}
	ct := cutToWidth(s, max, func(x string) float64 { return c.width(t, x, size, bold) })
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
