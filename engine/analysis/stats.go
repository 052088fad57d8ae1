package analysis

import (
	"math"
	"slices"

	"gonum.org/v1/gonum/stat"
)

// moments accumulates count, mean and the sum of squared deviations in one pass
// (Welford 1962, "Note on a method for calculating corrected sums of squares and
// products", Technometrics 4(3)); two accumulators merge exactly as in Chan, Golub &
// LeVeque 1979, "Updating formulae and a pairwise algorithm for computing sample
// variances". Merging in a fixed order keeps results independent of worker count.
type moments struct {
	n        int
	mean, m2 float64
	min, max float64
}

func (a *moments) add(x float64) {
	a.n++
	if a.n == 1 {
		a.min, a.max = x, x
	} else {
		a.min = math.Min(a.min, x)
		a.max = math.Max(a.max, x)
	}
	d := x - a.mean
	a.mean += d / float64(a.n)
	a.m2 += d * (x - a.mean)
}

func (a *moments) merge(b moments) {
	if b.n == 0 {
		return
	}
	if a.n == 0 {
		*a = b
		return
	}
	n := a.n + b.n
	d := b.mean - a.mean
	a.mean += d * float64(b.n) / float64(n)
	a.m2 += b.m2 + d*d*float64(a.n)*float64(b.n)/float64(n)
	a.n = n
	a.min = math.Min(a.min, b.min)
	a.max = math.Max(a.max, b.max)
}

func (a *moments) sd() float64 {
	if a.n < 2 {
		return 0
	}
	return math.Sqrt(a.m2 / float64(a.n-1))
}

// Summary describes the distribution of one simulated quantity.
type Summary struct {
	Count                  int     // iterations counted
	Mean, SD, SE, Min, Max float64 // SE = SD/√Count, the standard error of the mean
	P5, P10, P50, P90, P95 float64
	PercentileSample       int // iterations the percentiles are computed from
}

// summarize fills a Summary from the moments and the kept sample (NaN entries,
// from invalid iterations, are skipped). Percentiles use linear interpolation of
// the sorted sample (gonum stat.Quantile with stat.LinInterp).
func summarize(m moments, sample []float64) Summary {
	s := Summary{Count: m.n, Mean: m.mean, SD: m.sd(), Min: m.min, Max: m.max}
	if m.n > 0 {
		s.SE = s.SD / math.Sqrt(float64(m.n))
	}
	sorted := sortedFinite(sample)
	s.PercentileSample = len(sorted)
	if len(sorted) == 0 {
		return s
	}
	q := func(p float64) float64 { return stat.Quantile(p, stat.LinInterp, sorted, nil) }
	s.P5, s.P10, s.P50, s.P90, s.P95 = q(0.05), q(0.10), q(0.50), q(0.90), q(0.95)
	return s
}

func sortedFinite(sample []float64) []float64 {
	out := make([]float64, 0, len(sample))
	for _, x := range sample {
		if !math.IsNaN(x) {
			out = append(out, x)
		}
	}
	slices.Sort(out)
	return out
}

// Histogram counts a sample in equal-width bins between its smallest and largest value.
type Histogram struct {
	Lo, Width float64
	Counts    []int
}

func histogram(sample []float64, bins int) Histogram {
	sorted := sortedFinite(sample)
	if len(sorted) == 0 || bins < 1 {
		return Histogram{}
	}
	lo, hi := sorted[0], sorted[len(sorted)-1]
	h := Histogram{Lo: lo, Counts: make([]int, bins)}
	if hi == lo {
		h.Width = 1
		h.Lo = lo - 0.5
		h.Counts = []int{len(sorted)}
		return h
	}
	h.Width = (hi - lo) / float64(bins)
	for _, x := range sorted {
		i := int((x - lo) / h.Width)
		if i >= bins {
			i = bins - 1
		}
		h.Counts[i]++
	}
	return h
}
