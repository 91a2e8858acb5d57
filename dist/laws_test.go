package dist_test

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mathext"
	"gonum.org/v1/gonum/stat/distuv"

	"github.com/joulelaw/joulelaw/dist"
)

// relErr returns |got-want|/|want| (or |got| when want is 0).
func relErr(got, want float64) float64 {
	if want == 0 {
		return math.Abs(got)
	}
	return math.Abs(got-want) / math.Abs(want)
}

// erlangSurvival is the closed form P(Gamma(n, λ) > x) = e^{-λx} Σ_{j<n} (λx)^j/j!
// for integer shape n (the Poisson–gamma relation; any probability text).
func erlangSurvival(n int, rate, x float64) float64 {
	term, sum := 1.0, 1.0
	for j := 1; j < n; j++ {
		term *= rate * x / float64(j)
		sum += term
	}
	return math.Exp(-rate*x) * sum
}

func TestGammaAgainstClosedForms(t *testing.T) {
	tests := []struct {
		shape int
		rate  float64
		xs    []float64
	}{
		{1, 2, []float64{0.01, 1, 5, 20, 300}},
		{3, 0.5, []float64{0.1, 6, 30, 200, 1000}},
		{10, 4, []float64{0.5, 2.5, 10, 40, 150}},
	}
	for _, tc := range tests {
		g := dist.MustGamma(float64(tc.shape), tc.rate)
		for _, x := range tc.xs {
			want := erlangSurvival(tc.shape, tc.rate, x)
			if want < 1e-300 {
				continue
			}
			assert.LessOrEqual(t, relErr(g.Survival(x), want), 1e-12, "Survival shape=%d x=%g", tc.shape, x)
			// Reference: gonum distuv.Gamma CDF (body of the law only).
			ref := distuv.Gamma{Alpha: float64(tc.shape), Beta: tc.rate}
			assert.InDelta(t, ref.CDF(x), g.CDF(x), 1e-14, "CDF shape=%d x=%g", tc.shape, x)
		}
		for _, q := range []float64{0.5, 1e-3, 1e-10, 1e-50, 1e-200} {
			x := g.UpperQuantile(q)
			assert.LessOrEqual(t, relErr(g.Survival(x), q), 1e-10, "UpperQuantile round trip q=%g", q)
			x = g.Quantile(q)
			assert.LessOrEqual(t, relErr(g.CDF(x), q), 1e-10, "Quantile round trip p=%g", q)
		}
	}
}

func TestLogNormalTail(t *testing.T) {
	l := dist.MustLogNormal(0.5, 0.8)
	for _, x := range []float64{0.1, 1, 10, 1e3, 1e8, 1e20} {
		// Reference: the normal tail of ln x, erfc((ln x − μ)/(σ√2))/2 with math.Erfc
		// (Abramowitz & Stegun 26.2.29). The tolerance allows for the rounding
		// of the argument, amplified by z² in the far tail.
		want := 0.5 * math.Erfc((math.Log(x)-0.5)/(0.8*math.Sqrt2))
		assert.LessOrEqual(t, relErr(l.Survival(x), want), 1e-12, "x=%g", x)
	}
	ref := distuv.LogNormal{Mu: 0.5, Sigma: 0.8}
	assert.InDelta(t, ref.Mean(), l.Mean(), 1e-13)
	assert.InDelta(t, ref.Variance(), l.Variance(), 1e-12)
}

func TestTruncatedNormalMoments(t *testing.T) {
	// Reference: the truncated-normal moments (Johnson, Kotz & Balakrishnan,
	// Continuous Univariate Distributions, vol. 1, 2nd ed., §13.10; formula
	// from memory): with α = (a−μ)/σ, β = (b−μ)/σ, Z = Φ(β) − Φ(α),
	// mean = μ + σ(φ(α) − φ(β))/Z,
	// var = σ²[1 + (αφ(α) − βφ(β))/Z − ((φ(α) − φ(β))/Z)²].
	phi := func(z float64) float64 {
		if math.IsInf(z, 0) {
			return 0
		}
		return math.Exp(-z*z/2) / math.Sqrt(2*math.Pi)
	}
	zphi := func(z float64) float64 {
		if math.IsInf(z, 0) {
			return 0
		}
		return z * phi(z)
	}
	tests := []struct{ mu, sigma, lo, hi float64 }{
		{1, 0.3, 0, math.Inf(1)},
		{2e-3, 1e-3, 0, math.Inf(1)},
		{0, 1, -1, 2},
		{0, 1, 2, 3},
		{5, 2, math.Inf(-1), 4},
	}
	for _, tc := range tests {
		n := dist.MustNormal(tc.mu, tc.sigma)
		tr := dist.MustTruncated(n, tc.lo, tc.hi)
		a, b := (tc.lo-tc.mu)/tc.sigma, (tc.hi-tc.mu)/tc.sigma
		std := dist.MustNormal(0, 1)
		Z := std.CDF(b) - std.CDF(a)
		r := (phi(a) - phi(b)) / Z
		mean := tc.mu + tc.sigma*r
		v := tc.sigma * tc.sigma * (1 + (zphi(a)-zphi(b))/Z - r*r)
		assert.LessOrEqual(t, relErr(tr.Mean(), mean), 1e-12, "mean %+v", tc)
		assert.LessOrEqual(t, relErr(tr.Variance(), v), 1e-10, "variance %+v", tc)
		lo, hi := tr.Support()
		assert.Equal(t, math.Max(tc.lo, math.Inf(-1)), lo)
		assert.Equal(t, tc.hi, hi)
	}
}

func TestTruncatedDeepTail(t *testing.T) {
	// A truncation to [10, 11] of the standard normal lives where the CDF is 1
	// in float64; its law must still be right. Reference: erfc differences.
	n := dist.MustNormal(0, 1)
	tr := dist.MustTruncated(n, 10, 11)
	q := func(z float64) float64 { return 0.5 * math.Erfc(z/math.Sqrt2) }
	mass := q(10) - q(11)
	for _, x := range []float64{10.01, 10.1, 10.5, 10.9} {
		assert.LessOrEqual(t, relErr(tr.Survival(x), (q(x)-q(11))/mass), 1e-13, "x=%g", x)
		assert.LessOrEqual(t, relErr(tr.CDF(x), (q(10)-q(x))/mass), 1e-13, "x=%g", x)
	}
	x := tr.Quantile(0.5)
	assert.InDelta(t, 0.5, tr.CDF(x), 1e-13)
}

func TestAffine(t *testing.T) {
	e := dist.MustExponential(2)
	// A positive scale of an exponential stays exponential (rate/scale).
	s, err := dist.Affine(e, 4, 0)
	require.NoError(t, err)
	assert.Equal(t, dist.MustExponential(0.5), s)
	// Nested maps collapse: 3·(2X + 1) + 4 = 6X + 7.
	a1, err := dist.Affine(e, 2, 1)
	require.NoError(t, err)
	a2, err := dist.Affine(a1, 3, 4)
	require.NoError(t, err)
	direct, err := dist.Affine(e, 6, 7)
	require.NoError(t, err)
	assert.Equal(t, direct, a2)
	// A negative scale swaps the tails: P(-X > x) = P(X < -x).
	neg, err := dist.Affine(e, -1, 0)
	require.NoError(t, err)
	for _, x := range []float64{-30, -3, -0.1} {
		assert.InDelta(t, e.CDF(-x), neg.Survival(x), 1e-16)
		assert.LessOrEqual(t, relErr(neg.CDF(x), e.Survival(-x)), 1e-15)
	}
	assert.InDelta(t, -0.5, neg.Mean(), 1e-16)
	assert.InDelta(t, -e.UpperQuantile(1e-9), neg.Quantile(1e-9), 1e-12)
	// Atoms: -D for a discrete D keeps P(-D <= x) = P(D >= -x).
	d := dist.MustDiscrete([]float64{1, 2, 3}, []float64{0.2, 0.3, 0.5})
	nd, err := dist.Affine(d, -1, 0)
	require.NoError(t, err)
	assert.InDelta(t, 0.8, nd.CDF(-2), 1e-15)
	assert.InDelta(t, 0.2, nd.Survival(-2), 1e-15)
	// Scale 0 is the point mass at the shift.
	pm, err := dist.Affine(e, 0, 3)
	require.NoError(t, err)
	assert.Equal(t, dist.MustPointMass(3), pm)
}

func TestMixtureAndScale(t *testing.T) {
	u := dist.MustUniform(1, 3)
	n := dist.MustNormal(0, 2)
	m, err := dist.Mixture([]float64{0.25, 0.75}, []dist.Law{u, n})
	require.NoError(t, err)
	for _, x := range []float64{-5, 0, 1.5, 2.5, 9} {
		assert.InDelta(t, 0.25*u.CDF(x)+0.75*n.CDF(x), m.CDF(x), 1e-15)
		assert.InDelta(t, 0.25*u.Survival(x)+0.75*n.Survival(x), m.Survival(x), 1e-15)
	}
	// Law of total variance (any probability text).
	mean := 0.25*2 + 0.75*0
	assert.InDelta(t, mean, m.Mean(), 1e-15)
	v := 0.25*(u.Variance()+4) + 0.75*4 - mean*mean
	assert.InDelta(t, v, m.Variance(), 1e-14)

	// F·X for F ∈ {1, 2} independent of X ~ Uniform(1, 3):
	// E = E[F]E[X], Var = E[F²]E[X²] − E[F]²E[X]².
	f := dist.MustDiscrete([]float64{1, 2}, []float64{0.6, 0.4})
	p, err := dist.ScaleByDiscrete(u, f)
	require.NoError(t, err)
	ef, ef2 := 0.6+0.8, 0.6+1.6
	ex, ex2 := 2.0, u.Variance()+4
	assert.InDelta(t, ef*ex, p.Mean(), 1e-14)
	assert.InDelta(t, ef2*ex2-ef*ef*ex*ex, p.Variance(), 1e-13)
	assert.InDelta(t, 0.6*0.5+0.4*1.0, p.Survival(2), 1e-15) // P(X > 2) = 1/2, P(2X > 2) = 1

	// Discrete × Discrete stays discrete and exact.
	dd, err := dist.ScaleByDiscrete(dist.MustPointMass(3), f)
	require.NoError(t, err)
	assert.Equal(t, []dist.Atom{{Value: 3, Mass: 0.6}, {Value: 6, Mass: 0.4}}, dd.(dist.Atomic).Atoms())
}

func TestIntervals(t *testing.T) {
	n := dist.MustNormal(10, 2)
	lo, hi, err := dist.EqualTailed(n, 0.95)
	require.NoError(t, err)
	// z(0.975) = 1.959963984540054 (standard normal table; common practice).
	assert.InDelta(t, 10-2*1.959963984540054, lo, 1e-12)
	assert.InDelta(t, 10+2*1.959963984540054, hi, 1e-12)
	hlo, hhi, err := dist.HighestDensity(n, 0.95)
	require.NoError(t, err)
	assert.InDelta(t, lo, hlo, 1e-6)
	assert.InDelta(t, hi, hhi, 1e-6)
	// A decreasing density: the shortest 90 % interval of Exp(1) is [0, ln 10].
	elo, ehi, err := dist.HighestDensity(dist.MustExponential(1), 0.9)
	require.NoError(t, err)
	assert.InDelta(t, 0, elo, 1e-9)
	assert.InDelta(t, math.Log(10), ehi, 1e-8)
	_, _, err = dist.EqualTailed(n, 1)
	assert.ErrorIs(t, err, dist.ErrParam)
}

func TestEmpiricalAndDistuv(t *testing.T) {
	e, err := dist.NewEmpirical([]float64{3, 1, 2, 2})
	require.NoError(t, err)
	assert.Equal(t, []dist.Atom{{Value: 1, Mass: 0.25}, {Value: 2, Mass: 0.5}, {Value: 3, Mass: 0.25}}, e.Atoms())
	w, err := dist.FromDistuv(distuv.Weibull{K: 1.5, Lambda: 2})
	require.NoError(t, err)
	ref := distuv.Weibull{K: 1.5, Lambda: 2}
	assert.InDelta(t, ref.Mean(), w.Mean(), 1e-14)
	assert.InDelta(t, ref.Survival(3), w.Survival(3), 1e-15)
	// The Weibull mean 2·Γ(1 + 1/1.5) via math.Gamma (closed form).
	assert.InDelta(t, 2*math.Gamma(1+1/1.5), w.Mean(), 1e-12)
	// A law without Mean/Variance gets them by quadrature.
	type cdfOnly struct{ distuv.Beta }
	b, err := dist.FromDistuv(struct {
		dist.ContinuousDistuv
	}{distuv.Beta{Alpha: 2, Beta: 5}})
	require.NoError(t, err)
	_ = cdfOnly{}
	// Beta(2, 5): mean 2/7, variance 10/(49·8) (closed form).
	assert.InDelta(t, 2.0/7, b.Mean(), 1e-12)
	assert.InDelta(t, 10.0/(49*8), b.Variance(), 1e-12)
	// Gamma's incomplete functions as the oracle for the beta's CDF is not
	// needed here; RegIncBeta is: I_x(2, 5).
	assert.InDelta(t, mathext.RegIncBeta(2, 5, 0.3), b.CDF(0.3), 1e-14)
}

func TestAliasSamplerFrequencies(t *testing.T) {
	d := dist.MustDiscrete([]float64{1, 2, 3, 4, 5}, []float64{0.05, 0.1, 0.2, 0.3, 0.35})
	s := dist.NewAliasSampler(d)
	r := rand.New(rand.NewPCG(1, 2))
	const n = 200000
	counts := map[float64]int{}
	for i := 0; i < n; i++ {
		counts[s.Rand(r)]++
	}
	for _, a := range d.Atoms() {
		// Binomial count: 6 standard deviations is a two-sided level below 1e-8.
		sd := math.Sqrt(n * a.Mass * (1 - a.Mass))
		assert.InDelta(t, n*a.Mass, float64(counts[a.Value]), 6*sd, "value %g", a.Value)
	}
}

func TestBadInput(t *testing.T) {
	nan, inf := math.NaN(), math.Inf(1)
	tests := []struct {
		name  string
		param string
		err   func() error
	}{
		{"normal sigma 0", "sigma", func() error { _, e := dist.NewNormal(0, 0); return e }},
		{"normal mu NaN", "mu", func() error { _, e := dist.NewNormal(nan, 1); return e }},
		{"uniform lo>=hi", "hi", func() error { _, e := dist.NewUniform(2, 1); return e }},
		{"uniform inf", "hi", func() error { _, e := dist.NewUniform(0, inf); return e }},
		{"exponential rate<0", "rate", func() error { _, e := dist.NewExponential(-1); return e }},
		{"gamma shape 0", "shape", func() error { _, e := dist.NewGamma(0, 1); return e }},
		{"gamma rate inf", "rate", func() error { _, e := dist.NewGamma(1, inf); return e }},
		{"lognormal sigma NaN", "sigma", func() error { _, e := dist.NewLogNormal(0, nan); return e }},
		{"discrete empty", "values", func() error { _, e := dist.NewDiscrete(nil, nil); return e }},
		{"discrete mismatch", "probs", func() error { _, e := dist.NewDiscrete([]float64{1, 2}, []float64{1}); return e }},
		{"discrete negative", "probs[0]", func() error { _, e := dist.NewDiscrete([]float64{1, 2}, []float64{-0.5, 1.5}); return e }},
		{"discrete sum", "probs", func() error { _, e := dist.NewDiscrete([]float64{1, 2}, []float64{0.5, 0.5 + 1e-9}); return e }},
		{"discrete value inf", "values[1]", func() error { _, e := dist.NewDiscrete([]float64{1, inf}, []float64{0.5, 0.5}); return e }},
		{"point mass NaN", "v", func() error { _, e := dist.NewPointMass(nan); return e }},
		{"truncation lo>=hi", "hi", func() error { _, e := dist.NewTruncated(dist.MustNormal(0, 1), 1, 1); return e }},
		{"truncation zero mass", "[lo, hi]", func() error { _, e := dist.NewTruncated(dist.MustExponential(1), -3, -1); return e }},
		{"truncation NaN", "lo", func() error { _, e := dist.NewTruncated(dist.MustNormal(0, 1), nan, 1); return e }},
		{"truncation nil", "l", func() error { _, e := dist.NewTruncated(nil, 0, 1); return e }},
		{"empirical empty", "samples", func() error { _, e := dist.NewEmpirical(nil); return e }},
		{"empirical NaN", "samples[1]", func() error { _, e := dist.NewEmpirical([]float64{1, nan}); return e }},
		{"mixture weights", "weights", func() error {
			_, e := dist.Mixture([]float64{0.5, 0.6}, []dist.Law{dist.MustNormal(0, 1), dist.MustNormal(1, 1)})
			return e
		}},
		{"mixture empty", "laws", func() error { _, e := dist.Mixture(nil, nil); return e }},
		{"affine scale inf", "scale", func() error { _, e := dist.Affine(dist.MustNormal(0, 1), inf, 0); return e }},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			err := tc.err()
			require.Error(t, err)
			assert.True(t, errors.Is(err, dist.ErrParam))
			var pe *dist.ParamError
			require.True(t, errors.As(err, &pe))
			assert.Equal(t, tc.param, pe.Param)
			assert.Contains(t, err.Error(), tc.param)
		})
	}
}

func TestStringsAreCompact(t *testing.T) {
	assert.Equal(t, "Normal(μ=1, σ=0.5)", dist.MustNormal(1, 0.5).String())
	assert.Equal(t, "PointMass(3)", dist.MustPointMass(3).String())
	tr := dist.MustTruncated(dist.MustNormal(1, 0.5), 0, math.Inf(1))
	assert.Contains(t, tr.(interface{ String() string }).String(), "5–95%")
}

// FuzzNewDiscrete checks that no input panics and that a built law has unit
// mass, sorted atoms and a consistent CDF/Survival pair.
func FuzzNewDiscrete(f *testing.F) {
	f.Add(1.0, 2.0, 3.0, 0.2, 0.3, 0.5)
	f.Add(1.0, 1.0, 1.0+1e-13, 0.5, 0.25, 0.25)
	f.Add(math.Inf(1), 0.0, -1.0, 0.1, 0.1, 0.8)
	f.Add(0.0, 0.0, 0.0, 0.0, 0.0, 1.0)
	f.Fuzz(func(t *testing.T, v1, v2, v3, p1, p2, p3 float64) {
		d, err := dist.NewDiscrete([]float64{v1, v2, v3}, []float64{p1, p2, p3})
		if err != nil {
			if !errors.Is(err, dist.ErrParam) {
				t.Fatalf("error does not wrap ErrParam: %v", err)
			}
			return
		}
		total := 0.0
		prev := math.Inf(-1)
		for _, a := range d.Atoms() {
			if !(a.Value > prev) || !(a.Mass > 0) {
				t.Fatalf("atoms not sorted or massless: %v", d.Atoms())
			}
			prev = a.Value
			total += a.Mass
		}
		if math.Abs(total-1) > 1e-12 {
			t.Fatalf("mass %v", total)
		}
		for _, x := range []float64{v1, v2, v3} {
			if s := d.CDF(x) + d.Survival(x); math.Abs(s-1) > 1e-12 {
				t.Fatalf("CDF+Survival = %v at %v", s, x)
			}
		}
	})
}

// FuzzNewTruncated checks that no input panics and that a built truncation
// stays inside [lo, hi] with a CDF in [0, 1].
func FuzzNewTruncated(f *testing.F) {
	f.Add(0.0, 1.0, -1.0, 2.0)
	f.Add(1.0, 0.3, 0.0, math.Inf(1))
	f.Add(0.0, 1.0, 30.0, 40.0)
	f.Add(0.0, 1.0, 2.0, 2.0)
	f.Fuzz(func(t *testing.T, mu, sigma, lo, hi float64) {
		n, err := dist.NewNormal(mu, sigma)
		if err != nil {
			return
		}
		tr, err := dist.NewTruncated(n, lo, hi)
		if err != nil {
			if !errors.Is(err, dist.ErrParam) {
				t.Fatalf("error does not wrap ErrParam: %v", err)
			}
			return
		}
		a, b := tr.Support()
		for _, p := range []float64{0, 1e-9, 0.3, 0.5, 0.9, 1} {
			x := tr.Quantile(p)
			if !(x >= a && x <= b) {
				t.Fatalf("Quantile(%v) = %v outside [%v, %v]", p, x, a, b)
			}
			c := tr.CDF(x)
			if !(c >= 0 && c <= 1) {
				t.Fatalf("CDF(%v) = %v", x, c)
			}
		}
		if m := tr.Mean(); math.IsNaN(m) || m < a || m > b {
			t.Fatalf("mean %v outside [%v, %v]", m, a, b)
		}
	})
}
