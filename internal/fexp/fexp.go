// Package fexp is joulelaw's one fast exponential: Exp(x) = e^x within
// MaxRelErr relative (about half a unit in the last place), at about half
// the cost of the standard library's math.Exp, for the library's hot
// loops (the floor integral's quadrature terms, Mills' ratio tails, the
// shared rule's survival products). A pure function of its argument: safe
// for concurrent use, the same bits whatever ran before.
//
// The method is the usual table-driven one (P. T. P. Tang, "Table-driven
// implementation of the exponential function in IEEE floating-point
// arithmetic", ACM TOMS 15 (1989) 144–157): with N = 64,
//
//	x = k·ln2/N + r,  k = round(x·N/ln2),  |r| <= ln2/(2N) (about 0.0054),
//	e^x = 2^(k div N) · 2^((k mod N)/N) · e^r,
//
// ln2/N split in two parts (the first with 29 significant bits, so that
// k times it is exact for |k| < 2^24 and x minus it exact by Sterbenz's
// lemma), 2^(j/N) from a table of its nearest float64 T_j and the
// relative remainder t_j = (2^(j/N) − T_j)/T_j, e^r − 1 from a
// polynomial of degree 5 (its Taylor polynomial of degree 6 economized,
// within 2.4e-18), and 2^(k div N) added to T_j's exponent field. The result
// is s + s·(t_j + p) with s = 2^(k div N)·T_j and p ≈ e^r − 1: the only
// rounding of the size of a unit in the last place is the final
// addition's; the others fall on a term below 0.0055 of the result.
//
// The fast path covers fastLo < x < fastHi, where e^x and every
// intermediate are normal numbers. Beyond it the same reduction serves
// with 2^(k div N) split in two: e^x = 2·(s/2)·(1 + t_j + p) up to the
// overflow threshold (the doubling is exact, or overflows to +Inf where
// e^x rounds past the largest float64), and e^x = 2^-1000·(2^1000·s)·(…)
// down to the underflow threshold, rounded twice (to 53 bits, then to the
// subnormal grid): within 0.77 of a unit of 2^-1074 there. NaN in gives
// NaN out, e^+Inf = +Inf, e^-Inf = 0.
package fexp

import "math"

// MaxRelErr bounds the relative error |Exp(x) − e^x|/e^x for every x with
// e^x a normal float64 (x in [−708.39, 709.78]): 2^-52, one unit in the
// last place of a result in [1, 2), the bound the standard library
// documents for math.Exp. Measured against 320-bit values of e^x
// (TestAgainstBigOracle, about 135,000 arguments over the whole range;
// 405,000 when the bound was measured): 1.13e-16 relative at most, 0.525
// units in the last place (the analysis
// in the package comment gives 0.5 for the final rounding plus about
// 0.03). Where e^x is subnormal the error is within 0.77 of a unit of
// 2^-1074 (measured: 0.756).
const MaxRelErr = 0x1p-52

// The fast path's range: below fastLo a scaled table entry could round in
// the subnormal range, above fastHi 2^(k div N) could overflow.
const (
	fastLo = -700.0
	fastHi = 709.0
)

const (
	tableBits = 6
	tableSize = 1 << tableBits // N, the table's entries per octave

	invLn2N = tableSize / math.Ln2 // N/ln2, rounded to float64
	// roundShift is 1.5·2^52: adding it to a float64 below 2^51 in
	// magnitude rounds it to an integer, held in the sum's low bits.
	roundShift = 0x1.8p52
	// ln2/N = ln2HiN + ln2LoN: ln2HiN is ln2/N rounded to 29 significant
	// bits, ln2LoN the rest rounded to float64 (TestReductionConstants).
	ln2HiN = 0x1.62e42ffp-7
	ln2LoN = -0x1.718432a1b0e26p-41

	// rMax = ln2/(2N) bounds |r| (to a few units in its last place).
	rMax = math.Ln2 / (2 * tableSize)
	// e^r − 1 ≈ r + c2·r² + c3·r³ + c4·r⁴ + c5·r⁵: the Taylor polynomial
	// of degree 6 with its r⁶ term economized (Chebyshev's T6 on
	// [−rMax, rMax]: r⁶ = rMax⁶·(T6(r/rMax) + 48(r/rMax)⁴ − 18(r/rMax)² +
	// 1)/32, the T6 and constant terms left out), within polyErr of e^r − 1
	// on |r| <= rMax (TestPolynomial; r⁷/7! adds below 3e-20).
	c2 = 1.0/2 - 18.0/32*rMax*rMax*rMax*rMax/720
	c3 = 1.0 / 6
	c4 = 1.0/24 + 48.0/32*rMax*rMax/720
	c5 = 1.0 / 120
	// polyErr bounds |p(r) − (e^r − 1)| for |r| <= rMax: twice
	// rMax⁶/(32·720) (the two terms left out) plus rMax⁷/5040, about
	// 2.4e-18, 0.02 units in the last place of e^x.
	polyErr = 2.4e-18
)

// Exp returns e^x (dimensionless, as its argument) within MaxRelErr
// relative where e^x is a normal float64, within one unit of 2^-1074 where
// it is subnormal; +Inf from x = 709.7827128933841 on, 0 from
// −745.1332191019412 down, NaN for NaN.
func Exp(x float64) float64 {
	if !(x > fastLo && x < fastHi) { // NaN fails both
		// Off the fast path, s is built with its exponent field one lower
		// (x > 0; s/2 < 2^1024) or 1000 higher (x < 0; 2^1000·s >=
		// 2^-77), undone after the sum. (Here rather than in a function of
		// its own, so that Exp calls none: no stack frame to set up.)
		var adj uint64
		switch {
		case x != x:
			return x
		case x > 709.8: // e^x rounds to +Inf from 709.7827128933841 on
			return math.Inf(1)
		case x < -746: // e^x rounds to 0 from −745.1332191019412 down
			return 0
		case x > 0:
			adj = 1<<64 - 1<<52 // −2^52 modulo 2^64
		default:
			adj = 1000 << 52
		}
		j, top, r := reduce(x)
		s := math.Float64frombits(tab[j][0] + top + adj)
		y := s + s*(math.Float64frombits(tab[j][1])+expm1Poly(r))
		if x > 0 {
			return 2 * y // exact, or +Inf where e^x rounds past MaxFloat64
		}
		return y * 0x1p-1000 // rounded a second time, onto the subnormal grid
	}
	// e^x = s·(1 + q), s = 2^(k div N)·T_j, q = t_j + p(r): s built by
	// adding k div N (modulo 2^12, in the exponent and sign bits) to T_j's
	// exponent field, which stays within the normal range here.
	j, top, r := reduce(x)
	s := math.Float64frombits(tab[j][0] + top)
	return s + s*(math.Float64frombits(tab[j][1])+expm1Poly(r))
}

// Exps sets each x[i] to Exp(x[i]), the same bits, in place: for the
// hot loops that take several exponentials of arguments known at once (the
// floor integral's quadrature nodes), without a call per element, so that
// the elements' evaluations overlap. Safe for concurrent use on distinct
// slices.
func Exps(x []float64) {
	for i, v := range x {
		if !(v > fastLo && v < fastHi) { // NaN fails both
			x[i] = Exp(v)
			continue
		}
		j, top, r := reduce(v)
		s := math.Float64frombits(tab[j][0] + top)
		x[i] = s + s*(math.Float64frombits(tab[j][1])+expm1Poly(r))
	}
}

// OneMinusExpMaxRelErr bounds the relative error of OneMinusExp: where it
// takes Exp, Exp's error (at most MaxRelErr·e^x, e^x <= 1/2) is at most
// MaxRelErr of the result 1 − e^x >= 1/2, and the subtraction rounds by
// 2^-53 more; elsewhere math.Expm1's, within a unit in the last place.
// TestOneMinusExpAgainstBigOracle measures it.
const OneMinusExpMaxRelErr = 1.5 * MaxRelErr

// OneMinusExp returns 1 − e^x (dimensionless) for x <= 0: a probability
// from the logarithm of its complement (a first failure's −expm1(n·log S)
// over a site's rule), within OneMinusExpMaxRelErr relative. From x <= −ln 2
// on, where 1 − e^x >= 1/2 and the subtraction loses nothing, as 1 − Exp(x)
// (Exp's table instead of math.Expm1's division); above, −math.Expm1(x),
// which keeps the digits of a small result. 1 at −Inf, 1 exactly where
// e^x is below 2^-54 (x below about −37.4), NaN for NaN.
func OneMinusExp(x float64) float64 {
	if x <= -math.Ln2 {
		return 1 - Exp(x)
	}
	return -math.Expm1(x)
}

// reduce returns j = k mod N, (k div N)·2^52 modulo 2^64 and
// r = x − k·ln2/N for k = round(x·N/ln2), |x| < 2^44.
func reduce(x float64) (j, top uint64, r float64) {
	kd := x*invLn2N + roundShift
	ki := math.Float64bits(kd) // k in the low bits (two's complement)
	kd -= roundShift
	return ki % tableSize, ki >> tableBits << 52, x - kd*ln2HiN - kd*ln2LoN
}

// expm1Poly returns p(r) ≈ e^r − 1 for |r| <= rMax, within polyErr.
func expm1Poly(r float64) float64 {
	r2 := r * r
	return r + r2*(c2+r*c3) + r2*r2*(c4+r*c5)
}

// tab[j] holds the bits of T_j, the float64 nearest 2^(j/N), and those of
// t_j = (2^(j/N) − T_j)/T_j rounded to float64 (side by side: one cache
// line holds what an evaluation reads of it). Both computed once at 320
// bits with math/big (2^(1/N) by six square roots of 2, its powers by
// multiplication); TestTables recomputes every entry and checks it bit for
// bit. The table is read-only.
var tab = [tableSize][2]uint64{
	{0x3ff0000000000000, 0x0000000000000000}, // 0
	{0x3ff02c9a3e778061, 0xbc7160139cd8dc5d}, // 1
	{0x3ff059b0d3158574, 0x3c8cd2523567f613}, // 2
	{0x3ff0874518759bc8, 0x3c60f74e61e6c861}, // 3
	{0x3ff0b5586cf9890f, 0x3c979aa65d837b6d}, // 4
	{0x3ff0e3ec32d3d1a2, 0x3c3ebe3d702f9cd1}, // 5
	{0x3ff11301d0125b51, 0xbc9556522a2fbd0e}, // 6
	{0x3ff1429aaea92de0, 0xbc91c923b9d5f416}, // 7
	{0x3ff172b83c7d517b, 0xbc801b15eaa59348}, // 8
	{0x3ff1a35beb6fcb75, 0x3c8b898c3f1353bf}, // 9
	{0x3ff1d4873168b9aa, 0x3c9aecf73e3a2f60}, // 10
	{0x3ff2063b88628cd6, 0x3c8a6f4144a6c38d}, // 11
	{0x3ff2387a6e756238, 0x3c968efde3a8a894}, // 12
	{0x3ff26b4565e27cdd, 0x3c80472b981fe7f2}, // 13
	{0x3ff29e9df51fdee1, 0x3c82f7e16d09ab31}, // 14
	{0x3ff2d285a6e4030b, 0x3c8b3782720c0ab4}, // 15
	{0x3ff306fe0a31b715, 0x3c834d754db0abb6}, // 16
	{0x3ff33c08b26416ff, 0x3c8fdd395dd3f84a}, // 17
	{0x3ff371a7373aa9cb, 0xbc924aedcc4b5068}, // 18
	{0x3ff3a7db34e59ff7, 0xbc71d1e83e9436d2}, // 19
	{0x3ff3dea64c123422, 0x3c859f48a72a4c6d}, // 20
	{0x3ff4160a21f72e2a, 0xbc58a78f4817895b}, // 21
	{0x3ff44e086061892d, 0x3c4363ed60c2ac11}, // 22
	{0x3ff486a2b5c13cd0, 0x3c6ecce1daa10379}, // 23
	{0x3ff4bfdad5362a27, 0x3c7690cebb7aafb0}, // 24
	{0x3ff4f9b2769d2ca7, 0xbc8f94340071a38e}, // 25
	{0x3ff5342b569d4f82, 0xbc78dec6bd0f385f}, // 26
	{0x3ff56f4736b527da, 0x3c93350518fdd78e}, // 27
	{0x3ff5ab07dd485429, 0x3c9063e1e21c5409}, // 28
	{0x3ff5e76f15ad2148, 0x3c9432e62b64c035}, // 29
	{0x3ff6247eb03a5585, 0xbc8c33c53bef4da8}, // 30
	{0x3ff6623882552225, 0xbc93cedd78565858}, // 31
	{0x3ff6a09e667f3bcd, 0xbc93b3efbf5e2228}, // 32
	{0x3ff6dfb23c651a2f, 0xbc6367efb86da9ee}, // 33
	{0x3ff71f75e8ec5f74, 0xbc781f647e5a3ecf}, // 34
	{0x3ff75feb564267c9, 0xbc8619321e55e68a}, // 35
	{0x3ff7a11473eb0187, 0xbc7b32dcb94da51d}, // 36
	{0x3ff7e2f336cf4e62, 0x3c65ebe1abd66c55}, // 37
	{0x3ff82589994cce13, 0xbc9369b6f13b3734}, // 38
	{0x3ff868d99b4492ed, 0xbc94d450d872576e}, // 39
	{0x3ff8ace5422aa0db, 0x3c8db72fc1f0eab4}, // 40
	{0x3ff8f1ae99157736, 0x3c7bf68359f35f44}, // 41
	{0x3ff93737b0cdc5e5, 0xbc5da9b88b6c1e29}, // 42
	{0x3ff97d829fde4e50, 0xbc92434322f4f9aa}, // 43
	{0x3ff9c49182a3f090, 0x3c71affc2b91ce27}, // 44
	{0x3ffa0c667b5de565, 0xbc87c50422622263}, // 45
	{0x3ffa5503b23e255d, 0xbc91bbd1d3bcbb15}, // 46
	{0x3ffa9e6b5579fdbf, 0x3c8469846e735ab3}, // 47
	{0x3ffae89f995ad3ad, 0x3c8c1a7792cb3387}, // 48
	{0x3ffb33a2b84f15fb, 0xbc55c3d956dcaeba}, // 49
	{0x3ffb7f76f2fb5e47, 0xbc68d6f438ad9334}, // 50
	{0x3ffbcc1e904bc1d2, 0x3c74ffd70a5fddcd}, // 51
	{0x3ffc199bdd85529c, 0x3c736eae30af0cb3}, // 52
	{0x3ffc67f12e57d14b, 0x3c84e08fd10959ac}, // 53
	{0x3ffcb720dcef9069, 0x3c676b2c6c921968}, // 54
	{0x3ffd072d4a07897c, 0xbc8fad5d3ffffa6f}, // 55
	{0x3ffd5818dcfba487, 0x3c74a385a63d07a7}, // 56
	{0x3ffda9e603db3285, 0x3c8e5a50d5c192ac}, // 57
	{0x3ffdfc97337b9b5f, 0xbc82d52107b43e1f}, // 58
	{0x3ffe502ee78b3ff6, 0x3c74b604603a88d3}, // 59
	{0x3ffea4afa2a490da, 0xbc8ff7128fd391f0}, // 60
	{0x3ffefa1bee615a27, 0x3c8ec3bc41aa2008}, // 61
	{0x3fff50765b6e4540, 0x3c8a64a931d185ee}, // 62
	{0x3fffa7c1819e90d8, 0x3c77893b4d91cd9d}, // 63
}
