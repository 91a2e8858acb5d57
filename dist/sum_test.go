package dist_test

import (
	"math"
	"math/rand/v2"
	"sort"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mathext"
	"gonum.org/v1/gonum/stat/distuv"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/dist/disttest"
	"github.com/joulelaw/joulelaw/internal/testref"
)

// irwinHallCDF is the Irwin–Hall distribution of the sum of n Uniform(0,1):
//
//	F(x) = (1/n!)·Σ_{k=0}^{⌊x⌋} (-1)^k·C(n,k)·(x-k)^n
//
// (Irwin 1927, Hall 1927; the closed form as in Johnson, Kotz &
// Balakrishnan, Continuous Univariate Distributions vol. 2, ch. 26 — from
// memory). It is evaluated from the nearer end (F(x) = S(n-x) by symmetry)
// so that both tails keep their relative precision.
func irwinHallCDF(n int, x float64) float64 {
	if x <= 0 {
		return 0
	}
	if x >= float64(n) {
		return 1
	}
	if x > float64(n)/2 {
		return 1 - irwinHallCDF(n, float64(n)-x)
	}
	s, binom, fact := 0.0, 1.0, 1.0
	for i := 2; i <= n; i++ {
		fact *= float64(i)
	}
	for k := 0; k <= int(math.Floor(x)); k++ {
		if k > 0 {
			binom = binom * float64(n-k+1) / float64(k)
		}
		s += math.Pow(-1, float64(k)) * binom * math.Pow(x-float64(k), float64(n))
	}
	return s / fact
}

func irwinHallSurvival(n int, x float64) float64 { return irwinHallCDF(n, float64(n)-x) }

// hypoExpSurvival is P(E1 + E2 > x) for independent exponentials with rates
// a != b: (b·e^{-ax} - a·e^{-bx})/(b - a) (the hypoexponential law; a
// standard result, e.g. Ross, Introduction to Probability Models, §5.2.4 —
// from memory). With a < b both terms are positive for the leading one, so
// the value keeps its relative precision.
func hypoExpSurvival(a, b, x float64) float64 {
	if x <= 0 {
		return 1
	}
	return (b*math.Exp(-a*x) - a*math.Exp(-b*x)) / (b - a)
}

func hypoExpCDF(a, b, x float64) float64 {
	if x <= 0 {
		return 0
	}
	// 1 - S = (b·(1-e^{-ax}) - a·(1-e^{-bx}))/(b-a), with expm1
	return (-b*math.Expm1(-a*x) + a*math.Expm1(-b*x)) / (b - a)
}

// checkAccuracy asserts the law's reported Accuracy bounds the observed
// errors: |CDF - cdf| <= CDFAbs everywhere, and |S - s|/s <= SurvivalRel
// wherever s >= max(TailFloor, minS).
func checkAccuracy(t *testing.T, l dist.Law, xs []float64, cdf, surv func(float64) float64, minS float64) (worstAbs, worstRel float64) {
	t.Helper()
	est, ok := l.(dist.Estimated)
	require.True(t, ok, "%v must report its accuracy", l)
	acc := est.Accuracy()
	for _, x := range xs {
		c, s := cdf(x), surv(x)
		gc, gs := l.CDF(x), l.Survival(x)
		worstAbs = math.Max(worstAbs, math.Abs(gc-c))
		assert.LessOrEqual(t, math.Abs(gc-c), acc.CDFAbs, "CDF(%g) = %.17g, want %.17g (stated bound %g)", x, gc, c, acc.CDFAbs)
		if s >= math.Max(acc.TailFloor, minS) {
			r := testref.RelErr(gs, s)
			worstRel = math.Max(worstRel, r)
			assert.LessOrEqual(t, r, acc.SurvivalRel, "Survival(%g) = %.17g, want %.17g (stated rel bound %g)", x, gs, s, acc.SurvivalRel)
		}
	}
	return worstAbs, worstRel
}

// structuralSamples draws n values of the sum of the terms from the terms'
// own samplers (the independent path for a sum's CDF), with a PCG source
// seeded by s1, s2.
func structuralSamples(terms []dist.Law, n int, s1, s2 uint64) []float64 {
	r := rand.New(rand.NewPCG(s1, s2))
	xs := make([]float64, n)
	for i := range xs {
		for _, tm := range terms {
			xs[i] += tm.Rand(r)
		}
	}
	return xs
}

func grid(lo, hi float64, n int) []float64 {
	xs := make([]float64, n)
	for i := range xs {
		xs[i] = lo + (hi-lo)*float64(i)/float64(n-1)
	}
	return xs
}

func TestSumNormalsAndGammasClosedForm(t *testing.T) {
	// Normals add: N(1, 0.3²) + N(-2, 0.4²) = N(-1, 0.5²) (a standard result).
	s, err := dist.Sum(dist.MustNormal(1, 0.3), dist.MustNormal(-2, 0.4))
	require.NoError(t, err)
	n, ok := s.(dist.Normal)
	require.True(t, ok, "got %T", s)
	assert.InDelta(t, -1, n.Mu(), 1e-15)
	assert.InDelta(t, 0.5, n.Sigma(), 1e-15)
	// Gammas with one rate add: Gamma(2, 3) + Exp(3) + Gamma(0.5, 3) = Gamma(3.5, 3);
	// oracle gonum distuv.Gamma (CDF) and mathext.GammaIncRegComp (upper tail).
	s, err = dist.Sum(dist.MustGamma(2, 3), dist.MustExponential(3), dist.MustGamma(0.5, 3))
	require.NoError(t, err)
	g, ok := s.(dist.Gamma)
	require.True(t, ok, "got %T", s)
	ref := distuv.Gamma{Alpha: 3.5, Beta: 3}
	for _, x := range []float64{0.1, 1, 3, 10, 15} {
		assert.InDelta(t, ref.CDF(x), g.CDF(x), 1e-14)
		assert.InEpsilon(t, mathext.GammaIncRegComp(3.5, 3*x), g.Survival(x), 1e-12)
	}
	require.NoError(t, disttest.Check(s))
}

func TestSumIrwinHall(t *testing.T) {
	// Sum of n Uniform(0,1) against the Irwin–Hall closed form (n = 2 is
	// the closed-form trapezoid: TestSumTwoUniformsTrapezoid).
	u := dist.MustUniform(0, 1)
	for _, n := range []int{3, 5, 12} {
		terms := make([]dist.Law, n)
		for i := range terms {
			terms[i] = u
		}
		l, err := dist.Sum(terms...)
		require.NoError(t, err)
		xs := grid(0.002, float64(n)-0.002, 201)
		wa, wr := checkAccuracy(t, l, xs, func(x float64) float64 { return irwinHallCDF(n, x) },
			func(x float64) float64 { return irwinHallSurvival(n, x) }, 1e-14)
		assert.LessOrEqual(t, wa, testref.TolCDF, "n=%d", n)
		if n >= 5 { // n = 3: a power-law characteristic function, see the report in Accuracy
			assert.LessOrEqual(t, wr, testref.TolTailRel, "n=%d", n)
		}
		t.Logf("Irwin–Hall n=%d: worst CDF abs %.2e, worst survival rel %.2e (S >= 1e-14); %+v", n, wa, wr, l.(dist.Estimated).Accuracy())
		assert.InEpsilon(t, float64(n)/2, l.Mean(), 1e-12)
		assert.InEpsilon(t, float64(n)/12, l.Variance(), 1e-12)
	}
}

func TestSumHypoexponentialTails(t *testing.T) {
	// Exp(1) + Exp(3), and with a point mass and a two-atom law added (the
	// exact mixture of shifted copies); oracle the two-rate hypoexponential
	// closed form written out here, down to 1e-30.
	l, err := dist.Sum(dist.MustExponential(1), dist.MustExponential(3))
	require.NoError(t, err)
	xs := append(grid(0.001, 10, 100), 1e-6, 1e-3, 20, 30, 40, 50, 60, 69)
	wa, wr := checkAccuracy(t, l, xs, func(x float64) float64 { return hypoExpCDF(1, 3, x) },
		func(x float64) float64 { return hypoExpSurvival(1, 3, x) }, 1e-30)
	t.Logf("Exp(1)+Exp(3): worst CDF abs %.2e, worst survival rel %.2e down to 1e-30; %+v", wa, wr, l.(dist.Estimated).Accuracy())
	assert.LessOrEqual(t, wa, testref.TolCDF)
	assert.LessOrEqual(t, wr, testref.TolTailRel)
	// lower tail relative to its value: F(x) ≈ a·b·x²/2 for small x
	assert.InEpsilon(t, hypoExpCDF(1, 3, 1e-6), l.CDF(1e-6), 1e-9)
	require.NoError(t, disttest.Check(l))
	d := dist.MustDiscrete([]float64{0, 2}, []float64{0.4, 0.6})
	l2, err := dist.Sum(d, dist.MustExponential(3), dist.MustPointMass(0.5), dist.MustExponential(1))
	require.NoError(t, err)
	surv := func(x float64) float64 { return 0.4*hypoExpSurvival(1, 3, x-0.5) + 0.6*hypoExpSurvival(1, 3, x-2.5) }
	for _, x := range append(grid(0.3, 12, 50), 40, 60) {
		assert.InEpsilon(t, surv(x), l2.Survival(x), testref.TolTailRel, "x=%g", x)
		assert.InDelta(t, 1-surv(x), l2.CDF(x), testref.TolCDF, "x=%g", x)
	}
	require.NoError(t, disttest.Check(l2))
}

func TestSumBernoulliIsBinomial(t *testing.T) {
	// 12 Bernoulli(0.3) atoms sum exactly to Binomial(12, 0.3); tails via
	// gonum mathext.RegIncBeta (P(C >= k) = I_p(k, n-k+1)), not distuv's
	// 1 - CDF survival.
	const n, p = 12, 0.3
	b := dist.MustDiscrete([]float64{0, 1}, []float64{1 - p, p})
	terms := make([]dist.Law, n)
	for i := range terms {
		terms[i] = b
	}
	s, err := dist.Sum(terms...)
	require.NoError(t, err)
	d, ok := s.(dist.Discrete)
	require.True(t, ok)
	require.Equal(t, n+1, d.Len())
	iid, err := dist.SumIID(b, n)
	require.NoError(t, err)
	for k := 0; k <= n; k++ {
		atLeast := 1.0
		if k > 0 {
			atLeast = mathext.RegIncBeta(float64(k), float64(n-k+1), p)
		}
		for _, l := range []dist.Law{s, iid} {
			assert.InEpsilon(t, atLeast, l.Survival(float64(k)-0.5), 1e-12, "P(C >= %d)", k)
		}
	}
	require.NoError(t, disttest.Check(s))
}

func TestSumAtomsAndContinuousTwelveTerms(t *testing.T) {
	// 8 Bernoulli(0.4) + 4 Uniform(0,1): 12 terms mixing atoms and continuous
	// laws. Oracle: Σ_j P(B = j)·IrwinHall_4(x - j) with B ~ Binomial(8, 0.4)
	// (mathext.RegIncBeta for the binomial masses).
	const nb, p = 8, 0.4
	b := dist.MustDiscrete([]float64{0, 1}, []float64{1 - p, p})
	u := dist.MustUniform(0, 1)
	var terms []dist.Law
	for i := 0; i < nb; i++ {
		terms = append(terms, b)
	}
	for i := 0; i < 4; i++ {
		terms = append(terms, u)
	}
	l, err := dist.Sum(terms...)
	require.NoError(t, err)
	pm := make([]float64, nb+1)
	for j := 0; j <= nb; j++ {
		pm[j] = binomPMF(nb, j, p)
	}
	cdf := func(x float64) float64 {
		s := 0.0
		for j, q := range pm {
			s += q * irwinHallCDF(4, x-float64(j))
		}
		return s
	}
	surv := func(x float64) float64 {
		s := 0.0
		for j, q := range pm {
			s += q * irwinHallSurvival(4, x-float64(j))
		}
		return s
	}
	wa, wr := checkAccuracy(t, l, grid(0.01, 11.99, 300), cdf, surv, 1e-14)
	t.Logf("8 Bernoulli + 4 uniform: worst CDF abs %.2e, survival rel %.2e; %+v", wa, wr, l.(dist.Estimated).Accuracy())
	assert.LessOrEqual(t, wa, testref.TolCDF)
	assert.InEpsilon(t, nb*p+2, l.Mean(), 1e-12)
	assert.InEpsilon(t, nb*p*(1-p)+4.0/12, l.Variance(), 1e-12)
}

func TestSumMixedTermsKeepAtoms(t *testing.T) {
	// (0.3·δ0 + 0.7·Exp(1)) + (0.5·δ1 + 0.5·Exp(3)): an atom of mass 0.15 at 1
	// stays exact; the rest is 0.15·(Exp(3)) + 0.35·(1 + Exp(1)) +
	// 0.35·(Exp(1)+Exp(3)) (hypoexponential closed form).
	m1, err := dist.Mixture([]float64{0.3, 0.7}, []dist.Law{dist.MustPointMass(0), dist.MustExponential(1)})
	require.NoError(t, err)
	m2, err := dist.Mixture([]float64{0.5, 0.5}, []dist.Law{dist.MustPointMass(1), dist.MustExponential(3)})
	require.NoError(t, err)
	l, err := dist.Sum(m1, m2)
	require.NoError(t, err)
	al, ok := l.(dist.Atomic)
	require.True(t, ok)
	atoms := al.Atoms()
	require.Len(t, atoms, 1)
	assert.InDelta(t, 1, atoms[0].Value, 1e-15)
	assert.InDelta(t, 0.15, atoms[0].Mass, 1e-15)
	surv := func(x float64) float64 {
		s := 0.35 * hypoExpSurvival(1, 3, x)
		s += 0.15 * math.Exp(-3*math.Max(x, 0))
		if x < 1 {
			s += 0.35 + 0.15
		} else {
			s += 0.35 * math.Exp(-(x - 1))
		}
		return s
	}
	cdf := func(x float64) float64 { return 1 - surv(x) }
	xs := append(grid(0.01, 8, 120), 1, 15, 25, 30)
	wa, wr := checkAccuracy(t, l, xs, cdf, surv, 1e-14)
	t.Logf("mixed terms: worst CDF abs %.2e, survival rel %.2e; %+v", wa, wr, l.(dist.Estimated).Accuracy())
	// issue targets: CDF absolute error <= 1e-10, survival relative error
	// <= 1e-6 down to 1e-14 (met by the exact expansion over components)
	assert.LessOrEqual(t, wa, testref.TolCDF)
	assert.LessOrEqual(t, wr, testref.TolTailRel)
	assert.InEpsilon(t, m1.Mean()+m2.Mean(), l.Mean(), 1e-12)
	assert.InEpsilon(t, m1.Variance()+m2.Variance(), l.Variance(), 1e-12)
	require.NoError(t, disttest.Check(l))
}

func TestRandomSumGeometricExponential(t *testing.T) {
	// A geometric number N >= 1 (P(N = n) = p(1-p)^(n-1)) of Exp(λ) terms is
	// exactly Exp(pλ) (a standard result; Feller, An Introduction to
	// Probability Theory and Its Applications, vol. II — from memory).
	const p, lambda = 0.25, 2.0
	l, err := dist.RandomSum(geometric{p: p}, dist.MustExponential(lambda))
	require.NoError(t, err)
	want := dist.MustExponential(p * lambda)
	xs := append(grid(0.01, 30, 100), 40, 60, 80, 100, 120)
	wa, wr := checkAccuracy(t, l, xs, want.CDF, want.Survival, 1e-14)
	t.Logf("geometric random sum: worst CDF abs %.2e, survival rel %.2e; %+v", wa, wr, l.(dist.Estimated).Accuracy())
	// exact mixture of gammas Σ P(N = n)·Gamma(n, λ): issue targets CDF
	// absolute error <= 1e-10, survival relative error <= 1e-6 down to 1e-14
	assert.LessOrEqual(t, wa, testref.TolCDF)
	assert.LessOrEqual(t, wr, testref.TolTailRel)
	require.NoError(t, disttest.Check(l))
	assert.InEpsilon(t, 1/(p*lambda), l.Mean(), 1e-12)
	assert.InEpsilon(t, 1/(p*lambda*p*lambda), l.Variance(), 1e-12)
}

// geometric is the geometric law on {1, 2, …} with success probability p,
// written here as a plain dist.Law (no atoms listed) so that RandomSum must
// probe its CDF at the integers. S(n) = (1-p)^n.
type geometric struct{ p float64 }

func (g geometric) CDF(x float64) float64 {
	if x < 1 {
		return 0
	}
	return -math.Expm1(math.Floor(x) * math.Log1p(-g.p))
}
func (g geometric) Survival(x float64) float64 {
	if x < 1 {
		return 1
	}
	return math.Exp(math.Floor(x) * math.Log1p(-g.p))
}
func (g geometric) Quantile(p float64) float64 {
	return math.Max(1, math.Ceil(math.Log1p(-p)/math.Log1p(-g.p)))
}
func (g geometric) UpperQuantile(q float64) float64 {
	return math.Max(1, math.Ceil(math.Log(q)/math.Log1p(-g.p)))
}
func (g geometric) Mean() float64             { return 1 / g.p }
func (g geometric) Variance() float64         { return (1 - g.p) / (g.p * g.p) }
func (g geometric) Support() (lo, hi float64) { return 1, math.Inf(1) }
func (g geometric) Rand(r *rand.Rand) float64 { return g.Quantile(r.Float64()) }

func TestSixTermSumMonteCarlo(t *testing.T) {
	t.Parallel() // slow: runs beside the others (go test ≤ 90 s on two cores)
	if testing.Short() {
		t.Skip("slow oracle sweep: skipped under -short (go test -race -short ./...); CI runs it")
	}
	// The benchmark sum: no closed form, so the independent path is sampling
	// from the structure (each term's own sampler), Kolmogorov–Smirnov at
	// level 1e-6 (testref.KSCritical, DKW/Massart).
	l := sixTermSum(t)
	const n = 200000
	terms := sixTerms(t)
	xs := structuralSamples(terms, n, 7, 11)
	sort.Float64s(xs)
	ks := testref.KSStatistic(xs, l.CDF)
	assert.LessOrEqual(t, ks, testref.KSCritical(n, testref.KSLevel))
	mean, variance := 0.0, 0.0
	for _, tm := range terms {
		mean += tm.Mean()
		variance += tm.Variance()
	}
	assert.InEpsilon(t, mean, l.Mean(), 1e-12)
	assert.InEpsilon(t, variance, l.Variance(), 1e-12)
	t.Logf("six-term sum %v: KS %.2e (critical %.2e); %+v", l, ks, testref.KSCritical(n, testref.KSLevel), l.(dist.Estimated).Accuracy())
	require.NoError(t, disttest.Check(l))
}

// sixTerms are the terms of the benchmark sum (invented energies in mJ):
// two discrete laws with 6 and 3 atoms, a truncated normal, a uniform, a
// gamma and an exponential.
func sixTerms(tb testing.TB) []dist.Law {
	d6 := dist.MustDiscrete([]float64{10, 12, 15, 21, 30, 44}, []float64{0.3, 0.25, 0.2, 0.12, 0.08, 0.05})
	d3 := dist.MustDiscrete([]float64{0, 4.5, 9}, []float64{0.7, 0.2, 0.1})
	tn, err := dist.NewTruncated(dist.MustNormal(3, 1.5), 0, math.Inf(1))
	require.NoError(tb, err)
	return []dist.Law{d6, d3, tn, dist.MustUniform(1, 2.5), dist.MustGamma(2.5, 1.2), dist.MustExponential(0.8)}
}

func sixTermSum(tb testing.TB) dist.Law {
	l, err := dist.Sum(sixTerms(tb)...)
	require.NoError(tb, err)
	return l
}

func TestSumTwelveTermsAtomsAndExponentials(t *testing.T) {
	// 4 terms 0.5·δ1 + 0.5·Exp(2) and 8 Bernoulli(0.3): 12 terms mixing atoms
	// and laws whose densities jump. With J ~ Binomial(4, 1/2) exponentials
	// and B ~ Binomial(8, 0.3), the sum is (4 - J) + B + Gamma(J, 2), so
	// F(x) = Σ_j Σ_b P(J=j)·P(B=b)·G_j(x - 4 + j - b), G_j the Gamma(j, 2)
	// CDF from gonum distuv.Gamma (upper tail mathext.GammaIncRegComp; G_0 a
	// point mass at 0). Binomial masses from mathext.RegIncBeta.
	m, err := dist.Mixture([]float64{0.5, 0.5}, []dist.Law{dist.MustPointMass(1), dist.MustExponential(2)})
	require.NoError(t, err)
	b := dist.MustDiscrete([]float64{0, 1}, []float64{0.7, 0.3})
	var terms []dist.Law
	for i := 0; i < 4; i++ {
		terms = append(terms, m, b)
	}
	for i := 0; i < 4; i++ {
		terms = append(terms, b)
	}
	l, err := dist.Sum(terms...)
	require.NoError(t, err)
	cdfSurv := func(x float64) (f, s float64) {
		for j := 0; j <= 4; j++ {
			for k := 0; k <= 8; k++ {
				w := binomPMF(4, j, 0.5) * binomPMF(8, k, 0.3)
				y := x - float64(4-j) - float64(k)
				df, ds := gammaCDFSurv(j, 2, y)
				f, s = f+w*df, s+w*ds
			}
		}
		return f, s
	}
	cdf := func(x float64) float64 { f, _ := cdfSurv(x); return f }
	surv := func(x float64) float64 { _, s := cdfSurv(x); return s }
	xs := append(grid(0.013, 14, 250), 16, 18, 20, 22)
	wa, wr := checkAccuracy(t, l, xs, cdf, surv, 1e-14)
	t.Logf("4 atom+exponential mixtures + 8 Bernoulli: worst CDF abs %.2e, survival rel %.2e; %+v", wa, wr, l.(dist.Estimated).Accuracy())
	assert.LessOrEqual(t, wa, testref.TolCDF)
	assert.LessOrEqual(t, wr, testref.TolTailRel)
	assert.InEpsilon(t, 4*0.75+8*0.3, l.Mean(), 1e-12)
	assert.InEpsilon(t, 4*m.Variance()+8*0.21, l.Variance(), 1e-12)
	require.NoError(t, disttest.Check(l, disttest.WithSamples(20000)))
}

func TestRandomSumGeometricFromZeroExponential(t *testing.T) {
	// A geometric count on {0, 1, …} (P(N = n) = p(1-p)^n) of Exp(λ) terms is
	// p·δ0 + (1-p)·Exp(pλ) (a standard result; Feller vol. II — from memory).
	const p, lambda = 0.4, 3.0
	l, err := dist.RandomSum(shifted{geometric{p: p}}, dist.MustExponential(lambda))
	require.NoError(t, err)
	e := dist.MustExponential(p * lambda)
	surv := func(x float64) float64 {
		if x < 0 {
			return 1
		}
		return (1 - p) * e.Survival(x)
	}
	cdf := func(x float64) float64 {
		if x < 0 {
			return 0
		}
		return p + (1-p)*e.CDF(x)
	}
	xs := append(grid(0.01, 20, 100), 25, 30)
	wa, wr := checkAccuracy(t, l, xs, cdf, surv, 1e-14)
	t.Logf("geometric from 0: worst CDF abs %.2e, survival rel %.2e; %+v", wa, wr, l.(dist.Estimated).Accuracy())
	assert.LessOrEqual(t, wa, testref.TolCDF)
	assert.LessOrEqual(t, wr, testref.TolTailRel)
	al, ok := l.(dist.Atomic)
	require.True(t, ok)
	require.Len(t, al.Atoms(), 1)
	assert.InDelta(t, p, al.Atoms()[0].Mass, 1e-15)
	require.NoError(t, disttest.Check(l, disttest.WithSamples(20000)))
}

// shifted is a count law moved down by one (geometric on {0, 1, …}).
type shifted struct{ g geometric }

func (s shifted) CDF(x float64) float64           { return s.g.CDF(x + 1) }
func (s shifted) Survival(x float64) float64      { return s.g.Survival(x + 1) }
func (s shifted) Quantile(p float64) float64      { return s.g.Quantile(p) - 1 }
func (s shifted) UpperQuantile(q float64) float64 { return s.g.UpperQuantile(q) - 1 }
func (s shifted) Mean() float64                   { return s.g.Mean() - 1 }
func (s shifted) Variance() float64               { return s.g.Variance() }
func (s shifted) Support() (lo, hi float64)       { return 0, math.Inf(1) }
func (s shifted) Rand(r *rand.Rand) float64       { return s.g.Rand(r) - 1 }

// binomPMF is P(B = k) for B ~ Binomial(n, p), as P(B >= k) - P(B >= k+1)
// with P(B >= k) = I_p(k, n-k+1) from gonum mathext.RegIncBeta.
func binomPMF(n, k int, p float64) float64 {
	ge := 1.0
	if k > 0 {
		ge = mathext.RegIncBeta(float64(k), float64(n-k+1), p)
	}
	gt := 0.0
	if k < n {
		gt = mathext.RegIncBeta(float64(k+1), float64(n-k), p)
	}
	return ge - gt
}

func TestSumGridInterpolationBound(t *testing.T) {
	// After many values a numerical sum answers from a grid (cubic Hermite
	// interpolation of the series); its stated bound must still hold.
	// Oracles: Irwin–Hall (closed form above); Exp(1) + Uniform(0,1), whose
	// CDF is x - (1 - e^{-x}) on [0, 1] and 1 - (e^{-(x-1)} - e^{-x}) beyond
	// (the convolution integral ∫_0^1 F_E(x - u) du, worked out here);
	// 8 Bernoulli(0.4) + 4 Uniform(0,1) (binomial mixture of Irwin–Hall).
	u := dist.MustUniform(0, 1)
	eu, err := dist.Sum(dist.MustExponential(1), u)
	require.NoError(t, err)
	euCDF := func(x float64) float64 {
		switch {
		case x <= 0:
			return 0
		case x <= 1:
			return x + math.Expm1(-x)
		}
		return 1 - math.Exp(-x)*math.Expm1(1)
	}
	euSurv := func(x float64) float64 {
		switch {
		case x <= 0:
			return 1
		case x <= 1:
			return 1 - x - math.Expm1(-x)
		}
		return math.Exp(-x) * math.Expm1(1)
	}
	ih12 := dist.MustSum(u, u, u, u, u, u, u, u, u, u, u, u)
	b := dist.MustDiscrete([]float64{0, 1}, []float64{0.6, 0.4})
	mixed := dist.MustSum(b, b, b, b, b, b, b, b, u, u, u, u)
	mixedCDF := func(x float64) float64 {
		s := 0.0
		for j := 0; j <= 8; j++ {
			s += binomPMF(8, j, 0.4) * irwinHallCDF(4, x-float64(j))
		}
		return s
	}
	mixedSurv := func(x float64) float64 {
		s := 0.0
		for j := 0; j <= 8; j++ {
			s += binomPMF(8, j, 0.4) * irwinHallSurvival(4, x-float64(j))
		}
		return s
	}
	cases := []struct {
		name      string
		l         dist.Law
		lo, hi    float64
		cdf, surv func(float64) float64
	}{
		{"Exp(1)+U(0,1)", eu, 0.01, 12, euCDF, euSurv},
		{"Irwin–Hall 12", ih12, 0.5, 11.5, func(x float64) float64 { return irwinHallCDF(12, x) }, func(x float64) float64 { return irwinHallSurvival(12, x) }},
		{"8 Bernoulli + 4 uniform", mixed, 0.01, 11.99, mixedCDF, mixedSurv},
	}
	gridUsed := 0
	for _, c := range cases {
		mid := c.l.Quantile(0.5)
		for _, x := range grid(mid-0.5, mid+0.5, 2100) { // more than the 2048 values after which the grid is built
			c.l.CDF(x)
		}
		wa, wr := checkAccuracy(t, c.l, grid(c.lo, c.hi, 301), c.cdf, c.surv, 1e-14)
		acc := c.l.(dist.Estimated).Accuracy()
		if strings.Contains(acc.Method, "grid") {
			gridUsed++
		}
		t.Logf("%s: worst CDF abs %.2e, survival rel %.2e; %+v", c.name, wa, wr, acc)
		assert.LessOrEqual(t, wa, testref.TolCDF, c.name)
	}
	assert.Positive(t, gridUsed, "at least one law must answer from its grid")
}

func TestSumGridConcurrent(t *testing.T) {
	// Values from several goroutines across the point where the grid is
	// built agree with the series values computed before it (run with -race).
	l := dist.MustSum(dist.MustUniform(0, 1), dist.MustUniform(0, 2), dist.MustExponential(1), dist.MustNormal(0, 0.1))
	xs := grid(-0.5, 6, 64)
	want := make([]float64, len(xs))
	for i, x := range xs {
		want[i] = l.CDF(x)
	}
	acc := l.(dist.Estimated).Accuracy()
	done := make(chan []float64)
	for g := 0; g < 4; g++ {
		go func() {
			var got []float64
			for rep := 0; rep < 20; rep++ {
				for _, x := range xs {
					got = append(got, l.CDF(x))
				}
			}
			done <- got
		}()
	}
	for g := 0; g < 4; g++ {
		got := <-done
		for i, v := range got {
			assert.InDelta(t, want[i%len(xs)], v, 2*acc.CDFAbs)
		}
	}
}

func TestSumIIDAtomExponentialMixture(t *testing.T) {
	// k draws of 0.3·δ_{0.5} + 0.7·Exp(2) (a quick failure or an
	// exponentially long attempt): with J ~ Binomial(k, 0.7) exponential
	// draws the sum is (k - J)·0.5 + Gamma(J, 2). Oracle: binomial masses
	// from mathext.RegIncBeta (binomPMF), gonum distuv.Gamma for the CDF and
	// mathext.GammaIncRegComp for the upper tail.
	m, err := dist.Mixture([]float64{0.3, 0.7}, []dist.Law{dist.MustPointMass(0.5), dist.MustExponential(2)})
	require.NoError(t, err)
	for _, k := range []int{2, 12, 100} {
		l, err := dist.SumIID(m, k)
		require.NoError(t, err)
		cdfSurv := func(x float64) (f, s float64) {
			for j := 0; j <= k; j++ {
				w := binomPMF(k, j, 0.7)
				y := x - 0.5*float64(k-j)
				df, ds := gammaCDFSurv(j, 2, y)
				f, s = f+w*df, s+w*ds
			}
			return f, s
		}
		cdf := func(x float64) float64 { f, _ := cdfSurv(x); return f }
		surv := func(x float64) float64 { _, s := cdfSurv(x); return s }
		mean, sd := l.Mean(), math.Sqrt(l.Variance())
		xs := append(grid(math.Max(0.01, mean-6*sd), mean+8*sd, 200), mean+15*sd, mean+20*sd)
		wa, wr := checkAccuracy(t, l, xs, cdf, surv, 1e-14)
		t.Logf("k=%d: worst CDF abs %.2e, survival rel %.2e; %+v", k, wa, wr, l.(dist.Estimated).Accuracy())
		assert.LessOrEqual(t, wa, testref.TolCDF)
		assert.LessOrEqual(t, wr, testref.TolTailRel)
		assert.InEpsilon(t, float64(k)*m.Mean(), l.Mean(), 1e-12)
		assert.InEpsilon(t, float64(k)*m.Variance(), l.Variance(), 1e-12)
	}
	l, err := dist.SumIID(m, 12)
	require.NoError(t, err)
	require.NoError(t, disttest.Check(l, disttest.WithSamples(20000)))
}

// gammaCDFSurv is P(G <= y) and P(G > y) for G ~ Gamma(j, rate) (G = 0 for
// j = 0): gonum distuv.Gamma for the CDF, mathext.GammaIncRegComp for the
// upper tail.
func gammaCDFSurv(j int, rate, y float64) (f, s float64) {
	switch {
	case j == 0 && y >= 0:
		return 1, 0
	case y <= 0:
		return 0, 1
	}
	return distuv.Gamma{Alpha: float64(j), Beta: rate}.CDF(y), mathext.GammaIncRegComp(float64(j), rate*y)
}

func TestRandomSumOfAtomExponentialMixture(t *testing.T) {
	// Up to four attempts (N on {1, 2, 3, 4}), each 0.3·δ_{0.5} +
	// 0.7·Exp(2). Given N = n, J ~ Binomial(n, 0.7) attempts are
	// exponential: the sum is (n - J)·0.5 + Gamma(J, 2). Oracle: binomial
	// masses by mathext.RegIncBeta (binomPMF) and gammaCDFSurv (gonum).
	m, err := dist.Mixture([]float64{0.3, 0.7}, []dist.Law{dist.MustPointMass(0.5), dist.MustExponential(2)})
	require.NoError(t, err)
	pn := []float64{0.4, 0.3, 0.2, 0.1}
	count := dist.MustDiscrete([]float64{1, 2, 3, 4}, pn)
	l, err := dist.RandomSum(count, m)
	require.NoError(t, err)
	cdfSurv := func(x float64) (f, s float64) {
		for i, q := range pn {
			n := i + 1
			for j := 0; j <= n; j++ {
				w := q * binomPMF(n, j, 0.7)
				df, ds := gammaCDFSurv(j, 2, x-0.5*float64(n-j))
				f, s = f+w*df, s+w*ds
			}
		}
		return f, s
	}
	cdf := func(x float64) float64 { f, _ := cdfSurv(x); return f }
	surv := func(x float64) float64 { _, s := cdfSurv(x); return s }
	xs := append(grid(0.01, 8, 200), 10, 12, 15, 18)
	wa, wr := checkAccuracy(t, l, xs, cdf, surv, 1e-14)
	t.Logf("random sum of atom+exponential attempts: worst CDF abs %.2e, survival rel %.2e; %+v", wa, wr, l.(dist.Estimated).Accuracy())
	assert.LessOrEqual(t, wa, testref.TolCDF)
	assert.LessOrEqual(t, wr, testref.TolTailRel)
	en, vn := count.Mean(), count.Variance()
	assert.InEpsilon(t, en*m.Mean(), l.Mean(), 1e-12)
	assert.InEpsilon(t, en*m.Variance()+vn*m.Mean()*m.Mean(), l.Variance(), 1e-12)
	require.NoError(t, disttest.Check(l, disttest.WithSamples(20000)))
}

func TestSumExpandedMixtureCharFunc(t *testing.T) {
	// The expanded sum keeps a characteristic function: that of
	// (0.3·δ0 + 0.7·Exp(1)) + Exp(3) is (0.3 + 0.7/(1 - it))/(1 - it/3)
	// (the exponential's transform, a standard result).
	m, err := dist.Mixture([]float64{0.3, 0.7}, []dist.Law{dist.MustPointMass(0), dist.MustExponential(1)})
	require.NoError(t, err)
	l, err := dist.Sum(m, dist.MustExponential(3))
	require.NoError(t, err)
	c, ok := l.(dist.CharFunc)
	require.True(t, ok, "%T", l)
	for _, u := range []float64{0, 0.3, 1, 5, 40} {
		want := (0.3 + 0.7/complex(1, -u)) / complex(1, -u/3)
		got := c.CF(u)
		assert.InDelta(t, real(want), real(got), 1e-14, "t=%g", u)
		assert.InDelta(t, imag(want), imag(got), 1e-14, "t=%g", u)
	}
}
