package engine_test

import (
	"runtime"
	"testing"

	"github.com/ramify-app/ramify/engine"
	"github.com/ramify-app/ramify/engine/enginetest"
)

// Issue targets: roll-back of 10,000 nodes ≤ 2 ms, 1,000,000 nodes ≤ 1 s;
// loaded memory ≤ 1 KiB per node; load + save of 100,000 nodes ≤ 1 s.

func benchRollBack(b *testing.B, n int) {
	p := enginetest.Wide(n)
	engine.Evaluate(p) // compile formulas once, as the editor does
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		engine.Evaluate(p)
	}
	b.ReportMetric(float64(len(p.Nodes())), "nodes")
}

func BenchmarkRollBack10k(b *testing.B) { benchRollBack(b, 10_000) }
func BenchmarkRollBack1M(b *testing.B)  { benchRollBack(b, 1_000_000) }

func BenchmarkLoadedMemoryPerNode(b *testing.B) {
	data, err := engine.Marshal(enginetest.Wide(100_000))
	if err != nil {
		b.Fatal(err)
	}
	for i := 0; i < b.N; i++ {
		runtime.GC()
		var before, after runtime.MemStats
		runtime.ReadMemStats(&before)
		p, err := engine.Parse(data, "bench")
		if err != nil {
			b.Fatal(err)
		}
		engine.Evaluate(p)
		runtime.GC()
		runtime.ReadMemStats(&after)
		nodes := len(p.Nodes())
		b.ReportMetric(float64(after.HeapAlloc-before.HeapAlloc)/float64(nodes), "bytes/node")
		runtime.KeepAlive(p)
	}
}

func BenchmarkLoadSave100k(b *testing.B) {
	data, err := engine.Marshal(enginetest.Wide(100_000))
	if err != nil {
		b.Fatal(err)
	}
	b.SetBytes(int64(len(data)))
	for i := 0; i < b.N; i++ {
		p, err := engine.Parse(data, "bench")
		if err != nil {
			b.Fatal(err)
		}
		if _, err := engine.Marshal(p); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkFastRoll1k(b *testing.B) {
	m, err := engine.CompileFast(enginetest.Wide(1000))
	if err != nil {
		b.Fatal(err)
	}
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		_ = m.Roll()
	}
}

// The editor also asks for path figures (end payoffs, path probabilities) on every edit.
func BenchmarkRollBackWithPaths10k(b *testing.B) {
	p := enginetest.Wide(10_000)
	engine.Evaluate(p)
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		r := engine.Evaluate(p)
		_ = r.PathValue(p.Root)
	}
}
