package analysis

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"runtime"
	"sync"
	"sync/atomic"

	"github.com/ramify-app/ramify/engine"
)

// SimMode says what a simulation draws.
type SimMode string

const (
	// SimParameters draws the variables and rolls the tree back each time: the
	// spread of each alternative's value and how often each is best.
	SimParameters SimMode = "parameters"
	// SimFull also draws the chance events along the recommended policy of each
	// iteration: the spread of the payoff actually received.
	SimFull SimMode = "full"
)

// Reproducibility. The N iterations are cut into blocks of SimBlock; block b is
// drawn from its own PCG stream seeded (seed, b), whichever worker runs it, and
// blocks are merged in block order. So a seed gives the same result on any number
// of workers, bit for bit.
const SimBlock = 4096

// DefaultKeep is how many iterations are kept for percentiles, charts and the
// samples CSV. Percentiles are exact for runs up to this size; beyond it they come
// from the first DefaultKeep iterations, which are themselves an independent
// random sample of the run (iterations are independent and identically
// distributed), so memory stays flat however long the run.
const DefaultKeep = 200_000

// SimOptions configure a run.
type SimOptions struct {
	N        int
	Seed     uint64
	Mode     SimMode
	Workers  int // 0: every core (GOMAXPROCS)
	Keep     int // 0: DefaultKeep
	Progress func(done, total int)
}

// Alternative is one branch of the first decision, as the simulation saw it.
type Alternative struct {
	Label   string
	Value   Summary // its value (cash + value below) per iteration
	Best    int     // iterations in which it was the recommended choice
	PBest   float64
	Samples []float64 // its value in the kept iterations; NaN where invalid
}

// ConvergencePoint is the running mean after Iteration counted iterations.
type ConvergencePoint struct {
	Iteration int
	Mean      float64
}

// SimResult is what a run found. The project is never changed.
type SimResult struct {
	Mode      SimMode
	N         int
	Seed      uint64
	Workers   int
	ValueWord string // what Value measures
	Objective engine.Objective
	Base      float64 // the base case's value (variables at their values)

	Value        Summary // root value (parameters) or realised payoff (full)
	Loss         float64 // share of counted iterations that count as a loss
	LossRule     string  // what counts as a loss
	Decision     *engine.Node
	Alternatives []Alternative

	// Invalid counts iterations in which a draw made the tree invalid (a
	// probability outside 0 to 1, or probabilities not adding up to 1). They are
	// left out of every figure, never clipped.
	Invalid        int
	InvalidExample string

	Varying     []string // variables drawn from a distribution
	Convergence []ConvergencePoint
	Samples     []float64 // the first Keep iterations' values, in order; NaN where invalid
	Histogram   Histogram
}

type blockStats struct {
	value   moments
	alts    []moments
	best    []int
	loss    int
	invalid int
	example string
}

// Simulate runs a Monte Carlo simulation of a valid project. Bad parameters,
// N ≤ 0 and cancellation are errors naming the cause; p is only read.
func Simulate(ctx context.Context, p *engine.Project, opt SimOptions) (*SimResult, error) {
	if opt.N <= 0 {
		return nil, fmt.Errorf("the number of iterations must be at least 1 (got %d)", opt.N)
	}
	switch opt.Mode {
	case "":
		opt.Mode = SimParameters
	case SimParameters, SimFull:
	default:
		return nil, fmt.Errorf("mode %q is unknown (use parameters or full)", opt.Mode)
	}
	work := p.Clone()
	r := engine.Evaluate(work)
	if !r.Valid() {
		return nil, fmt.Errorf("the project has %d problem(s) to fix first; the first: %s", len(r.Problems), r.Problems[0].Msg)
	}
	samplers, err := CompileDists(work, r.Vars)
	if err != nil {
		return nil, err
	}
	model, err := engine.CompileFast(work)
	if err != nil {
		return nil, err
	}
	res := &SimResult{Mode: opt.Mode, N: opt.N, Seed: opt.Seed, ValueWord: r.ValueWord(), Objective: work.Objective, Base: model.RootValue()}
	if opt.Mode == SimFull {
		res.ValueWord = "payoff received"
		if work.Objective == engine.Minimize {
			res.ValueWord = "cost incurred"
		}
	}
	var varying []*Sampler
	var varIdx []int
	for _, s := range samplers {
		if !s.Varies() {
			continue
		}
		i, ok := model.VarIndex(s.Name)
		if !ok {
			return nil, fmt.Errorf("variable %q: not known to the evaluator", s.Name)
		}
		varying = append(varying, s)
		varIdx = append(varIdx, i)
		res.Varying = append(res.Varying, s.Name)
	}
	// The first decision: the root, or the first decision on the recommended path.
	if steps := r.Policy(); len(steps) > 0 {
		res.Decision = steps[0].Node
	}
	decisionAt := -1
	var alts []string
	if res.Decision != nil {
		decisionAt = model.IndexOf(res.Decision)
		for i := range res.Decision.Branches {
			alts = append(alts, engine.BranchTitle(res.Decision, i))
		}
	}
	lossAbove := work.Objective == engine.Minimize
	lossAt := 0.0
	res.LossRule = "a value below 0"
	if lossAbove {
		lossAt = res.Base
		res.LossRule = fmt.Sprintf("a cost above the base case's %s", r.Format(r.Value()))
	}

	workers := opt.Workers
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	blocks := (opt.N + SimBlock - 1) / SimBlock
	if workers > blocks {
		workers = blocks
	}
	res.Workers = workers
	keep := opt.Keep
	if keep <= 0 {
		keep = DefaultKeep
	}
	keep = min(keep, opt.N)
	res.Samples = make([]float64, keep)
	altSamples := make([][]float64, len(alts))
	for a := range altSamples {
		altSamples[a] = make([]float64, keep)
	}

	// Kinds as bytes for the walk of full mode.
	kinds := make([]byte, len(model.Kinds()))
	for i, k := range model.Kinds() {
		switch k {
		case engine.Decision:
			kinds[i] = 'd'
		case engine.Chance:
			kinds[i] = 'c'
		default:
			kinds[i] = 'e'
		}
	}
	first, count, child := model.First(), model.Count(), model.Child()

	ctx, cancel := context.WithCancel(ctx)
	defer cancel()
	var next atomic.Int64
	type done struct {
		block int
		stats *blockStats
	}
	out := make(chan done, workers)
	var wg sync.WaitGroup
	for w := 0; w < workers; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			m := model.Clone()
			pcg := rand.NewPCG(0, 0)
			rng := rand.New(pcg)
			rolled := false
			for {
				b := int(next.Add(1) - 1)
				if b >= blocks || ctx.Err() != nil {
					return
				}
				pcg.Seed(opt.Seed, uint64(b))
				st := &blockStats{alts: make([]moments, len(alts)), best: make([]int, len(alts))}
				lo, hi := b*SimBlock, min((b+1)*SimBlock, opt.N)
				for it := lo; it < hi; it++ {
					for j, s := range varying {
						m.SetVar(varIdx[j], s.Sample(rng))
					}
					if len(varying) > 0 || !rolled {
						if err := m.Roll(); err != nil {
							st.invalid++
							if st.example == "" {
								st.example = err.Error()
							}
							if it < keep {
								res.Samples[it] = math.NaN()
								for a := range altSamples {
									altSamples[a][it] = math.NaN()
								}
							}
							rolled = false
							continue
						}
						rolled = true
					}
					var v float64
					if opt.Mode == SimFull {
						i := int32(0)
						for kinds[i] != 'e' {
							f := first[i]
							var k int32
							if kinds[i] == 'd' {
								k = m.Choice[i]
							} else {
								u := rng.Float64()
								acc := 0.0
								k = -1
								last := int32(0)
								for j := int32(0); j < count[i]; j++ {
									pj := m.Prob[f+j]
									if pj <= 0 {
										continue
									}
									last = j
									acc += pj
									if u < acc {
										k = j
										break
									}
								}
								if k < 0 { // float sum a hair below 1
									k = last
								}
							}
							v += m.Cash[f+k]
							i = child[f+k]
						}
						v += m.PayoffV[i]
					} else {
						v = m.Value[0]
					}
					st.value.add(v)
					if (lossAbove && v > lossAt) || (!lossAbove && v < lossAt) {
						st.loss++
					}
					if it < keep {
						res.Samples[it] = v
					}
					if decisionAt >= 0 {
						f := first[decisionAt]
						for a := range alts {
							av := m.Cash[f+int32(a)] + m.Value[child[f+int32(a)]]
							st.alts[a].add(av)
							if it < keep {
								altSamples[a][it] = av
							}
						}
						st.best[m.Choice[decisionAt]]++
					}
				}
				select {
				case out <- done{b, st}:
				case <-ctx.Done():
					return
				}
			}
		}()
	}
	go func() { wg.Wait(); close(out) }()

	// Merge in block order; blocks finished early wait in pending (at most a few
	// per worker, since workers take blocks in order).
	total := blockStats{alts: make([]moments, len(alts)), best: make([]int, len(alts))}
	pending := map[int]*blockStats{}
	merged := 0
	stride := max(1, (blocks+499)/500)
	for d := range out {
		pending[d.block] = d.stats
		for st, ok := pending[merged]; ok; st, ok = pending[merged] {
			delete(pending, merged)
			total.value.merge(st.value)
			for a := range alts {
				total.alts[a].merge(st.alts[a])
				total.best[a] += st.best[a]
			}
			total.loss += st.loss
			total.invalid += st.invalid
			if total.example == "" {
				total.example = st.example
			}
			merged++
			if (merged%stride == 0 || merged == blocks) && total.value.n > 0 {
				res.Convergence = append(res.Convergence, ConvergencePoint{total.value.n, total.value.mean})
			}
			if opt.Progress != nil {
				opt.Progress(min(merged*SimBlock, opt.N), opt.N)
			}
		}
	}
	if err := ctx.Err(); err != nil || merged < blocks {
		if err == nil {
			err = context.Canceled
		}
		if errors.Is(err, context.Canceled) {
			return nil, fmt.Errorf("simulation cancelled after %d of %d iterations; nothing was changed", min(merged*SimBlock, opt.N), opt.N)
		}
		return nil, fmt.Errorf("simulation stopped after %d of %d iterations: %w", min(merged*SimBlock, opt.N), opt.N, err)
	}
	res.Invalid, res.InvalidExample = total.invalid, total.example
	if total.value.n == 0 {
		return nil, fmt.Errorf("every one of the %d iterations made the tree invalid; the first: %s", opt.N, total.example)
	}
	res.Value = summarize(total.value, res.Samples)
	res.Loss = float64(total.loss) / float64(total.value.n)
	for a, label := range alts {
		res.Alternatives = append(res.Alternatives, Alternative{Label: label, Value: summarize(total.alts[a], altSamples[a]),
			Best: total.best[a], PBest: float64(total.best[a]) / float64(total.value.n), Samples: altSamples[a]})
	}
	res.Histogram = histogram(res.Samples, 40)
	return res, nil
}
