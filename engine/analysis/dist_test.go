package analysis

import (
	"math"
	"math/rand/v2"
	"sort"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/stat/distuv"

	"github.com/ramify-app/ramify/engine"
)

// reference is what an independent library (gonum's distuv) says about a distribution.
type vtReference interface {
	Mean() float64
	Variance() float64
	ExKurtosis() float64
	CDF(x float64) float64
}

// scaled maps a distribution on [0, 1] (gonum's Beta) onto [a, b].
type vtScaled struct {
	d    distuv.Beta
	a, b float64
}

func (s vtScaled) Mean() float64       { return s.a + (s.b-s.a)*s.d.Mean() }
func (s vtScaled) Variance() float64   { return (s.b - s.a) * (s.b - s.a) * s.d.Variance() }
func (s vtScaled) ExKurtosis() float64 { return s.d.ExKurtosis() }
func (s vtScaled) CDF(x float64) float64 {
	return s.d.CDF((x - s.a) / (s.b - s.a))
}

func vtCompileOne(t *testing.T, d *engine.Distribution) *Sampler {
	t.Helper()
	s, err := CompileDist(&engine.Variable{Name: "x", Value: "1", Dist: d}, engine.MapEnv{"x": engine.Decimal{}})
	require.NoError(t, err)
	return s
}

// TestDistributionsAgainstGonum checks sample mean and variance within 4 standard
// errors of gonum's closed forms, and a one-sample Kolmogorov–Smirnov statistic
// below the 1 % critical value 1.628/√n (asymptotic Kolmogorov distribution,
// Smirnov 1948, "Table for estimating the goodness of fit of empirical distributions").
func TestDistributionsAgainstGonum(t *testing.T) {
	// PERT shapes for min 2, mode 5, max 14: α = 1 + 4·3/12 = 2, β = 1 + 4·9/12 = 4.
	sigma2 := math.Log1p(30.0 * 30 / (100 * 100))
	tests := []struct {
		name string
		dist *engine.Distribution
		ref  vtReference
	}{
		{"uniform", &engine.Distribution{Kind: engine.DistUniform, Min: "-3", Max: "7"}, distuv.Uniform{Min: -3, Max: 7}},
		{"triangular", &engine.Distribution{Kind: engine.DistTriangular, Min: "2", Mode: "5", Max: "14"}, distuv.NewTriangle(2, 14, 5, nil)},
		{"triangular at min", &engine.Distribution{Kind: engine.DistTriangular, Min: "0", Mode: "0", Max: "1"}, distuv.NewTriangle(0, 1, 0, nil)},
		{"pert", &engine.Distribution{Kind: engine.DistPERT, Min: "2", Mode: "5", Max: "14"}, vtScaled{distuv.Beta{Alpha: 2, Beta: 4}, 2, 14}},
		{"pert symmetric", &engine.Distribution{Kind: engine.DistPERT, Min: "0", Mode: "50", Max: "100"}, vtScaled{distuv.Beta{Alpha: 3, Beta: 3}, 0, 100}},
		{"normal", &engine.Distribution{Kind: engine.DistNormal, Mean: "250", SD: "40"}, distuv.Normal{Mu: 250, Sigma: 40}},
		{"lognormal", &engine.Distribution{Kind: engine.DistLognormal, Mean: "100", SD: "30"},
			distuv.LogNormal{Mu: math.Log(100) - sigma2/2, Sigma: math.Sqrt(sigma2)}},
	}
	const n = 200000
	for i, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			s := vtCompileOne(t, tc.dist)
			r := rand.New(rand.NewPCG(2026, uint64(i)))
			xs := make([]float64, n)
			mean := 0.0
			for k := range xs {
				xs[k] = s.Sample(r)
				mean += xs[k]
			}
			mean /= n
			ss := 0.0
			for _, x := range xs {
				ss += (x - mean) * (x - mean)
			}
			variance := ss / (n - 1)
			sd := math.Sqrt(tc.ref.Variance())
			assert.InDelta(t, tc.ref.Mean(), mean, 4*sd/math.Sqrt(n), "sample mean")
			assert.InDelta(t, tc.ref.Mean(), s.Mean(), 1e-9*math.Max(1, math.Abs(tc.ref.Mean())), "closed-form mean")
			// SE of the sample variance: σ²·√((κ + 2)/n), κ the excess kurtosis.
			seVar := tc.ref.Variance() * math.Sqrt((tc.ref.ExKurtosis()+2)/n)
			assert.InDelta(t, tc.ref.Variance(), variance, 4*seVar, "sample variance")

			sort.Float64s(xs)
			d := 0.0
			for k, x := range xs {
				f := tc.ref.CDF(x)
				d = math.Max(d, math.Max(float64(k+1)/n-f, f-float64(k)/n))
			}
			assert.Less(t, d, 1.628/math.Sqrt(n), "Kolmogorov–Smirnov statistic")
		})
	}
}

func TestDiscreteFrequencies(t *testing.T) {
	s := vtCompileOne(t, &engine.Distribution{Kind: engine.DistDiscrete,
		Values: []string{"10", "20", "35"}, Probs: []string{"0.2", "0.5", "0.3"}})
	// Categorical from gonum gives the reference probabilities of each index.
	ref := distuv.NewCategorical([]float64{0.2, 0.5, 0.3}, nil)
	r := rand.New(rand.NewPCG(7, 7))
	const n = 100000
	counts := map[float64]int{}
	for range n {
		counts[s.Sample(r)]++
	}
	for i, v := range []float64{10, 20, 35} {
		p := ref.Prob(float64(i))
		assert.InDelta(t, p, float64(counts[v])/n, 4*math.Sqrt(p*(1-p)/n), "value %v", v)
	}
	assert.InDelta(t, 0.2*10+0.5*20+0.3*35, s.Mean(), 1e-12)
}

// PERT mean (a + 4m + b)/6: Malcolm, Roseboom, Clark & Fazar, "Application of a
// technique for research and development program evaluation", Operations Research 1959.
// Triangular mean (a + m + b)/3: closed form.
func TestPERTAndTriangularMeans(t *testing.T) {
	tests := []struct {
		kind      engine.DistKind
		a, m, b   string
		want      float64
		sampleTol float64
	}{
		{engine.DistPERT, "10", "12", "20", (10 + 4*12 + 20) / 6.0, 0.05},
		{engine.DistPERT, "100", "180", "200", (100 + 4*180 + 200) / 6.0, 0.5},
		{engine.DistTriangular, "10", "12", "20", (10 + 12 + 20) / 3.0, 0.05},
		{engine.DistTriangular, "-5", "5", "5", (-5 + 5 + 5) / 3.0, 0.05},
	}
	for _, tc := range tests {
		s := vtCompileOne(t, &engine.Distribution{Kind: tc.kind, Min: tc.a, Mode: tc.m, Max: tc.b})
		assert.InDelta(t, tc.want, s.Mean(), 1e-12, "%s closed form", tc.kind)
		r := rand.New(rand.NewPCG(1, 2))
		sum := 0.0
		const n = 100000
		for range n {
			sum += s.Sample(r)
		}
		assert.InDelta(t, tc.want, sum/n, tc.sampleTol, "%s sample mean", tc.kind)
	}
}

func TestDistributionValidation(t *testing.T) {
	tests := []struct {
		name string
		dist *engine.Distribution
		want string
	}{
		{"mode above max", &engine.Distribution{Kind: engine.DistTriangular, Min: "1", Mode: "9", Max: "5"}, `variable "cost" distribution mode: 9 is outside min 1 to max 5`},
		{"min above max", &engine.Distribution{Kind: engine.DistUniform, Min: "6", Max: "5"}, `variable "cost" distribution: min 6 is above max 5`},
		{"sd zero", &engine.Distribution{Kind: engine.DistNormal, Mean: "6", SD: "0"}, `variable "cost" distribution sd: 0 must be above 0`},
		{"lognormal mean", &engine.Distribution{Kind: engine.DistLognormal, Mean: "-6", SD: "1"}, `variable "cost" distribution mean: -6 must be above 0`},
		{"probabilities", &engine.Distribution{Kind: engine.DistDiscrete, Values: []string{"1", "2"}, Probs: []string{"0.5", "0.4"}}, `variable "cost" distribution probabilities: they add up to 0.9, not 1`},
		{"count", &engine.Distribution{Kind: engine.DistDiscrete, Values: []string{"1", "2"}, Probs: []string{"1"}}, `variable "cost" distribution probabilities: 1 given for 2 values`},
		{"missing", &engine.Distribution{Kind: engine.DistPERT, Min: "1", Max: "3"}, `variable "cost" distribution mode: missing`},
		{"bad formula", &engine.Distribution{Kind: engine.DistUniform, Min: "1 +", Max: "3"}, `variable "cost" distribution min:`},
		{"unknown name", &engine.Distribution{Kind: engine.DistUniform, Min: "nope", Max: "3"}, `variable "cost" distribution min:`},
		{"kind", &engine.Distribution{Kind: "gauss"}, `variable "cost" distribution kind: "gauss" is unknown`},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			_, err := CompileDist(&engine.Variable{Name: "cost", Value: "1", Dist: tc.dist}, engine.MapEnv{"cost": engine.Decimal{}})
			require.Error(t, err)
			assert.Contains(t, err.Error(), tc.want)
		})
	}
}

func TestSetDistributionIsUndoableAndValidated(t *testing.T) {
	p := &engine.Project{Variables: []*engine.Variable{{Name: "cost", Value: "10"}},
		Root: &engine.Node{ID: "e", Kind: engine.End, Payoff: "cost"}}
	inv, err := SetDistribution{Variable: "cost", Dist: &engine.Distribution{Kind: engine.DistUniform, Min: "5", Max: "15"}}.Apply(p)
	require.NoError(t, err)
	require.NotNil(t, p.Variables[0].Dist)
	assert.Equal(t, "15", p.Variables[0].Dist.Max)
	_, err = inv.Apply(p)
	require.NoError(t, err)
	assert.Nil(t, p.Variables[0].Dist)
	_, err = SetDistribution{Variable: "cost", Dist: &engine.Distribution{Kind: engine.DistUniform, Min: "25", Max: "15"}}.Apply(p)
	assert.ErrorContains(t, err, `variable "cost" distribution: min 25 is above max 15`)
	assert.Nil(t, p.Variables[0].Dist, "a failed edit changes nothing")
	_, err = SetDistribution{Variable: "nope"}.Apply(p)
	assert.ErrorContains(t, err, `variable "nope" is not in the project`)
}
