package analysis

// Distributions of variables for Monte Carlo simulation.

import (
	"fmt"
	"math"
	"math/rand/v2"
	"sort"
	"strings"

	"github.com/ramify-app/ramify/engine"
	"github.com/shopspring/decimal"
)

// Sampler draws values of one variable's distribution. Its parameters are
// computed once, from the base values of the project's variables, so a
// distribution may refer to other variables (e.g. mean "install_cost").
type Sampler struct {
	Name string
	Kind engine.DistKind

	min, mode, max float64 // uniform, triangular, pert
	alpha, beta    float64 // pert: the beta shapes on [min, max]
	mu, sigma      float64 // normal: mean, sd; lognormal: of the underlying normal
	values, cum    []float64
	fixed          float64
}

// CompileDist validates a variable's distribution and returns its sampler.
// vars are the evaluated base values (engine.Result.Vars). A variable without
// a distribution compiles to a fixed sampler at its base value. Messages name
// the variable and the parameter: `variable "rent_week" distribution mode: …`.
func CompileDist(v *engine.Variable, vars engine.MapEnv) (*Sampler, error) {
	s := &Sampler{Name: v.Name, Kind: engine.DistFixed}
	base, ok := vars[v.Name]
	if !ok {
		return nil, fmt.Errorf("variable %q has no value (fix its value first)", v.Name)
	}
	s.fixed = base.InexactFloat64()
	if v.Dist == nil {
		return s, nil
	}
	d := v.Dist
	s.Kind = d.Kind
	place := fmt.Sprintf("variable %q distribution", v.Name)
	param := func(field, src string) (decimal.Decimal, error) {
		if strings.TrimSpace(src) == "" {
			return decimal.Zero, fmt.Errorf("%s %s: missing (a %s distribution needs it)", place, field, d.Kind)
		}
		f, err := engine.ParseFormula(src)
		if err != nil {
			return decimal.Zero, fmt.Errorf("%s %s: %w", place, field, err)
		}
		x, err := f.Eval(vars)
		if err != nil {
			return decimal.Zero, fmt.Errorf("%s %s: %w", place, field, err)
		}
		return x, nil
	}
	switch d.Kind {
	case engine.DistFixed, "":
		s.Kind = engine.DistFixed
	case engine.DistUniform, engine.DistTriangular, engine.DistPERT:
		lo, err := param("min", d.Min)
		if err != nil {
			return nil, err
		}
		hi, err := param("max", d.Max)
		if err != nil {
			return nil, err
		}
		mode := lo
		if d.Kind != engine.DistUniform {
			if mode, err = param("mode", d.Mode); err != nil {
				return nil, err
			}
		}
		if lo.GreaterThan(hi) {
			return nil, fmt.Errorf("%s: min %s is above max %s", place, lo, hi)
		}
		if d.Kind != engine.DistUniform && (mode.LessThan(lo) || mode.GreaterThan(hi)) {
			return nil, fmt.Errorf("%s mode: %s is outside min %s to max %s", place, mode, lo, hi)
		}
		s.min, s.mode, s.max = lo.InexactFloat64(), mode.InexactFloat64(), hi.InexactFloat64()
		if s.max > s.min {
			// PERT as a beta on [min, max] with shapes 1 + 4(m−a)/(b−a) and 1 + 4(b−m)/(b−a),
			// which gives the mean (a + 4m + b)/6 (Malcolm, Roseboom, Clark & Fazar,
			// Operations Research 7(5), 1959).
			s.alpha = 1 + 4*(s.mode-s.min)/(s.max-s.min)
			s.beta = 1 + 4*(s.max-s.mode)/(s.max-s.min)
		}
	case engine.DistNormal, engine.DistLognormal:
		mean, err := param("mean", d.Mean)
		if err != nil {
			return nil, err
		}
		sd, err := param("sd", d.SD)
		if err != nil {
			return nil, err
		}
		if !sd.IsPositive() {
			return nil, fmt.Errorf("%s sd: %s must be above 0 (use kind fixed for no spread)", place, sd)
		}
		m, sdf := mean.InexactFloat64(), sd.InexactFloat64()
		if d.Kind == engine.DistNormal {
			s.mu, s.sigma = m, sdf
			break
		}
		if !mean.IsPositive() {
			return nil, fmt.Errorf("%s mean: %s must be above 0 for a lognormal (its values are all positive)", place, mean)
		}
		// Mean m and SD s of the variable itself: σ² = ln(1 + s²/m²), μ = ln m − σ²/2
		// (closed form of the lognormal's moments).
		v2 := math.Log1p(sdf * sdf / (m * m))
		s.mu, s.sigma = math.Log(m)-v2/2, math.Sqrt(v2)
	case engine.DistDiscrete:
		if len(d.Values) == 0 {
			return nil, fmt.Errorf("%s values: missing (list the possible values)", place)
		}
		if len(d.Probs) != len(d.Values) {
			return nil, fmt.Errorf("%s probabilities: %d given for %d values", place, len(d.Probs), len(d.Values))
		}
		sum := decimal.Zero
		acc := 0.0
		for i := range d.Values {
			x, err := param(fmt.Sprintf("values[%d]", i+1), d.Values[i])
			if err != nil {
				return nil, err
			}
			p, err := param(fmt.Sprintf("probabilities[%d]", i+1), d.Probs[i])
			if err != nil {
				return nil, err
			}
			if p.IsNegative() || p.GreaterThan(decimal.NewFromInt(1)) {
				return nil, fmt.Errorf("%s probabilities[%d]: %s is outside 0 to 1", place, i+1, p)
			}
			sum = sum.Add(p)
			acc += p.InexactFloat64()
			s.values = append(s.values, x.InexactFloat64())
			s.cum = append(s.cum, acc)
		}
		if !sum.Equal(decimal.NewFromInt(1)) {
			return nil, fmt.Errorf("%s probabilities: they add up to %s, not 1", place, sum)
		}
		s.cum[len(s.cum)-1] = 1
	default:
		return nil, fmt.Errorf("%s kind: %q is unknown (use fixed, uniform, triangular, pert, normal, lognormal or discrete)", place, d.Kind)
	}
	return s, nil
}

// Varies reports whether the sampler draws anything but one value.
func (s *Sampler) Varies() bool {
	switch s.Kind {
	case engine.DistFixed:
		return false
	case engine.DistUniform, engine.DistTriangular, engine.DistPERT:
		return s.max > s.min
	case engine.DistDiscrete:
		for _, v := range s.values[1:] {
			if v != s.values[0] {
				return true
			}
		}
		return false
	}
	return true
}

// Sample draws one value using r.
func (s *Sampler) Sample(r *rand.Rand) float64 {
	switch s.Kind {
	case engine.DistUniform:
		return s.min + (s.max-s.min)*r.Float64()
	case engine.DistTriangular:
		if s.max <= s.min {
			return s.min
		}
		// Inverse of the triangular CDF.
		u := r.Float64()
		w := s.max - s.min
		f := (s.mode - s.min) / w
		if u < f {
			return s.min + math.Sqrt(u*w*(s.mode-s.min))
		}
		return s.max - math.Sqrt((1-u)*w*(s.max-s.mode))
	case engine.DistPERT:
		if s.max <= s.min {
			return s.min
		}
		g1 := gammaSample(r, s.alpha)
		g2 := gammaSample(r, s.beta)
		return s.min + (s.max-s.min)*g1/(g1+g2)
	case engine.DistNormal:
		return s.mu + s.sigma*r.NormFloat64()
	case engine.DistLognormal:
		return math.Exp(s.mu + s.sigma*r.NormFloat64())
	case engine.DistDiscrete:
		u := r.Float64()
		i := sort.SearchFloat64s(s.cum, u)
		// SearchFloat64s finds cum[i] >= u; a value drawn exactly at a boundary belongs to the next.
		for i < len(s.cum)-1 && s.cum[i] <= u {
			i++
		}
		return s.values[i]
	}
	return s.fixed
}

// Mean is the distribution's mean (closed forms), used by reports and tests.
func (s *Sampler) Mean() float64 {
	switch s.Kind {
	case engine.DistUniform:
		return (s.min + s.max) / 2
	case engine.DistTriangular:
		return (s.min + s.mode + s.max) / 3
	case engine.DistPERT:
		return (s.min + 4*s.mode + s.max) / 6
	case engine.DistNormal:
		return s.mu
	case engine.DistLognormal:
		return math.Exp(s.mu + s.sigma*s.sigma/2)
	case engine.DistDiscrete:
		m, prev := 0.0, 0.0
		for i, c := range s.cum {
			m += (c - prev) * s.values[i]
			prev = c
		}
		return m
	}
	return s.fixed
}

// gammaSample draws Gamma(a, 1) for a ≥ 1 (PERT shapes are always ≥ 1).
// Marsaglia & Tsang, "A simple method for generating gamma variables",
// ACM Transactions on Mathematical Software 26(3), 2000.
func gammaSample(r *rand.Rand, a float64) float64 {
	d := a - 1.0/3
	c := 1 / math.Sqrt(9*d)
	for {
		x := r.NormFloat64()
		v := 1 + c*x
		if v <= 0 {
			continue
		}
		v = v * v * v
		u := r.Float64()
		if u < 1-0.0331*x*x*x*x {
			return d * v
		}
		if math.Log(u) < 0.5*x*x+d*(1-v+math.Log(v)) {
			return d * v
		}
	}
}

// CompileDists compiles every variable's distribution; the first problem of
// each variable is returned, all of them together, so the user sees every one.
func CompileDists(p *engine.Project, vars engine.MapEnv) ([]*Sampler, error) {
	var out []*Sampler
	var msgs []string
	for _, v := range p.Variables {
		s, err := CompileDist(v, vars)
		if err != nil {
			msgs = append(msgs, err.Error())
			continue
		}
		out = append(out, s)
	}
	if len(msgs) > 0 {
		return nil, fmt.Errorf("%s", strings.Join(msgs, "\n"))
	}
	return out, nil
}

// SetDistribution gives a variable a distribution (nil removes it); its inverse
// restores the previous one. The new distribution is validated first, so a
// failed edit leaves the project unchanged.
type SetDistribution struct {
	Variable string
	Dist     *engine.Distribution
}

func (c SetDistribution) Describe() string { return "Set distribution of " + c.Variable }

func (c SetDistribution) Apply(p *engine.Project) (engine.Command, error) {
	v := p.Variable(c.Variable)
	if v == nil {
		return nil, fmt.Errorf("variable %q is not in the project", c.Variable)
	}
	var d *engine.Distribution
	if c.Dist != nil {
		d = (&engine.Variable{Dist: c.Dist}).Clone().Dist
		r := engine.Evaluate(p.Clone())
		if _, ok := r.Vars[v.Name]; ok {
			if _, err := CompileDist(&engine.Variable{Name: v.Name, Value: v.Value, Dist: d}, r.Vars); err != nil {
				return nil, err
			}
		}
	}
	old := v.Dist
	v.Dist = d
	return SetDistribution{Variable: c.Variable, Dist: old}, nil
}
