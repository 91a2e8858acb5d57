package energy_test

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/energy"
)

// poissonAtLeast returns P(Poisson(mu) >= n) summed from the top of the
// mass function, each term exp(k·log μ − μ − lgamma(k+1)) (closed form).
func poissonAtLeast(mu float64, n int) float64 {
	s := 0.0
	for k := n + 200; k >= n; k-- {
		lg, _ := math.Lgamma(float64(k + 1))
		s += math.Exp(float64(k)*math.Log(mu) - mu - lg)
	}
	return s
}

// TestRenewalsClosedForms: exponential lives give Poisson counts; Erlang
// lives of shape k give P(N(t) >= n) = P(Poisson(λt) >= n·k) (S_n is a
// gamma of shape n·k; Cox, "Renewal Theory", 1962, §1.3, from memory: the
// Poisson process counts the phases); a fixed life d gives N(t) =
// floor(t/d) exactly.
func TestRenewalsClosedForms(t *testing.T) {
	const rate = 0.25 // per year
	for _, c := range []struct {
		name  string
		life  dist.Law
		t     float64 // years
		shape int
	}{
		{"exponential", dist.MustExponential(rate / energy.Year), 12, 1},
		{"erlang 3", dist.MustGamma(3, rate/energy.Year), 30, 3},
		{"erlang 6", dist.MustGamma(6, rate/energy.Year), 60, 6},
	} {
		t.Run(c.name, func(t *testing.T) {
			h := c.t * energy.Year
			r, err := energy.NewRenewals(c.life, h)
			require.NoError(t, err)
			cnt, err := r.Count(h)
			require.NoError(t, err)
			tol := r.Accuracy().CDFAbs
			assert.Less(t, tol, 1e-10)
			mu := rate * c.t
			for n := 0; n <= r.Max()+1; n++ {
				want := poissonAtLeast(mu, n*c.shape)
				assert.InDelta(t, want, r.AtLeast(n, h), tol+1e-14, "n = %d", n)
				if n > 0 {
					assert.InDelta(t, want, cnt.Survival(float64(n)-0.5), tol+1e-14, "n = %d", n)
				}
			}
			// At half the horizon too.
			for n := 1; n <= 4; n++ {
				assert.InDelta(t, poissonAtLeast(mu/2, n*c.shape), r.AtLeast(n, h/2), tol+1e-14)
			}
		})
	}
	t.Run("fixed", func(t *testing.T) {
		d := 3 * energy.Year
		r, err := energy.NewRenewals(dist.MustPointMass(d), 20*energy.Year)
		require.NoError(t, err)
		for _, ty := range []float64{0, 2.9, 3, 5, 14.99, 15, 20} {
			cnt, err := r.Count(ty * energy.Year)
			require.NoError(t, err)
			want := math.Floor(ty * energy.Year / d)
			assert.Equal(t, 1.0, cnt.CDF(want), "t = %v y", ty)
			assert.Equal(t, 0.0, cnt.CDF(want-0.5), "t = %v y", ty)
		}
	})
}

// TestLatticeRenewalsClosedForms: the lattice path against the same
// closed forms (exponential lives: Poisson counts; Erlang lives: Poisson
// counts of phases; Cox, "Renewal Theory", 1962, §1.3, from memory) at
// five times between a tenth of the horizon and the horizon, off the
// lattice points: the true error within the stated one, and the stated one
// small (the lattice error falls as the step squared: 8 times the points,
// about 64 times less).
func TestLatticeRenewalsClosedForms(t *testing.T) {
	const rate = 0.25 // per year
	for _, c := range []struct {
		name   string
		life   dist.Law
		t      float64 // years
		shape  int
		points int
		stated float64 // at most
	}{
		{"exponential", dist.MustExponential(rate / energy.Year), 12, 1, 0, 2e-6},
		{"exponential, 512 points", dist.MustExponential(rate / energy.Year), 12, 1, 512, 1e-4},
		{"erlang 3", dist.MustGamma(3, rate/energy.Year), 30, 3, 0, 1e-6},
		{"erlang 6", dist.MustGamma(6, rate/energy.Year), 60, 6, 0, 1e-6},
	} {
		t.Run(c.name, func(t *testing.T) {
			h := c.t * energy.Year
			r, err := energy.NewLatticeRenewals(c.life, h, c.points)
			require.NoError(t, err)
			tol := r.Accuracy().CDFAbs
			assert.Less(t, tol, c.stated)
			for _, f := range []float64{0.1, 0.3, 0.5, 0.77, 1} {
				mu := rate * c.t * f
				for n := 0; n <= r.Max()+1; n++ {
					assert.InDelta(t, poissonAtLeast(mu, n*c.shape), r.AtLeast(n, h*f), tol, "n = %d, t = %g h", n, f)
				}
				cnt, err := r.Count(h * f)
				require.NoError(t, err)
				assert.InDelta(t, poissonAtLeast(mu, c.shape), cnt.Survival(0.5), tol)
			}
		})
	}
}

// TestRenewalsCalendarAtom: a life lo + min(E, c − lo) (an exponential
// from 2 years, cut at a 6-year calendar limit with the atom e^{−λ(c−lo)}
// there) against renewals sampled from the
// structure (exponential draws cut at c, counted until their sum passes
// t), 20000 paths, seeded: each P(N >= n) within the Dvoretzky–Kiefer–
// Wolfowitz bound at level 1e-6, sqrt(ln(2/1e-6)/(2·20000)) = 0.019.
func TestRenewalsCalendarAtom(t *testing.T) {
	const rate = 0.3 / energy.Year
	lo, cal := 2*energy.Year, 6*energy.Year
	a := math.Exp(-rate * (cal - lo))
	// Known by its CDF, survival and atom only, as a tabulated node law
	// is: dist.SumIID takes the lattice sum with the atom kept exact.
	life := cutExponential{rate: rate, lo: lo, cal: cal}
	assert.InDelta(t, a, life.Atoms()[0].Mass, 0)
	h := 10 * energy.Year
	r, err := energy.NewRenewals(life, h)
	require.NoError(t, err)
	cnt, err := r.Count(h)
	require.NoError(t, err)
	// At least floor(10/6) = 1 renewal: every life is at most 6 years.
	assert.InDelta(t, 1, r.AtLeast(1, h), r.Accuracy().CDFAbs)
	assert.InDelta(t, 0, cnt.CDF(0.5), r.Accuracy().CDFAbs)

	const paths = 20000
	src := rand.New(rand.NewPCG(16, 1))
	counts := make([]int, r.Max()+2)
	for range paths {
		s, n := 0.0, 0
		for {
			s += lo + math.Min(src.ExpFloat64()/rate, cal-lo)
			if s > h {
				break
			}
			n++
		}
		counts[min(n, len(counts)-1)]++
	}
	dkw := math.Sqrt(math.Log(2/1e-6) / (2 * paths))
	above := 0
	for n := len(counts) - 1; n >= 1; n-- {
		above += counts[n]
		assert.InDelta(t, float64(above)/paths, r.AtLeast(n, h), dkw, "n = %d", n)
	}
	assert.InDelta(t, cnt.Mean(), meanOf(counts), 4*math.Sqrt(cnt.Variance()/paths)+1e-9) // 4 sd: 6e-5 two-sided

	// The lattice path: against the same sample, and against the exact
	// path within the two stated errors, at lattice and other times.
	lat, err := energy.NewLatticeRenewals(life, h, 0)
	require.NoError(t, err)
	assert.Less(t, lat.Accuracy().CDFAbs, 1e-5)
	assert.Equal(t, r.Max(), lat.Max())
	above = 0
	for n := len(counts) - 1; n >= 1; n-- {
		above += counts[n]
		assert.InDelta(t, float64(above)/paths, lat.AtLeast(n, h), dkw, "n = %d", n)
	}
	for n := 0; n <= r.Max()+1; n++ {
		for _, f := range []float64{0.2, 0.5, 0.6, 0.61, 0.77, 0.9, 1} {
			assert.InDelta(t, r.AtLeast(n, h*f), lat.AtLeast(n, h*f), r.Accuracy().CDFAbs+lat.Accuracy().CDFAbs, "n = %d, t = %g h", n, f)
		}
	}
}

// cutExponential is lo + min(E, cal − lo), E exponential of rate rate:
// a life that starts at lo, ends by cal, with an atom e^{−rate·(cal−lo)}
// at cal; closed forms, no transform.
type cutExponential struct{ rate, lo, cal float64 }

func (l cutExponential) CDF(x float64) float64 {
	switch {
	case x < l.lo:
		return 0
	case x >= l.cal:
		return 1
	}
	return -math.Expm1(-l.rate * (x - l.lo))
}

func (l cutExponential) Survival(x float64) float64 {
	switch {
	case x < l.lo:
		return 1
	case x >= l.cal:
		return 0
	}
	return math.Exp(-l.rate * (x - l.lo))
}

func (l cutExponential) Quantile(p float64) float64 {
	if p >= -math.Expm1(-l.rate*(l.cal-l.lo)) {
		return l.cal
	}
	return l.lo - math.Log1p(-p)/l.rate
}

func (l cutExponential) UpperQuantile(q float64) float64 {
	if q <= math.Exp(-l.rate*(l.cal-l.lo)) {
		return l.cal
	}
	return l.lo - math.Log(q)/l.rate
}

func (l cutExponential) Mean() float64 { return l.lo - math.Expm1(-l.rate*(l.cal-l.lo))/l.rate }

func (l cutExponential) Variance() float64 {
	// Of min(E, w): E[X²] = ∫ 2x·S(x) dx over [0, w].
	a := l.rate * (l.cal - l.lo)
	m2 := 2 / (l.rate * l.rate) * (1 - math.Exp(-a)*(1+a))
	m := -math.Expm1(-a) / l.rate
	return m2 - m*m
}

func (l cutExponential) Support() (float64, float64) { return l.lo, l.cal }

func (l cutExponential) Rand(r *rand.Rand) float64 {
	return l.lo + math.Min(r.ExpFloat64()/l.rate, l.cal-l.lo)
}

func (l cutExponential) Atoms() []dist.Atom {
	return []dist.Atom{{Value: l.cal, Mass: math.Exp(-l.rate * (l.cal - l.lo))}}
}

func meanOf(counts []int) float64 {
	s, n := 0.0, 0
	for k, c := range counts {
		s += float64(k * c)
		n += c
	}
	return s / float64(n)
}

// TestRenewalsBadInput: each rule names its parameter.
func TestRenewalsBadInput(t *testing.T) {
	exp := dist.MustExponential(1 / energy.Year)
	for _, c := range []struct {
		name  string
		life  dist.Law
		h     float64
		field string
	}{
		{"nil", nil, energy.Year, "life"},
		{"negative horizon", exp, -1, "horizon"},
		{"NaN horizon", exp, math.NaN(), "horizon"},
		{"negative lives", dist.MustNormal(0, 1), energy.Year, "life"},
		{"mass at 0", dist.MustPointMass(0), energy.Year, "life"},
		{"too many", exp, 1000 * energy.Year, "horizon"},
	} {
		t.Run(c.name, func(t *testing.T) {
			_, err := energy.NewRenewals(c.life, c.h)
			require.Error(t, err)
			assert.True(t, errors.Is(err, energy.ErrParam), "%v", err)
			assert.Contains(t, err.Error(), c.field)
		})
	}
	r, err := energy.NewRenewals(exp, energy.Year)
	require.NoError(t, err)
	_, err = r.Count(2 * energy.Year)
	require.ErrorIs(t, err, energy.ErrParam)
	assert.True(t, math.IsNaN(r.AtLeast(1, -1)))
	_, err = energy.Renewals{}.Count(0)
	require.ErrorIs(t, err, energy.ErrParam)
	for _, pts := range []int{-1, 1, energy.MinRenewalPoints - 1, energy.MaxRenewalPoints + 1} {
		_, err = energy.NewLatticeRenewals(exp, energy.Year, pts)
		require.ErrorIs(t, err, energy.ErrParam)
		assert.Contains(t, err.Error(), "points")
	}
	two := dist.MustDiscrete([]float64{energy.Year, 2 * energy.Year}, []float64{0.5, 0.5})
	_, err = energy.NewLatticeRenewals(two, 3*energy.Year, 0)
	require.ErrorIs(t, err, energy.ErrParam)
	assert.Contains(t, err.Error(), "atoms")
	_, err = energy.NewLatticeRenewals(exp, 1e4*energy.Year, energy.MinRenewalPoints)
	require.ErrorIs(t, err, energy.ErrParam)
	assert.Contains(t, err.Error(), "horizon")
	// a law whose CDF turns NaN within the horizon: refused, not an empty lattice
	_, err = energy.NewLatticeRenewals(nanAfter{exp, energy.Year / 2}, energy.Year, 0)
	require.ErrorIs(t, err, energy.ErrParam)
	assert.Contains(t, err.Error(), "finite CDF")
}

// nanAfter is a law whose CDF is NaN beyond at (a broken tabulation, say).
type nanAfter struct {
	dist.Law
	at float64
}

func (l nanAfter) CDF(x float64) float64 {
	if x > l.at {
		return math.NaN()
	}
	return l.Law.CDF(x)
}
