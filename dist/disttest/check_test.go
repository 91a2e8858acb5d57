package disttest_test

import (
	"errors"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/dist/disttest"
	"github.com/joulelaw/joulelaw/internal/testref"
)

// continuous is what the broken continuous laws below wrap: a law with a
// density and a characteristic function (Normal, Exponential, Uniform).
type continuous interface {
	dist.Densitied
	CF(t float64) complex128
}

// brokenCont is a continuous law with some methods replaced. Nil fields
// fall through to base.
type brokenCont struct {
	base                   continuous
	cdf, surv, dens, q, uq func(float64) float64
	mean, variance         func() float64
	rnd                    func(*rand.Rand) float64
	cf                     func(float64) complex128
}

func or(f func(float64) float64, g func(float64) float64, x float64) float64 {
	if f != nil {
		return f(x)
	}
	return g(x)
}

func (b brokenCont) CDF(x float64) float64           { return or(b.cdf, b.base.CDF, x) }
func (b brokenCont) Survival(x float64) float64      { return or(b.surv, b.base.Survival, x) }
func (b brokenCont) Density(x float64) float64       { return or(b.dens, b.base.Density, x) }
func (b brokenCont) Quantile(p float64) float64      { return or(b.q, b.base.Quantile, p) }
func (b brokenCont) UpperQuantile(q float64) float64 { return or(b.uq, b.base.UpperQuantile, q) }
func (b brokenCont) Support() (lo, hi float64)       { return b.base.Support() }
func (b brokenCont) Mean() float64 {
	if b.mean != nil {
		return b.mean()
	}
	return b.base.Mean()
}
func (b brokenCont) Variance() float64 {
	if b.variance != nil {
		return b.variance()
	}
	return b.base.Variance()
}
func (b brokenCont) Rand(r *rand.Rand) float64 {
	if b.rnd != nil {
		return b.rnd(r)
	}
	return b.base.Rand(r)
}
func (b brokenCont) CF(t float64) complex128 {
	if b.cf != nil {
		return b.cf(t)
	}
	return b.base.CF(t)
}

// brokenAtoms is a discrete law with some methods replaced.
type brokenAtoms struct {
	base     dist.Discrete
	atoms    func() []dist.Atom
	cdf, q   func(float64) float64
	rnd      func(*rand.Rand) float64
	variance func() float64
}

func (b brokenAtoms) CDF(x float64) float64           { return or(b.cdf, b.base.CDF, x) }
func (b brokenAtoms) Survival(x float64) float64      { return b.base.Survival(x) }
func (b brokenAtoms) Quantile(p float64) float64      { return or(b.q, b.base.Quantile, p) }
func (b brokenAtoms) UpperQuantile(q float64) float64 { return b.base.UpperQuantile(q) }
func (b brokenAtoms) Support() (lo, hi float64)       { return b.base.Support() }
func (b brokenAtoms) Mean() float64                   { return b.base.Mean() }
func (b brokenAtoms) Variance() float64 {
	if b.variance != nil {
		return b.variance()
	}
	return b.base.Variance()
}
func (b brokenAtoms) Atoms() []dist.Atom {
	if b.atoms != nil {
		return b.atoms()
	}
	return b.base.Atoms()
}
func (b brokenAtoms) Rand(r *rand.Rand) float64 {
	if b.rnd != nil {
		return b.rnd(r)
	}
	return b.base.Rand(r)
}

// estimated is a law that reports an error bound.
type estimated struct {
	brokenCont
	acc dist.Accuracy
}

func (e estimated) Accuracy() dist.Accuracy { return e.acc }

// failed returns the names of the checks that failed, from the joined error.
func failed(err error) []string {
	seen := map[string]bool{}
	var walk func(error)
	walk = func(e error) {
		var f *disttest.Failure
		if errors.As(e, &f) && !isJoin(e) {
			seen[f.Check] = true
			return
		}
		if u, ok := e.(interface{ Unwrap() []error }); ok {
			for _, x := range u.Unwrap() {
				walk(x)
			}
		}
	}
	if err != nil {
		walk(err)
	}
	out := make([]string, 0, len(seen))
	for k := range seen {
		out = append(out, k)
	}
	slices.Sort(out)
	return out
}

func isJoin(e error) bool { _, ok := e.(interface{ Unwrap() []error }); return ok }

var (
	stdNormal = dist.MustNormal(0, 1)
	expo      = dist.MustExponential(2)
	threeAtom = dist.MustDiscrete([]float64{1, 2, 5}, []float64{0.2, 0.5, 0.3})
)

// TestCheckPassesGoodLaws: the laws of package dist pass, with and without
// atoms, and with a reference table for the normal tail.
func TestCheckPassesGoodLaws(t *testing.T) {
	var zs []float64
	for _, p := range testref.NormalUpperTail {
		zs = append(zs, p.Z)
	}
	ref := func(z float64) float64 {
		for _, p := range testref.NormalUpperTail {
			if p.Z == z {
				return p.Q
			}
		}
		return math.NaN()
	}
	for _, tc := range []struct {
		name string
		law  dist.Law
		opts []disttest.Option
	}{
		{"normal", stdNormal, []disttest.Option{disttest.WithReference(ref, zs, testref.NormalTailTol(37.5))}},
		{"exponential", expo, nil},
		{"uniform", dist.MustUniform(-1, 3), nil},
		{"discrete", threeAtom, nil},
		{"point mass", dist.MustPointMass(-2.5), nil},
		{"wrapped normal (all methods pass through)", brokenCont{base: stdNormal}, nil},
		{"Cauchy (no moments, tails to 1e300)", cauchy{}, nil},
		{"zero-inflated exponential (atom at the support's end)", zeroInflated{}, nil},
		{"other seed and size", stdNormal, []disttest.Option{disttest.WithSeed(7), disttest.WithSamples(5000)}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			assert.NoError(t, disttest.Check(tc.law, tc.opts...))
		})
	}
}

// TestCheckCatchesBrokenLaws: each deliberately broken law is reported by
// the checks named, and the failure says what and where.
func TestCheckCatchesBrokenLaws(t *testing.T) {
	nrm := stdNormal
	normal01 := dist.MustNormal(0.1, 1)
	tests := []struct {
		name string
		law  dist.Law
		opts []disttest.Option
		want []string // checks that must fail (others may fail too)
		only bool     // no other check may fail
	}{
		{
			name: "survival computed as 1 - CDF",
			law:  brokenCont{base: nrm, surv: func(x float64) float64 { return 1 - nrm.CDF(x) }},
			opts: []disttest.Option{disttest.WithReference(nrm.Survival, []float64{3, 10}, 1e-12)},
			want: []string{disttest.CheckDensity, disttest.CheckUpper, disttest.CheckReference},
		},
		{
			name: "survival off by 1e-6",
			law:  brokenCont{base: nrm, surv: func(x float64) float64 { return math.Min(1, nrm.Survival(x)+1e-6) }},
			want: []string{disttest.CheckComplement},
		},
		{
			name: "rand ignores its source",
			law:  brokenCont{base: nrm, rnd: func(*rand.Rand) float64 { return rand.NormFloat64() }},
			want: []string{disttest.CheckRand},
		},
		{
			name: "rand shifted by 0.1 sd",
			law:  brokenCont{base: nrm, rnd: normal01.Rand},
			want: []string{disttest.CheckRand},
			only: true,
		},
		{
			name: "rand 10% too wide",
			law:  brokenCont{base: nrm, rnd: func(r *rand.Rand) float64 { return 1.1 * r.NormFloat64() }},
			want: []string{disttest.CheckRand},
			only: true,
		},
		{
			name: "rand leaves the support",
			law:  brokenCont{base: expo, rnd: func(r *rand.Rand) float64 { return r.ExpFloat64()/2 - 1e-3 }},
			want: []string{disttest.CheckRand},
			only: true,
		},
		{
			name: "density 1% too high",
			law:  brokenCont{base: nrm, dens: func(x float64) float64 { return 1.01 * nrm.Density(x) }},
			want: []string{disttest.CheckMass, disttest.CheckDensity},
		},
		{
			name: "density 1e-6 too high",
			law:  brokenCont{base: nrm, dens: func(x float64) float64 { return (1 + 1e-6) * nrm.Density(x) }},
			want: []string{disttest.CheckDensity},
		},
		{
			name: "CDF decreasing on [1, 2)",
			law: brokenCont{base: nrm, cdf: func(x float64) float64 {
				if x >= 1 && x < 2 {
					return nrm.CDF(1) - 0.1*(x-1)
				}
				return nrm.CDF(x)
			}},
			want: []string{disttest.CheckMonotone, disttest.CheckComplement},
		},
		{
			name: "quantile off by 1e-3",
			law:  brokenCont{base: nrm, q: func(p float64) float64 { return nrm.Quantile(p) + 1e-3 }},
			want: []string{disttest.CheckQuantile},
		},
		{
			name: "upper quantile inverts the CDF (wrong tail)",
			law:  brokenCont{base: nrm, uq: nrm.Quantile},
			want: []string{disttest.CheckUpper},
		},
		{
			name: "mean wrong by 0.01",
			law:  brokenCont{base: nrm, mean: func() float64 { return 0.01 }},
			want: []string{disttest.CheckMoments, disttest.CheckCF},
		},
		{
			name: "variance wrong by 0.1%",
			law:  brokenCont{base: nrm, variance: func() float64 { return 1.001 }},
			want: []string{disttest.CheckMoments, disttest.CheckCF},
		},
		{
			name: "CF of another law",
			law:  brokenCont{base: nrm, cf: normal01.CF},
			want: []string{disttest.CheckCF},
			only: true,
		},
		{
			name: "CF not conjugate-symmetric",
			law: brokenCont{base: nrm, cf: func(t float64) complex128 {
				if t < 0 {
					return cmplx.Conj(nrm.CF(t)) * cmplx.Exp(complex(0, 0.01))
				}
				return nrm.CF(t)
			}},
			want: []string{disttest.CheckCF},
		},
		{
			name: "CDF(NaN) = 0",
			law: brokenCont{base: nrm, cdf: func(x float64) float64 {
				if math.IsNaN(x) {
					return 0
				}
				return nrm.CDF(x)
			}},
			want: []string{disttest.CheckSpecial},
			only: true,
		},
		{
			name: "Quantile(0) is not the support's end",
			law: brokenCont{base: nrm, q: func(p float64) float64 {
				if p == 0 {
					return -40
				}
				return nrm.Quantile(p)
			}},
			want: []string{disttest.CheckSpecial},
			only: true,
		},
		{
			name: "Quantile(2) is not NaN",
			law: brokenCont{base: expo, q: func(p float64) float64 {
				if p > 1 {
					return math.Inf(1)
				}
				return expo.Quantile(p)
			}},
			want: []string{disttest.CheckSpecial},
			only: true,
		},
		{
			name: "density panics",
			law:  brokenCont{base: nrm, dens: func(float64) float64 { panic("boom") }},
			want: []string{disttest.CheckSpecial, disttest.CheckMass, disttest.CheckDensity, disttest.CheckCF},
		},
		{
			name: "atom masses wrong",
			law: brokenAtoms{base: threeAtom, atoms: func() []dist.Atom {
				a := threeAtom.Atoms()
				a[0].Mass, a[1].Mass = 0.25, 0.45
				return a
			}},
			want: []string{disttest.CheckAtoms},
		},
		{
			name: "atoms unsorted",
			law: brokenAtoms{base: threeAtom, atoms: func() []dist.Atom {
				a := threeAtom.Atoms()
				a[0], a[2] = a[2], a[0]
				return a
			}},
			want: []string{disttest.CheckAtoms},
		},
		{
			name: "atoms slice shared with the law",
			law: func() dist.Law {
				shared := threeAtom.Atoms()
				return brokenAtoms{base: threeAtom, atoms: func() []dist.Atom { return shared }}
			}(),
			want: []string{disttest.CheckAtoms},
			only: true,
		},
		{
			name: "quantile steps to the next atom at a jump's top (> for >=)",
			law: brokenAtoms{base: threeAtom, q: func(p float64) float64 {
				for _, a := range []float64{1, 2} {
					if p == threeAtom.CDF(a) {
						return threeAtom.Quantile(math.Nextafter(p, 2))
					}
				}
				return threeAtom.Quantile(p)
			}},
			want: []string{disttest.CheckAtoms},
		},
		{
			name: "rand never draws the top atom",
			law: brokenAtoms{base: threeAtom, rnd: func(r *rand.Rand) float64 {
				if x := threeAtom.Rand(r); x < 5 {
					return x
				}
				return 2
			}},
			want: []string{disttest.CheckRand},
			only: true,
		},
		{
			name: "rand draws between atoms",
			law: brokenAtoms{base: threeAtom, rnd: func(r *rand.Rand) float64 {
				if x := threeAtom.Rand(r); x != 2 || r.Float64() < 0.99 {
					return x
				}
				return 3
			}},
			want: []string{disttest.CheckRand},
			only: true,
		},
		{
			name: "discrete variance wrong",
			law:  brokenAtoms{base: threeAtom, variance: func() float64 { return threeAtom.Variance() * 1.01 }},
			want: []string{disttest.CheckMoments},
			only: true,
		},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			err := disttest.Check(tc.law, tc.opts...)
			require.Error(t, err)
			got := failed(err)
			for _, w := range tc.want {
				assert.Contains(t, got, w, "failures: %v", err)
			}
			if tc.only {
				assert.ElementsMatch(t, tc.want, got, "failures: %v", err)
			}
			assert.True(t, strings.HasPrefix(err.Error(), "disttest: "), err.Error())
		})
	}
}

// TestCheckTolerance: a CDF perturbed by δ·exp(-x²/2) (Survival by the
// opposite, so that they still sum to 1) fails as it stands, passes when
// the law reports CDFAbs >= δ, and passes with WithTolerance(δ').
func TestCheckTolerance(t *testing.T) {
	const delta = 5e-7
	nrm := stdNormal
	bump := func(x float64) float64 { return delta * math.Exp(-x*x/2) }
	law := brokenCont{
		base: nrm,
		cdf:  func(x float64) float64 { return nrm.CDF(x) + bump(x) },
		surv: func(x float64) float64 { return nrm.Survival(x) - bump(x) },
	}
	err := disttest.Check(law)
	require.Error(t, err)
	assert.Contains(t, failed(err), disttest.CheckQuantile)

	assert.NoError(t, disttest.Check(law, disttest.WithTolerance(2*delta)))
	assert.NoError(t, disttest.Check(estimated{brokenCont: law, acc: dist.Accuracy{CDFAbs: 2 * delta, Method: "test"}}))
	assert.Error(t, disttest.Check(estimated{brokenCont: law, acc: dist.Accuracy{CDFAbs: delta / 100, Method: "test"}}))
}

// TestCheckEstimatedSurvivalClaim: a law that claims a survival accuracy
// it does not have is caught against a reference.
func TestCheckEstimatedSurvivalClaim(t *testing.T) {
	nrm := stdNormal
	law := estimated{
		brokenCont: brokenCont{base: nrm, surv: func(x float64) float64 {
			if !(x > 0) {
				return nrm.Survival(x)
			}
			return nrm.Survival(x) * (1 + 1e-9*math.Min(x*x, 100))
		}},
		acc: dist.Accuracy{CDFAbs: 1e-9, SurvivalRel: 1e-12, TailFloor: 1e-300, Method: "test"},
	}
	xs := []float64{5, 8}
	err := disttest.Check(law, disttest.WithReference(nrm.Survival, xs, 1e-6))
	require.Error(t, err)
	assert.Equal(t, []string{disttest.CheckReference}, failed(err), "%v", err)
	assert.Contains(t, err.Error(), "reported accuracy")
}

func TestCheckOptions(t *testing.T) {
	for _, o := range []disttest.Option{
		disttest.WithSamples(10),
		disttest.WithLevel(0),
		disttest.WithLevel(0.5),
		disttest.WithTolerance(-1),
		disttest.WithTolerance(math.NaN()),
		disttest.WithQuantileTolerance(1),
		disttest.WithDensityTolerance(math.Inf(1)),
		disttest.WithMomentTolerance(-1),
		disttest.WithCFTolerance(1),
		disttest.WithSurvivalTolerance(1, 0),
		disttest.WithReference(nil, []float64{1}, 0.1),
		disttest.WithCDFReference(stdNormal.CDF, nil, 0.1),
	} {
		err := disttest.Check(stdNormal, o)
		require.Error(t, err)
		assert.Equal(t, []string{disttest.CheckOptions}, failed(err))
	}
	assert.Equal(t, []string{disttest.CheckOptions}, failed(disttest.Check(nil)))
}

// TestCheckFailureFormat: a failure names the check, the place, the
// expectation and the value; repeated failures are capped and counted.
func TestCheckFailureFormat(t *testing.T) {
	f := &disttest.Failure{Check: "quantile", At: "p = 0.5", Want: "CDF(x) >= p", Got: "0.4"}
	assert.Equal(t, "disttest: quantile: at p = 0.5: want CDF(x) >= p, got 0.4", f.Error())

	law := brokenCont{base: stdNormal, surv: func(x float64) float64 { return math.Min(1, stdNormal.Survival(x)+1e-6) }}
	err := disttest.Check(law)
	require.Error(t, err)
	assert.Contains(t, err.Error(), "more failures not shown")
}

// TestCheckReproducible: the same law and seed give the same report.
func TestCheckReproducible(t *testing.T) {
	law := brokenCont{base: stdNormal, rnd: dist.MustNormal(0.1, 1).Rand}
	a, b := disttest.Check(law), disttest.Check(law)
	require.Error(t, a)
	assert.Equal(t, a.Error(), b.Error())
}
