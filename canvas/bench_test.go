package canvas

import (
	"io"
	"syscall"
	"testing"
	"time"

	"github.com/ramify-app/ramify/engine"
)

func benchTree(b *testing.B, n int) (*engine.Project, *engine.Result) {
	b.Helper()
	p := bigTree(n)
	r := engine.Evaluate(p)
	if !r.Valid() {
		b.Fatalf("bench tree invalid: %v", r.Problems[0])
	}
	return p, r
}

// benchLayout measures the re-layout the editor does after every edit: the
// layouter already holds measured widths and formatted numbers.
func benchLayout(b *testing.B, n int) {
	p, r := benchTree(b, n)
	lo := NewLayouter(FontMeasurer{})
	opts := DefaultOptions()
	l := lo.Layout(p, r, opts)
	b.ReportMetric(float64(len(l.Boxes)), "nodes")
	b.ResetTimer()
	start := cpuTime()
	for b.Loop() {
		lo.Layout(p, r, opts)
	}
	reportCPU(b, start)
}

// cpuTime is the CPU time used by the process so far (all threads, GC
// included). The benchmarks report it per operation beside the wall time,
// because on a shared, busy machine wall time mostly measures waiting.
func cpuTime() time.Duration {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}

func reportCPU(b *testing.B, start time.Duration) {
	if b.N > 0 {
		b.ReportMetric(float64(cpuTime()-start)/float64(b.N), "cpu-ns/op")
	}
}

func BenchmarkLayout10k(b *testing.B)  { benchLayout(b, 10_000) }
func BenchmarkLayout100k(b *testing.B) { benchLayout(b, 100_000) }

// BenchmarkLayout10kCold is the first layout of a tree: every number formatted
// and every text measured with the real font.
func BenchmarkLayout10kCold(b *testing.B) {
	p, r := benchTree(b, 10_000)
	opts := DefaultOptions()
	start := cpuTime()
	for b.Loop() {
		NewLayouter(FontMeasurer{}).Layout(p, r, opts)
	}
	reportCPU(b, start)
}

// BenchmarkLayout10kAfterEdit changes one payoff and re-evaluates outside the
// timer, then times the re-layout: only the changed numbers are formatted.
// (Wall time only: the CPU clock would include the evaluation.)
func BenchmarkLayout10kAfterEdit(b *testing.B) {
	p, r := benchTree(b, 10_000)
	lo := NewLayouter(FontMeasurer{})
	opts := DefaultOptions()
	lo.Layout(p, r, opts)
	var end *engine.Node
	engine.Walk(p.Root, func(n *engine.Node, _ int) bool {
		if end == nil && n.Kind == engine.End {
			end = n
		}
		return end == nil
	})
	payoffs := []string{"123", "456"}
	i := 0
	for b.Loop() {
		b.StopTimer()
		end.Payoff = payoffs[i%2]
		i++
		r = engine.Evaluate(p)
		r.PathValue(p.Root) // the engine computes path values lazily: keep that out of the layout's time
		b.StartTimer()
		lo.Layout(p, r, opts)
	}
}

func BenchmarkScene10kVisible(b *testing.B) {
	p, r := benchTree(b, 10_000)
	opts := DefaultOptions()
	l := NewLayouter(FontMeasurer{}).Layout(p, r, opts)
	vp := Rect{l.Bounds.W / 2, l.Bounds.H / 2, 1600, 1000} // a large window's worth
	s := Build(p, r, l, opts, vp)
	b.ReportMetric(float64(len(s.Prims)), "prims")
	b.ResetTimer()
	start := cpuTime()
	for b.Loop() {
		Build(p, r, l, opts, vp)
	}
	reportCPU(b, start)
}

// BenchmarkSVG10k is the whole SVG export of a 10,000-node tree: layout,
// scene and writing.
func BenchmarkSVG10k(b *testing.B) {
	p, r := benchTree(b, 10_000)
	start := cpuTime()
	for b.Loop() {
		opts := DefaultOptions()
		l := LayoutTree(p, r, FontMeasurer{}, opts)
		if err := WriteSVG(io.Discard, Build(p, r, l, opts, Rect{}), exportMargin, LightTheme().Background); err != nil {
			b.Fatal(err)
		}
	}
	reportCPU(b, start)
}
