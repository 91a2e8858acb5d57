package dist

import (
	"cmp"
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/internal/testref"
)

// twoPartLaw is a four-energy cycle law X = A + B with independent
// two-valued parts: A ∈ {a0, a0 + da} (P(second) = pa), B ∈ {b0, b0 + db}
// (pb), like an uplink that is repeated or not and a downlink that arrives
// in one window or the other. Then S_k = k(a0 + b0) + da·N_A + db·N_B with
// independent N_A ~ Binomial(k, pa), N_B ~ Binomial(k, pb), so
//
//	P(S_k <= x) = Σ_j P(N_A = j)·P(N_B <= (x − k(a0 + b0) − j·da)/db),
//
// the oracle below (testref.BinomialTails, Loader 2000 masses).
type twoPartLaw struct {
	a0, da, pa, b0, db, pb float64
}

func (l twoPartLaw) discrete() Discrete {
	return MustDiscrete(
		[]float64{l.a0 + l.b0, l.a0 + l.b0 + l.db, l.a0 + l.da + l.b0, l.a0 + l.da + l.b0 + l.db},
		[]float64{(1 - l.pa) * (1 - l.pb), (1 - l.pa) * l.pb, l.pa * (1 - l.pb), l.pa * l.pb})
}

// oracle returns P(S_k <= x) as a function of x (testref.TwoBinomialCDF).
func (l twoPartLaw) oracle(k int) func(x float64) float64 {
	return func(x float64) float64 { return testref.TwoBinomialCDF(k, l.a0+l.b0, l.da, l.pa, l.db, l.pb, x) }
}

// TestEsseenBoundTwoParts: the saddlepoint of four-energy sums against the
// exact two-binomial oracle at 2·10⁴ and 2·10⁵ cycles, for parts whose
// steps are far from commensurate (da/db = 10·golden ratio), nearly
// commensurate (da/db = 38.6708, within 0.4 % of 116/3, so S_k nearly lives
// on a lattice of step db/3, the structure of the demo's class A cycles) and
// commensurate (da = 3·db, a lattice of step db): at every x the error must
// be within the reported bound. The errors are real: with N_A spread over
// some 26 values, S_k's CDF is a sum of staircases of step db that do not
// quite smooth out (measured 5e-5 for the golden ratio, 6e-5 nearly
// commensurate, 2e-3 on the lattice, each about a quarter of the bound).
func TestEsseenBoundTwoParts(t *testing.T) {
	t.Parallel() // slow: runs beside the others (go test ≤ 90 s on two cores)
	for _, tc := range []struct {
		name  string
		law   twoPartLaw
		k     int
		nx    int
		small float64 // the bound must be below this
	}{
		{"far from commensurate", twoPartLaw{0.52, 0.4356, 0.034, 0.0, 0.4356 / (5 * (1 + math.Sqrt(5))), 0.15}, 20_000, 61, 5e-4},
		{"nearly commensurate", twoPartLaw{0.52, 0.4356, 0.034, 0.0, 0.4356 / 38.6708, 0.15}, 20_000, 61, 5e-4},
		{"nearly commensurate", twoPartLaw{0.52, 0.4356, 0.034, 0.0, 0.4356 / 38.6708, 0.15}, 200_000, 11, 1e-4},
		{"commensurate", twoPartLaw{0.52, 0.03, 0.034, 0.0, 0.01, 0.15}, 20_000, 61, 1e-2},
	} {
		a := newAtomicSums(tc.law.discrete())
		require.False(t, a.exactFits(int64(tc.k)))
		bound := a.accuracy(int64(tc.k)).CDFAbs
		m, s := a.mu*float64(tc.k), a.sd*math.Sqrt(float64(tc.k))
		worst := 0.0
		cdf := tc.law.oracle(tc.k)
		for i := range tc.nx {
			// x over ±5 sd, at irrational offsets from any lattice
			z := -5 + 10*float64(i)/float64(tc.nx-1)
			x := m + z*s + 0.001*math.Sqrt2*float64(i%7)
			b, _, exact := a.eval(int64(tc.k), x)
			require.False(t, exact)
			e := math.Abs(b - cdf(x))
			worst = math.Max(worst, e)
			assert.LessOrEqual(t, e, bound, "%s k=%d z=%.3f", tc.name, tc.k, z)
		}
		t.Logf("%s, k = %d: largest error %.3g, bound %.3g (ratio %.2f)", tc.name, tc.k, worst, bound, worst/bound)
		assert.Less(t, bound, tc.small, tc.name)
	}
}

// TestEsseenBoundMonteCarlo: a nine-energy cycle law like the demo's class
// A settings (a repeated uplink, two receive windows; invented values),
// 20 000 cycles: the saddlepoint CDF against sums of 20 000 draws of the
// cycle law from its atoms (the structure), KS at level 1e-6 plus the
// reported bound.
func TestEsseenBoundMonteCarlo(t *testing.T) {
	v := []float64{0.0862, 0.1143, 0.1263, 0.1425, 0.1544, 0.1706, 0.1805, 0.1826, 0.2107}
	p := []float64{0.821, 0.0276, 0.145, 0.000926, 0.00487, 3.11e-5, 1.27e-6, 0.000163, 5.48e-6}
	tot := 0.0
	for _, q := range p {
		tot += q
	}
	for i := range p {
		p[i] /= tot
	}
	d := MustDiscrete(v, p)
	a := newAtomicSums(d)
	const k, n = 20_000, 2000
	acc := a.accuracy(k)
	t.Logf("bound %.3g", acc.CDFAbs)
	r := rand.New(rand.NewPCG(71, 72))
	xs := make([]float64, n)
	for i := range xs {
		for range k {
			xs[i] += d.Rand(r)
		}
	}
	cdf := func(x float64) float64 { b, _, _ := a.eval(k, x); return b }
	assert.Less(t, testref.KSStatistic(xs, cdf), testref.KSCritical(n, 1e-6)+acc.CDFAbs)
}

// TestEsseenBoundExactAtoms: the saddlepoint of four- and five-energy sums
// at 24 to 60 cycles (just past the cut where the exact atoms are listed)
// against the exact k-fold atoms (repeated squaring, atomPower), on a grid
// of x over ±6 sd and just below and at the largest atoms: the error must be
// within the bound, which is large here (the atoms are large) and shrinks
// with k.
func TestEsseenBoundExactAtoms(t *testing.T) {
	for _, tc := range []struct {
		v, p []float64
		ks   []int
	}{
		{[]float64{0.0134, 0.0521 * math.Sqrt2, 0.2467 * math.Pi / 3, 0.31 * math.E / 2}, []float64{0.5, 0.3, 0.15, 0.05}, []int{24, 40}},
		{[]float64{0.522, 0.5333, 0.958, 0.9693, 1.394}, []float64{0.8, 0.14, 0.04, 0.015, 0.005}, []int{30, 60}},
	} {
		d := MustDiscrete(tc.v, tc.p)
		a := newAtomicSums(d)
		prev := math.Inf(1)
		for _, k := range tc.ks {
			require.False(t, a.exactFits(int64(k)))
			at, err := atomPower("test", d.Atoms(), k) // the exact k-fold atoms
			require.NoError(t, err)
			exact := discreteFromAtoms(at)
			atoms := exact.Atoms()
			bound := a.accuracy(int64(k)).CDFAbs
			m, s := a.mu*float64(k), a.sd*math.Sqrt(float64(k))
			xs := []float64{}
			for z := -6.0; z <= 6; z += 0.01 {
				xs = append(xs, m+z*s)
			}
			slices.SortFunc(atoms, func(x, y Atom) int { return cmp.Compare(y.Mass, x.Mass) })
			for _, at := range atoms[:min(50, len(atoms))] {
				xs = append(xs, at.Value, math.Nextafter(at.Value, math.Inf(-1)))
			}
			worst := 0.0
			for _, x := range xs {
				b, _, _ := a.eval(int64(k), x)
				e := math.Abs(b - exact.CDF(x))
				worst = math.Max(worst, e)
				assert.LessOrEqual(t, e, bound, "k=%d x=%g", k, x)
			}
			t.Logf("%d energies, k = %d (%d atoms): largest error %.3g, bound %.3g (ratio %.2f)", len(tc.v), k, len(atoms), worst, bound, worst/bound)
			assert.Less(t, bound, prev)
			prev = bound
		}
	}
}
