package analysis

import (
	"context"
	"testing"
	"time"

	"github.com/ramify-app/ramify/engine"
)

// Targets from the sensitivity issue: a tornado of 50 variables on a 1,000-node
// tree within 100 ms, a 100 × 100 two-way grid on a 1,000-node tree within 2 s on 2 cores.

func BenchmarkTornado50VarsOn1000Nodes(b *testing.B) {
	p := withVariables(11, 1000, 50)
	r := engine.Evaluate(p)
	if !r.Valid() {
		b.Fatal(r.Problems)
	}
	b.ResetTimer()
	defer reportCPU(b, processCPU())
	for b.Loop() {
		tor, err := Tornado(context.Background(), p, r)
		if err != nil || len(tor.Bars) != 50 {
			b.Fatal(err, len(tor.Bars))
		}
	}
}

func BenchmarkGrid100x100On1000NodesTwoWorkers(b *testing.B) {
	p := withVariables(12, 1000, 4)
	r := engine.Evaluate(p)
	if !r.Valid() {
		b.Fatal(r.Problems)
	}
	b.ResetTimer()
	defer reportCPU(b, processCPU())
	for b.Loop() {
		if _, err := Regions(context.Background(), p, r, VariableInput("v1"), VariableInput("v2"), RegionOptions{Steps: 100, Workers: 2}); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkBreakEvenNotesOn1000Nodes(b *testing.B) {
	p := withVariables(13, 1000, 0)
	r := engine.Evaluate(p)
	b.ResetTimer()
	defer reportCPU(b, processCPU())
	for b.Loop() {
		BreakEvenNotes(p, r)
	}
}

func BenchmarkSweep50StepsOn1000Nodes(b *testing.B) {
	p := withVariables(14, 1000, 4)
	r := engine.Evaluate(p)
	b.ResetTimer()
	defer reportCPU(b, processCPU())
	for b.Loop() {
		if _, err := Sweep(context.Background(), p, r, VariableInput("v1"), SweepOptions{}); err != nil {
			b.Fatal(err)
		}
	}
}

// reportCPU adds the CPU time per operation (all goroutines), a figure that does
// not grow when other processes share the machine.
func reportCPU(b *testing.B, start time.Duration) {
	if b.N > 0 && start > 0 {
		b.ReportMetric(float64(processCPU()-start)/float64(time.Millisecond)/float64(b.N), "cpu-ms/op")
	}
}
