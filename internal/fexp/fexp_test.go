package fexp

import (
	"math"
	"math/big"
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// bigPrec is the oracles' working precision in bits.
const bigPrec = 320

func newBig() *big.Float { return new(big.Float).SetPrec(bigPrec) }

// bigExpOracle returns e^x at bigPrec bits, independent of the method
// under test (no ln 2, no table): x halved until below 2^-20 in
// magnitude (at most 30 halvings on the float64 range), the Taylor series
// Σ rⁿ/n! summed until a term falls below 2^-(bigPrec+10), then squared
// back; the squarings multiply the series' relative error by at most
// 2^30, leaving 280 good bits (common practice: Muller, Elementary
// Functions, ch. 6).
func bigExpOracle(x float64) *big.Float {
	r := newBig().SetFloat64(x)
	halvings := 0
	lim := newBig().SetMantExp(newBig().SetInt64(1), -20)
	for newBig().Abs(r).Cmp(lim) > 0 {
		r.SetMantExp(r, -1)
		halvings++
	}
	eps := newBig().SetMantExp(newBig().SetInt64(1), -bigPrec-10)
	sum, term := newBig().SetInt64(1), newBig().SetInt64(1)
	for n := int64(1); newBig().Abs(term).Cmp(eps) >= 0; n++ {
		term.Mul(term, r)
		term.Quo(term, newBig().SetInt64(n))
		sum.Add(sum, term)
	}
	for range halvings {
		sum.Mul(sum, sum)
	}
	return sum
}

// bigLn2 returns ln 2 = 2·atanh(1/3) = 2·Σ 3^-(2n+1)/(2n+1) at bigPrec
// bits (Abramowitz and Stegun 4.1.27 with z = 2).
func bigLn2() *big.Float {
	sum, pow := newBig(), newBig().Quo(newBig().SetInt64(1), newBig().SetInt64(3))
	eps := newBig().SetMantExp(newBig().SetInt64(1), -bigPrec-10)
	for n := int64(0); pow.Cmp(eps) >= 0; n++ {
		sum.Add(sum, newBig().Quo(pow, newBig().SetInt64(2*n+1)))
		pow.Quo(pow, newBig().SetInt64(9))
	}
	return sum.Mul(sum, newBig().SetInt64(2))
}

// relErr returns |got − want|/want at bigPrec bits, as a float64.
func relErr(got float64, want *big.Float) float64 {
	d := newBig().Sub(newBig().SetFloat64(got), want)
	d.Quo(d, want)
	f, _ := d.Abs(d).Float64()
	return f
}

// TestTables recomputes tab: 2^(1/N) as six square roots
// of 2 at 320 bits, 2^(j/N) as its powers (63 products, each within
// 2^-320 relative), T_j the nearest float64 (big.Float rounds to nearest
// even) and t_j = (2^(j/N) − T_j)/T_j rounded to float64. Every entry
// must match bit for bit.
func TestTables(t *testing.T) {
	root := newBig().SetInt64(2)
	for range tableBits {
		root.Sqrt(root)
	}
	pow := newBig().SetInt64(1)
	for j := range tableSize {
		hi, _ := pow.Float64()
		tail := newBig().Sub(pow, newBig().SetFloat64(hi))
		tl, _ := tail.Quo(tail, newBig().SetFloat64(hi)).Float64()
		assert.Equalf(t, math.Float64bits(hi), tab[j][0], "T_%d", j)
		assert.Equalf(t, math.Float64bits(tl), tab[j][1], "t_%d", j)
		pow.Mul(pow, root)
	}
	// 2^(N/N) = 2 closes the loop: the powers drifted by less than 2^-300.
	two := newBig().SetInt64(2)
	assert.Less(t, relErr(2, pow), 0x1p-300, "2^(N/N) against 2")
	assert.Zero(t, two.Cmp(newBig().SetFloat64(2)))
}

// TestReductionConstants checks the argument reduction's constants
// against ln 2 at 320 bits (bigLn2): ln2HiN has at most 29 significant
// bits, so that k·ln2HiN is exact for |k| < 2^24 (|k| < 2^17 on the fast
// path); ln2HiN + ln2LoN is ln2/N within 2^-53 of ln2LoN (ln2LoN is the
// remainder rounded); invLn2N is N/ln2 rounded to float64.
func TestReductionConstants(t *testing.T) {
	ln2N := newBig().Quo(bigLn2(), newBig().SetInt64(tableSize))
	frac, _ := math.Frexp(ln2HiN)
	m := uint64(math.Ldexp(frac, 53))
	assert.GreaterOrEqual(t, bitsTrailingZero(m), 53-29, "ln2HiN's significant bits")
	hi29 := newBig().SetPrec(29).Set(ln2N)
	assert.Zero(t, hi29.Cmp(newBig().SetFloat64(ln2HiN)), "ln2HiN is ln2/N rounded to 29 bits")
	rest, _ := newBig().Sub(ln2N, newBig().SetFloat64(ln2HiN)).Float64()
	assert.Equal(t, rest, ln2LoN, "ln2LoN is the remainder rounded to float64")
	inv, _ := newBig().Quo(newBig().SetInt64(1), ln2N).Float64()
	assert.Equal(t, inv, invLn2N, "N/ln2")
	// The fast path's largest |k| times ln2HiN stays exact.
	kMax := math.Ceil(math.Max(-fastLo, fastHi) * invLn2N)
	assert.Less(t, kMax, 0x1p24)
}

func bitsTrailingZero(m uint64) int {
	n := 0
	for m != 0 && m&1 == 0 {
		m >>= 1
		n++
	}
	return n
}

// TestPolynomial checks expm1Poly's coefficients against e^r − 1 at 320
// bits (bigExpOracle): the polynomial, evaluated exactly in big.Float with
// the float64 coefficients, within polyErr of e^r − 1 on 20,001 points
// of [−1.000001·rMax, 1.000001·rMax] (|r| exceeds rMax by rounding only,
// below 1e-10 of it), and the argument reduction's r within that range
// on the oracle tests' arguments (TestAgainstBigOracle's fast path).
func TestPolynomial(t *testing.T) {
	coef := []float64{0, 1, c2, c3, c4, c5}
	worst := 0.0
	for i := -10000; i <= 10000; i++ {
		r := 1.000001 * rMax * float64(i) / 10000
		br := newBig().SetFloat64(r)
		p := newBig()
		for k := len(coef) - 1; k >= 0; k-- {
			p.Mul(p, br)
			p.Add(p, newBig().SetFloat64(coef[k]))
		}
		want := bigExpOracle(r)
		want.Sub(want, newBig().SetInt64(1))
		d, _ := p.Sub(p, want).Abs(p).Float64()
		worst = math.Max(worst, d)
	}
	t.Logf("largest |p(r) − (e^r − 1)|: %.3g (polyErr %.3g)", worst, polyErr)
	assert.LessOrEqual(t, worst, polyErr)
	for _, set := range oracleArgs() {
		for _, x := range set.xs {
			if x > fastLo && x < fastHi {
				_, _, r := reduce(x)
				require.LessOrEqualf(t, math.Abs(r), 1.000001*rMax, "r at x = %v", x)
			}
		}
	}
}

// argSet is a named set of arguments for the oracle tests.
type argSet struct {
	name string
	xs   []float64
}

// oracleArgs returns the arguments the oracle tests sweep: the far
// ranges, the fast path's and the float64 range's edges, the points where
// the rounding of x·N/ln2 turns (half-integer multiples of ln2/N, and
// their neighbours), tiny arguments, a dense centre and pseudo-random
// arguments over the whole range (fixed seed).
func oracleArgs() []argSet {
	rng := rand.New(rand.NewPCG(20261204, 12))
	uniform := func(lo, hi float64, n int) []float64 {
		xs := make([]float64, n)
		for i := range xs {
			xs[i] = lo + (hi-lo)*rng.Float64()
		}
		return xs
	}
	var edges []float64
	for _, e := range []float64{fastLo, fastHi, 0, -708.3964185322641, 709.782712893384, -745.1332191019412, -744.4400719213812, 1, -1} {
		x := e
		for range 8 {
			edges = append(edges, x)
			x = math.Nextafter(x, math.Inf(1))
		}
		x = e
		for range 8 {
			x = math.Nextafter(x, math.Inf(-1))
			edges = append(edges, x)
		}
	}
	var turns []float64
	ln2N := math.Ln2 / tableSize
	for k := -64000.5; k < 65400; k += 997 {
		x := k * ln2N
		turns = append(turns, math.Nextafter(x, math.Inf(-1)), x, math.Nextafter(x, math.Inf(1)))
	}
	var tiny []float64
	for e := -1074; e <= -1; e += 7 {
		v := math.Ldexp(1, e)
		tiny = append(tiny, v, -v, v*1.7, -v*1.3)
	}
	centre := make([]float64, 0, 4001)
	for i := -2000; i <= 2000; i++ {
		centre = append(centre, float64(i)/100)
	}
	return []argSet{
		{"edges", edges},
		{"rounding turns of x·N/ln2", turns},
		{"tiny", tiny},
		{"centre [-20, 20] step 0.01", centre},
		{"uniform [-1, 1]", uniform(-1, 1, 30000)},
		{"uniform [-40, 10]", uniform(-40, 10, 30000)},
		{"uniform fast path", uniform(fastLo, fastHi, 30000)},
		{"uniform [-745.2, 709.8]", uniform(-745.2, 709.8, 20000)},
		{"uniform near the fast path's ends", append(uniform(-710, -699, 10000), uniform(708, 709.8, 10000)...)},
	}
}

// TestAgainstBigOracle compares Exp with e^x at 320 bits (bigExpOracle) on
// every set of oracleArgs: within MaxRelErr relative where e^x is a normal
// float64, within subnormalErr units of 2^-1074 where it is subnormal, and
// +Inf where e^x is at least 2^1024 − 2^970 (the largest float64 plus half
// its unit: rounding to nearest gives +Inf there, IEEE 754-2019 §4.3.1).
func TestAgainstBigOracle(t *testing.T) {
	minNormal := newBig().SetFloat64(0x1p-1022)
	overflow := newBig().Sub(newBig().SetMantExp(newBig().SetInt64(1), 1024), newBig().SetMantExp(newBig().SetInt64(1), 970))
	worst, worstX, worstSub, worstULP := 0.0, 0.0, 0.0, 0.0
	for _, set := range oracleArgs() {
		t.Run(set.name, func(t *testing.T) {
			for _, x := range set.xs {
				got := Exp(x)
				want := bigExpOracle(x)
				switch {
				case want.Cmp(overflow) >= 0:
					require.Truef(t, math.IsInf(got, 1), "Exp(%v) = %v, want +Inf", x, got)
				case want.Cmp(minNormal) < 0:
					d := newBig().Sub(newBig().SetFloat64(got), want)
					units, _ := d.Abs(d).SetMantExp(d, 1074).Float64()
					worstSub = math.Max(worstSub, units)
					require.LessOrEqualf(t, units, subnormalErr, "Exp(%v) = %v: %v units of 2^-1074 off", x, got, units)
				default:
					e := relErr(got, want)
					// In units of the float64 grid at e^x: 2^(ex−53) for e^x in
					// [2^(ex−1), 2^ex).
					wf, _ := want.Float64()
					_, ex := math.Frexp(wf)
					d := newBig().Sub(newBig().SetFloat64(got), want)
					u, _ := d.Abs(d).SetMantExp(d, 53-ex).Float64()
					worstULP = math.Max(worstULP, u)
					if e > worst {
						worst, worstX = e, x
					}
					require.LessOrEqualf(t, e, MaxRelErr, "Exp(%v) = %v, relative error %v", x, got, e)
				}
			}
		})
	}
	t.Logf("worst relative error %.3g at x = %v; %.3g units in the last place at most; subnormal results: %.3g units of 2^-1074", worst, worstX, worstULP, worstSub)
}

// subnormalErr bounds Exp's error where e^x is subnormal, in units of
// 2^-1074 (the package comment's analysis: 0.5 for the final rounding plus
// at most 0.27 from the first, half a unit of 2^-1074 times the 0.53 units
// in the last place of the first).
const subnormalErr = 0.77

// TestAgainstStdlib compares Exp with the standard library's math.Exp
// (documented within 1 unit in the last place) on pseudo-random arguments
// over the float64 range: the two differ by at most math.Exp's unit
// (2^-52 relative) plus MaxRelErr where e^x is normal, by at most
// 1 + subnormalErr units of 2^-1074 where it is subnormal. Up to 709.4
// only: on amd64, math.Exp returns +Inf from 709.436139303104 on (its
// assembly's overflow test), although e^x stays below the largest float64
// up to 709.78 (TestAgainstBigOracle checks Exp there).
func TestAgainstStdlib(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 2026))
	same := 0
	const n = 400000
	for i := range n {
		x := -746 + 1455.4*rng.Float64()
		if i%4 == 0 {
			x = -30 + 40*rng.Float64()
		}
		got, want := Exp(x), math.Exp(x)
		if want < 0x1p-1022 {
			require.InDeltaf(t, want, got, (1+subnormalErr)*0x1p-1074, "Exp(%v)", x)
			continue
		}
		require.InDeltaf(t, want, got, (0x1p-52+MaxRelErr)*want, "Exp(%v)", x)
		if got == want {
			same++
		}
	}
	t.Logf("same bits as math.Exp for %d of %d arguments", same, n)
}

// TestExps: Exps gives Exp's bits, element by element, on the big
// oracle's argument sets (the whole range, the thresholds, NaN and the
// infinities), in slices of several lengths, so that it holds Exp's
// bounds (TestAgainstBigOracle) wherever Exp does.
func TestExps(t *testing.T) {
	var xs []float64
	for _, set := range oracleArgs() {
		xs = append(xs, set.xs...)
	}
	xs = append(xs, math.NaN(), math.Inf(1), math.Inf(-1), 0, -0.0, fastLo, fastHi, 709.7827128933841, -745.1332191019412)
	for _, n := range []int{1, 5, 8, 16, len(xs)} {
		for lo := 0; lo < len(xs); lo += n {
			got := slices.Clone(xs[lo:min(lo+n, len(xs))])
			Exps(got)
			for i, y := range got {
				x := xs[lo+i]
				require.Equalf(t, math.Float64bits(Exp(x)), math.Float64bits(y), "Exps at x = %v", x)
			}
		}
	}
}

// oracleFloat is bigExpOracle(x) rounded to the nearest float64.
func oracleFloat(x float64) float64 {
	f, _ := bigExpOracle(x).Float64()
	return f
}

// TestSpecialValues checks the ends of the float64 range and the IEEE 754
// special values (IEEE 754-2019 §9.2: exp(+Inf) = +Inf, exp(−Inf) = +0,
// NaN in gives NaN out), the overflow and underflow thresholds and e^0 = 1.
// The thresholds, from 320-bit values of ln 2 (bigLn2): e^x reaches
// 2^1024 − 2^970 (rounds to +Inf) at x = 1024·ln2 + ln(1 − 2^-54) =
// 709.78271289338399678…, between the float64s 709.782712893384 and
// 709.7827128933841; e^x falls to 2^-1075 (rounds to 0, the even
// neighbour) at x = −1075·ln2 = −745.13321910194120762…, between
// −745.1332191019412 and −745.1332191019411.
func TestSpecialValues(t *testing.T) {
	cases := []struct {
		name string
		x    float64
		want float64
	}{
		{"+0", 0, 1},
		{"-0", math.Copysign(0, -1), 1},
		{"smallest subnormal", 5e-324, 1},
		{"-smallest subnormal", -5e-324, 1},
		{"+Inf", math.Inf(1), math.Inf(1)},
		{"-Inf", math.Inf(-1), 0},
		{"largest float64", math.MaxFloat64, math.Inf(1)},
		{"-largest float64", -math.MaxFloat64, 0},
		{"first overflow", 709.7827128933841, math.Inf(1)},
		{"last finite", 709.782712893384, oracleFloat(709.782712893384)}, // 1.7976931348622732e308
		{"last nonzero", -745.1332191019411, 0x1p-1074},
		{"first zero", -745.1332191019412, 0},
		{"-1000", -1000, 0},
		{"1000", 1000, math.Inf(1)},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			assert.Equal(t, c.want, Exp(c.x))
		})
	}
	assert.True(t, math.IsNaN(Exp(math.NaN())), "NaN")
	assert.False(t, math.Signbit(Exp(math.Inf(-1))), "e^-Inf is +0")
	// The thresholds themselves, recomputed.
	ln2 := bigLn2()
	over := newBig().Mul(ln2, newBig().SetInt64(1024))
	over.Sub(over, newBig().SetMantExp(newBig().SetInt64(1), -54))
	assert.Equal(t, -1, newBig().SetFloat64(709.782712893384).Cmp(over))
	assert.Equal(t, 1, newBig().SetFloat64(709.7827128933841).Cmp(over))
	under := newBig().Mul(ln2, newBig().SetInt64(-1075))
	assert.Equal(t, -1, newBig().SetFloat64(-745.1332191019412).Cmp(under))
	assert.Equal(t, 1, newBig().SetFloat64(-745.1332191019411).Cmp(under))
}

// TestMonotone checks that Exp never decreases from one float64 to the
// next (e^x is increasing), on runs of consecutive arguments across the
// table's and the fast path's seams.
func TestMonotone(t *testing.T) {
	ln2N := math.Ln2 / tableSize
	starts := []float64{fastLo, fastHi, 0, 1e-3, -1e-3}
	for k := -64000.5; k < 65400; k += 1999 {
		starts = append(starts, k*ln2N)
	}
	for _, s := range starts {
		x := s
		for range 100 {
			x = math.Nextafter(x, math.Inf(-1))
		}
		prev := Exp(x)
		for range 200 {
			x = math.Nextafter(x, math.Inf(1))
			v := Exp(x)
			require.GreaterOrEqualf(t, v, prev, "Exp decreases at %v", x)
			prev = v
		}
	}
}

// benchArgs are arguments spread as the library's calls spread them:
// mostly in [−40, 5].
func benchArgs() []float64 {
	rng := rand.New(rand.NewPCG(1, 2))
	xs := make([]float64, 1024)
	for i := range xs {
		xs[i] = -40 + 45*rng.Float64()
	}
	return xs
}

// BenchmarkExp measures Exp's throughput; BenchmarkStdExp is the baseline
// a caller would otherwise use, math.Exp, on the same arguments.
func BenchmarkExp(b *testing.B) {
	xs := benchArgs()
	s := 0.0
	for b.Loop() {
		for _, x := range xs {
			s += Exp(x)
		}
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*len(xs)), "ns/exp")
	sink = s
}

func BenchmarkStdExp(b *testing.B) {
	xs := benchArgs()
	s := 0.0
	for b.Loop() {
		for _, x := range xs {
			s += math.Exp(x)
		}
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*len(xs)), "ns/exp")
	sink = s
}

var sink float64

// TestOneMinusExpAgainstBigOracle: OneMinusExp(x) against 1 − e^x from
// bigExpOracle at 320 bits (the subtraction exact at that precision but
// for its last bits, which a result at least 2^-80 cannot feel) on 40,000
// points drawn with a fixed seed from [−50, 0] and 20,000 log-spaced from
// −2^-60 to −50, −2^-70 and the turn at −ln 2: within OneMinusExpMaxRelErr; 1 at
// −Inf and far below, NaN for NaN.
func TestOneMinusExpAgainstBigOracle(t *testing.T) {
	xs := []float64{-math.Ln2, math.Nextafter(-math.Ln2, 0), math.Nextafter(-math.Ln2, -1), -0x1p-60, -0x1p-70, -38, -40}
	r := rand.New(rand.NewPCG(5, 8))
	for range 40000 {
		xs = append(xs, -50*r.Float64())
	}
	for i := range 20000 {
		xs = append(xs, -math.Exp2(-60+float64(i)*(60+math.Log2(50))/19999))
	}
	one := newBig().SetInt64(1)
	worst, at := 0.0, 0.0
	for _, x := range xs {
		want := newBig().Sub(one, bigExpOracle(x))
		if e := relErr(OneMinusExp(x), want); e > worst {
			worst, at = e, x
		}
	}
	t.Logf("OneMinusExp: largest relative error %.3g (%.2f units of 2^-53) at x = %g", worst, worst/0x1p-53, at)
	assert.LessOrEqual(t, worst, OneMinusExpMaxRelErr)
	assert.Equal(t, 1.0, OneMinusExp(math.Inf(-1)))
	assert.Equal(t, 1.0, OneMinusExp(-38))
	assert.True(t, math.IsNaN(OneMinusExp(math.NaN())))
}
