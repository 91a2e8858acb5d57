package dist

import (
	"math"
	"math/big"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/internal/testref"
)

// multinomialTails is the oracle of the three-energy path: every count
// vector (n0, n1, n2) of k cycles with its probability
// k!/(n0!·n1!·n2!)·p0^n0·p1^n1·p2^n2 in 256-bit floating point (the float64
// probabilities taken exactly), summed on each side of every x in xs. Sums
// are formed in float64 as in the code; no x lies within 1e-9 of one.
func multinomialTails(t *testing.T, v, p []float64, k int, xs []float64) (below, above []float64) {
	t.Helper()
	const prec = 256
	nb := func() *big.Float { return new(big.Float).SetPrec(prec) }
	fact := []*big.Float{nb().SetInt64(1)}
	for i := 1; i <= k; i++ {
		fact = append(fact, nb().Mul(fact[i-1], nb().SetInt64(int64(i))))
	}
	pow := make([][]*big.Float, 3)
	for i := range 3 {
		pow[i] = []*big.Float{nb().SetInt64(1)}
		pi := nb().SetFloat64(p[i])
		for n := 1; n <= k; n++ {
			pow[i] = append(pow[i], nb().Mul(pow[i][n-1], pi))
		}
	}
	lo := make([]*big.Float, len(xs))
	hi := make([]*big.Float, len(xs))
	for i := range xs {
		lo[i], hi[i] = nb(), nb()
	}
	for n1 := 0; n1 <= k; n1++ {
		for n2 := 0; n1+n2 <= k; n2++ {
			n0 := k - n1 - n2
			s := float64(n0)*v[0] + float64(n1)*v[1] + float64(n2)*v[2]
			m := nb().Quo(fact[k], nb().Mul(fact[n0], nb().Mul(fact[n1], fact[n2])))
			m.Mul(m, pow[0][n0]).Mul(m, pow[1][n1]).Mul(m, pow[2][n2])
			for i, x := range xs {
				require.Greater(t, math.Abs(s-x), 1e-9, "x on an atom")
				if s <= x {
					lo[i].Add(lo[i], m)
				} else {
					hi[i].Add(hi[i], m)
				}
			}
		}
	}
	for i := range xs {
		b, _ := lo[i].Float64()
		a, _ := hi[i].Float64()
		below, above = append(below, b), append(above, a)
	}
	return below, above
}

// checkThree asserts the three-energy path's tails at x against the
// oracle's within the stated bounds (absolute threeCDFAbs, each tail
// relative threeSurvivalRel above threeTailFloor) plus the oracle's own
// error (cdfAbs absolute, rel relative above floor), and returns the worst
// absolute and relative errors seen.
func checkThree(t *testing.T, name string, gotB, gotA, wantB, wantA, cdfAbs, rel, floor float64) (abs, relErr float64) {
	t.Helper()
	abs = math.Max(math.Abs(gotB-wantB), math.Abs(gotA-wantA))
	assert.LessOrEqual(t, abs, threeCDFAbs+cdfAbs, "%s: absolute error", name)
	for _, pr := range [][2]float64{{gotB, wantB}, {gotA, wantA}} {
		if pr[1] >= math.Max(threeTailFloor, floor) {
			e := math.Abs(pr[0]-pr[1]) / pr[1]
			relErr = math.Max(relErr, e)
			assert.LessOrEqual(t, e, threeSurvivalRel+rel, "%s: relative error of a tail %g", name, pr[1])
		}
	}
	return abs, relErr
}

// TestThreeAgainstEnumeration: the three-energy path against multinomial
// enumeration in 256-bit arithmetic for two incommensurate laws (one with a
// rare third energy, as a class A cycle's second receive window), k = 200
// and 300, at x from −12 to +12 standard deviations (tails down to about
// 1e-40).
func TestThreeAgainstEnumeration(t *testing.T) {
	t.Parallel() // slow: runs beside the others (go test ≤ 90 s on two cores)
	for _, tc := range []struct {
		name string
		v, p []float64
		k    int
	}{
		{"three incommensurate", []float64{0.0134, 0.0521 * math.Sqrt2, 0.2467 * math.Pi / 3}, []float64{0.6, 0.3, 0.1}, 300},
		{"rare third energy", []float64{0.522149, 0.547844 + 1e-7*math.Sqrt2, 0.559108 + 1e-7*math.Pi}, []float64{0.98, 0.018, 0.002}, 200},
	} {
		a := newAtomicSums(MustDiscrete(tc.v, tc.p))
		m, s := a.mu*float64(tc.k), a.sd*math.Sqrt(float64(tc.k))
		var xs []float64
		for z := -12.0; z <= 12; z += 0.75 {
			xs = append(xs, m+z*s+1e-7*math.Sqrt(3)) // off the atoms
		}
		wb, wa := multinomialTails(t, tc.v, tc.p, tc.k, xs)
		var worstAbs, worstRel float64
		for i, x := range xs {
			b, c := a.three(int64(tc.k), x)
			e, r := checkThree(t, tc.name, b, c, wb[i], wa[i], 0, 0, 0)
			worstAbs, worstRel = math.Max(worstAbs, e), math.Max(worstRel, r)
		}
		t.Logf("%s, k = %d: worst absolute error %.2g, worst relative tail error %.2g", tc.name, tc.k, worstAbs, worstRel)
	}
}

// TestThreeAgainstExactConvolution: the three-energy path against the exact
// k-fold law (repeated squaring of the atoms, 15 753 atoms at k = 176, the
// largest its pair limit allows) and, at k = 1e5 and 1e6, against the
// lattice FFT (latticeSumIID) of
// commensurate energies (its reported CDF and survival bounds added; x half
// a lattice step off the atoms).
func TestThreeAgainstExactConvolution(t *testing.T) {
	t.Parallel() // slow: runs beside the others (go test ≤ 90 s on two cores)
	v := []float64{0.0134, 0.0521 * math.Sqrt2, 0.2467 * math.Pi / 3}
	d := MustDiscrete(v, []float64{0.6, 0.3, 0.1})
	const k = 176
	at, err := atomPower("test", d.Atoms(), k)
	require.NoError(t, err)
	law := discreteFromAtoms(at)
	require.Greater(t, len(law.Atoms()), 15_000)
	a := newAtomicSums(d)
	m, s := a.mu*k, a.sd*math.Sqrt(k)
	for z := -10.0; z <= 10; z += 0.5 {
		x := m + z*s + 1e-7*math.Sqrt(3)
		b, c := a.three(k, x)
		checkThree(t, "exact convolution", b, c, law.CDF(x), law.Survival(x), 1e-13, 1e-12, 1e-280)
	}

	const e = 0.00947
	for _, tc := range []struct {
		n []float64
		p []float64
		k int
	}{
		{[]float64{4, 5, 10}, []float64{0.0427, 0.953, 0.0043}, 100_000},
		{[]float64{4, 5, 10}, []float64{0.0427, 0.953, 0.0043}, 1_000_000},
		{[]float64{2, 3, 7}, []float64{0.5, 0.3, 0.2}, 100_000},
	} {
		vs := []float64{tc.n[0] * e, tc.n[1] * e, tc.n[2] * e}
		d := MustDiscrete(vs, tc.p)
		lat, ok, err := latticeSumIID(d, tc.k, latticeMinAtoms)
		require.NoError(t, err)
		require.True(t, ok)
		acc := lat.(Estimated).Accuracy()
		require.Contains(t, acc.Method, "lattice")
		a := newAtomicSums(d)
		m, s := a.mu*float64(tc.k), a.sd*math.Sqrt(float64(tc.k))
		var worstAbs, worstRel float64
		for z := -8.0; z <= 8; z += 0.25 {
			x := e * (math.Round((m+z*s)/e) + 0.5)
			b, c := a.three(int64(tc.k), x)
			ea, er := checkThree(t, "lattice FFT", b, c, lat.CDF(x), lat.Survival(x), acc.CDFAbs, acc.SurvivalRel, acc.TailFloor)
			worstAbs, worstRel = math.Max(worstAbs, ea), math.Max(worstRel, er)
		}
		t.Logf("lattice %v k = %d: worst absolute difference %.2g, relative %.2g (dist's bounds %.2g, %.2g)", tc.n, tc.k, worstAbs, worstRel, acc.CDFAbs, acc.SurvivalRel)
	}
}

// TestCondTails: the conditional binomial tails moved by Pascal's rule and
// mass sums along a walk of (m, j) like the one the three-energy path takes
// (m down by one, j by a few) agree with testref.BinomialTails (Loader 2000
// masses summed outward) at each step, each tail relative to its own size
// within 1e-11 (both are about 1e-12 relative, testref by its own tests).
func TestCondTails(t *testing.T) {
	for _, tc := range []struct {
		m0    int64
		q, y0 float64
		dy    float64
	}{
		{500_000, 0.957, 478_000, -5.6},
		{500_000, 0.957, 478_700, -0.3},
		{100_000, 0.017, 1_650, 1.7},
		{40_000, 0.5, 19_000, -0.5},
	} {
		var c condTails
		r := rand.New(rand.NewPCG(uint64(tc.m0), 7))
		y := tc.y0
		m := tc.m0
		for step := range 400 {
			dir := int64(1)
			if step > 200 {
				dir = -1
			}
			m -= dir
			y += float64(dir)*tc.dy + 0.01*r.Float64()
			c.move(m, y, tc.q)
			j := int(math.Floor(y))
			want, _ := testref.BinomialTails(int(m), j, tc.q)
			_, wantAbove := testref.BinomialTails(int(m), j+1, tc.q)
			assert.InDelta(t, want, c.lo, 1e-11*want+1e-300, "m=%d j=%d", m, j)
			assert.InDelta(t, wantAbove, c.hi, 1e-11*wantAbove+1e-300, "m=%d j=%d", m, j)
		}
	}
}

// TestThreeRandomLaws: the three-energy path on 15 random laws (energies
// spread over three decades, probabilities over twelve, k up to 5·10⁴),
// x over ±8 sd, against the conditioning sum done plainly: P(N_c = n) and
// the tails of N_b taken for every n from testref.BinomialTails (Loader 2000
// masses), so a bad move of the conditional tails shows (one such, a run of
// 2000 masses starting below the float range, was found this way). Each tail
// relative to its own size within the stated threeSurvivalRel where above
// threeTailFloor, and absolute within threeCDFAbs.
func TestThreeRandomLaws(t *testing.T) {
	t.Parallel() // slow: runs beside the others (go test ≤ 90 s on two cores)
	type law struct {
		v, p []float64
		k    int
		zs   []float64
	}
	// the law that showed the bad move: the rare energy 500 times the
	// others, so each step of its count moves j by some 2000 masses
	laws := []law{{[]float64{0.0025245490662644935, 1.2511952257262984, 0.0019385923777572886},
		[]float64{0.0030702707596533666, 0.0013145053558177378, 0.9956152238845289}, 361702, []float64{-5.5, -5, -4.5}}}
	r := rand.New(rand.NewPCG(3, 4))
	for range 15 {
		v := make([]float64, 3)
		p := make([]float64, 3)
		tot := 0.0
		for i := range v {
			v[i] = math.Exp(r.NormFloat64()*2 - 3)
			p[i] = math.Exp(r.NormFloat64() * 3)
			tot += p[i]
		}
		for i := range p {
			p[i] /= tot
		}
		laws = append(laws, law{v, p, int(math.Exp(r.Float64() * math.Log(5e4))), []float64{-8, -6, -4, -2, 0, 2, 4, 6, 8}})
	}
	var worstAbs, worstRel float64
	for _, l := range laws {
		v, p, k := l.v, l.p, l.k
		d, err := NewDiscrete(v, p)
		if err != nil || d.Len() != 3 {
			continue
		}
		a := newAtomicSums(d)
		c, ia, ib := a.threeRoles()
		q := a.p[ib] / (a.p[ia] + a.p[ib])
		mc, sc := float64(k)*a.p[c], math.Sqrt(float64(k)*a.p[c]*(1-a.p[c]))
		nlo, nhi := max(0, int(mc-40*sc-40)), min(k, int(mc+40*sc+40))
		pm := make([]float64, nhi-nlo+1)
		for n := nlo; n <= nhi; n++ {
			pm[n-nlo] = testref.BinomialMass(k, n, a.p[c])
		}
		m, s := a.mu*float64(k), a.sd*math.Sqrt(float64(k))
		for _, z := range l.zs {
			x := m + z*s
			var wb, wa float64
			for n := nlo; n <= nhi; n++ {
				j := a.atomJ(int64(k), int64(n), x, c, ia, ib)
				lo := testref.BinomialAtMost(k-n, int(j), q)
				hi := testref.BinomialAtLeast(k-n, int(j)+1, q)
				wb += pm[n-nlo] * lo
				wa += pm[n-nlo] * hi
			}
			b, ab := a.three(int64(k), x)
			e, re := checkThree(t, "random law", b, ab, wb, wa, 0, 0, 0)
			worstAbs, worstRel = math.Max(worstAbs, e), math.Max(worstRel, re)
		}
	}
	t.Logf("worst absolute error %.2g, worst relative tail error %.2g", worstAbs, worstRel)
}
