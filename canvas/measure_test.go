package canvas

import (
	"sync"
	"testing"

	"github.com/stretchr/testify/assert"
)

// The lock-free tables must give gonum/plot's font.Face.Width (an independent
// implementation) on the first call, when they fill, and on later calls, when
// they are read, also while many goroutines measure at once.
func TestFontMeasurerFastTablesMatchGonum(t *testing.T) {
	texts := []string{
		"AV Wa To Ty LT P. Yo r, f. -0.5",
		"−1,234.56 EUR … — – € £ × ¥",
		"Te−Vo…AT",    // slotted runes mixed with kerning pairs
		"A−V ő A東V ñ", // runes without a slot between ones with
		"\xffA\xfeV",  // invalid UTF-8
	}
	for a := rune(32); a < 127; a++ { // every printable ASCII pair once
		row := make([]rune, 0, 2*95)
		for b := rune(32); b < 127; b++ {
			row = append(row, a, b)
		}
		texts = append(texts, string(row))
	}
	want := map[bool][]float64{}
	for _, bold := range []bool{false, true} {
		face := fileFace(11, bold)
		for _, s := range texts {
			want[bold] = append(want[bold], float64(face.Width(s).Points()))
		}
	}
	for pass := 0; pass < 2; pass++ {
		var wg sync.WaitGroup
		for w := 0; w < 4; w++ {
			wg.Add(1)
			go func() {
				defer wg.Done()
				for i, s := range texts {
					for _, bold := range []bool{false, true} {
						assert.InDelta(t, want[bold][i], FontMeasurer{}.TextWidth(s, 11, bold), 1e-9, "pass %d %q bold=%v", pass, s, bold)
					}
				}
			}()
		}
		wg.Wait()
	}
}

// countingMeasurer is FontMeasurer behind another type, so measureCache keeps
// its width tables for it, and counts the calls that reach the font.
type countingMeasurer struct{ calls *int }

func (c countingMeasurer) TextWidth(s string, size float64, bold bool) float64 {
	*c.calls++
	return FontMeasurer{}.TextWidth(s, size, bold)
}

// With FontMeasurer the cache measures directly; with any other measurer it
// remembers widths. Both must give the same texts and widths, cut or not.
func TestMeasureCacheDirectAndRemembered(t *testing.T) {
	calls := 0
	direct := newMeasureCache(FontMeasurer{})
	kept := newMeasureCache(countingMeasurer{&calls})
	assert.True(t, direct.direct)
	assert.False(t, kept.direct)
	texts := []string{"", "Short", "Rent a temporary chiller for the whole summer season", "−1,234.56", "AVAWAY To Ty AVAWAY To Ty AVAWAY To Ty"}
	for round := 0; round < 2; round++ {
		for _, s := range texts {
			for _, max := range []float64{20, 60, 500} {
				assert.Equal(t, direct.fit(s, 10, false, max), kept.fit(s, 10, false, max), "%q max %v", s, max)
			}
			assert.Equal(t, direct.width(direct.table(9, true), s, 9, true), kept.width(kept.table(9, true), s, 9, true), "%q", s)
		}
		if round == 0 {
			calls = 0
		}
	}
	assert.Zero(t, calls, "the second round is answered from the tables")
}
