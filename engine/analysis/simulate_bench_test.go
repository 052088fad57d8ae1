package analysis

import (
	"context"
	"math/rand/v2"
	"testing"
	"time"

	"github.com/ramify-app/ramify/engine"
	"github.com/ramify-app/ramify/engine/enginetest"
)

// benchProject is a 50-node tree; with vary set, two variables used in payoffs
// and one used as a probability get distributions, so every iteration rolls back.
func vtBenchProject(vary bool) *engine.Project {
	// The first random tree (fixed seeds) with about 50 nodes.
	var p *engine.Project
	for seed := uint64(1); ; seed++ {
		p = enginetest.RandomProject(rand.New(rand.NewPCG(seed, 50)), enginetest.Options{Nodes: 50, MaxBranches: 3, UseCash: true})
		if n := len(p.Nodes()); n >= 48 && n <= 52 {
			break
		}
	}
	if vary {
		p.Variables = []*engine.Variable{
			{Name: "k", Value: "1", Dist: &engine.Distribution{Kind: engine.DistPERT, Min: "0.8", Mode: "1", Max: "1.4"}},
			{Name: "extra", Value: "0", Dist: &engine.Distribution{Kind: engine.DistNormal, Mean: "0", SD: "50"}},
		}
		for _, n := range p.Nodes() {
			if n.Kind == engine.End {
				n.Payoff = "(" + n.Payoff + ") * k + extra"
			}
		}
	}
	return p
}

func vtBenchSimulate(b *testing.B, mode SimMode, vary bool) {
	p := vtBenchProject(vary)
	if n := len(p.Nodes()); n < 45 || n > 60 {
		b.Fatalf("tree has %d nodes", n)
	}
	b.ReportAllocs()
	b.ResetTimer()
	start := time.Now()
	res, err := Simulate(context.Background(), p, SimOptions{N: b.N, Seed: 1, Mode: mode, Workers: 2})
	if err != nil {
		b.Fatal(err)
	}
	b.ReportMetric(float64(b.N)/time.Since(start).Seconds(), "iter/s")
	_ = res
}

func BenchmarkSimulateFull50Nodes2Workers(b *testing.B)        { vtBenchSimulate(b, SimFull, false) }
func BenchmarkSimulateFull50NodesVarying2Workers(b *testing.B) { vtBenchSimulate(b, SimFull, true) }
func BenchmarkSimulateParams50NodesVarying2Workers(b *testing.B) {
	vtBenchSimulate(b, SimParameters, true)
}
