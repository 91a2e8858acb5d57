package energy

import (
	"fmt"
	"math"
	"math/rand/v2"
	"sync"
	"sync/atomic"

	"github.com/joulelaw/joulelaw/dist"
)

// Lifetime is the law of the time (s) a battery powers a node, counted in
// whole cycles. With E_i the energy of cycle i (self-discharge included as a
// constant drain added to the floor, see BatterySpec.SelfDischargePerYear),
// S_k = E_1 + … + E_k, C the battery's usable energy and
//
//	M = max{k : S_k <= C}   (the number of complete cycles the cell powers)
//
// the lifetime is M·T for a fixed period T, and
//
//	P(M >= k) = P(S_k <= C),   P(M < k) = P(S_k > C)
//
// exactly, each evaluated with the K-fold sum of package dist at the
// accuracy it reports (Accuracy). The lifetime is conservative by less than
// one period: the cell is exhausted during cycle M+1. For a random period
// the lifetime is approximated by M·E[T]; its relative error is about
// sd(T)/(E[T]·√M), far below the spread of M for the cycle counts of real
// nodes.
//
// Probabilities that Hoeffding's or Bernstein's inequality puts below 1e-300
// are returned as 0 (an absolute error below 1e-300).
//
// A zero Lifetime is not valid (its methods return NaN); build one with
// NewLifetime. Lifetime implements dist.Law in seconds. CDF, Survival, Quantile and
// UpperQuantile each cost a few K-fold evaluations, cached (safely for
// concurrent use) inside the value; Mean and Variance are computed on first
// use by summing P(M >= k) over the k where it moves from 1 to 0 (see
// Mean). Rand draws by inverting a uniform; Simulate walks the cycles one by
// one from the structure.
type Lifetime struct {
	*lifeState // nil for the zero Lifetime
}

// lifeState is what a Lifetime holds, built once by NewLifetime in one
// allocation and shared by the value's copies: a Lifetime is one pointer,
// so that a fleet's slices and the dist.Law interface hold it without
// copying it. Of the cycle and the battery it keeps only what Simulate and
// PulseWarnings read (not their 250 bytes), and the K-fold evaluator is
// written in place, so that a fleet's construction allocates and moves
// less per group.
type lifeState struct {
	active   Stage    // the cycle's active stage (Simulate, PulseWarnings)
	period   dist.Law // s, the cycle's period law (Simulate)
	floor    float64  // W, the cycle's floor power (Simulate)
	volt     float64  // V, the battery's nominal voltage (PulseWarnings)
	pulse    float64  // A, the battery's pulse rating, 0 for none (PulseWarnings)
	capacity float64  // J usable
	leak     float64  // W self-discharge drain
	energy   dist.Law // J per cycle, leak included
	step     float64  // s per cycle: the fixed period or E[T]
	fixed    bool     // whether the period is fixed
	kmin     int64    // M >= kmin surely
	kmax     int64    // M <= kmax surely (math.MaxInt64 when unbounded)
	kf       kfold
}

// kfolds returns the K-fold evaluator; nil for the zero Lifetime.
func (l Lifetime) kfolds() *kfold {
	if l.lifeState == nil {
		return nil
	}
	return &l.kf
}

// kfold evaluates P(S_k <= C) and P(S_k > C) for integer k through
// dist.IIDSums (closed forms, the exact and bounded paths of a finite
// discrete law, tilted inversion otherwise), with a cache of the values: a
// value depends on k alone, so the cache changes no answer.
type kfold struct {
	sums            dist.IIDSums
	point           dist.PointTails // the sums at C, sharing transform values between neighbouring k
	emean, elo, ehi float64         // mean and support of the cycle law (J)
	evar            float64         // variance of the cycle law (J²)
	discrete        bool            // the cycle law is finite discrete with two or more atoms
	closed          bool            // the values come from a closed form: no cache
	shared          bool            // the values come from point's shared panels: no cache
	capacity        float64
	med             int64 // the median number of cycles + 1

	// what is computed on first use, allocated then (a fleet's first
	// failure never needs it: no cache on the shared-panel path, no
	// moments, no Accuracy)
	lz atomic.Pointer[kfoldLazy]
}

// kfoldLazy is the part of a kfold computed on first use: the value cache,
// the Accuracy and the moments.
type kfoldLazy struct {
	mu    sync.Mutex
	cache map[int64][2]float64

	accOnce sync.Once
	acc     dist.Accuracy // reported by dist.IIDSums at about the median

	once        sync.Once
	mean, vari  float64
	momentError float64 // estimated absolute error of mean (cycles)
}

// lazy returns the kfold's lazily built part, allocating it on the first
// call (one allocation wins whatever the goroutines do: every caller then
// sees the same part).
func (f *kfold) lazy() *kfoldLazy {
	if z := f.lz.Load(); z != nil {
		return z
	}
	f.lz.CompareAndSwap(nil, new(kfoldLazy))
	return f.lz.Load()
}

// at returns {P(S_k <= C), P(S_k > C)}; NaN, NaN when the K-fold law cannot
// be computed (k beyond dist.MaxSumIIDTerms among them).
func (f *kfold) at(k int64) [2]float64 {
	if f == nil {
		return [2]float64{math.NaN(), math.NaN()}
	}
	if k <= 0 {
		return [2]float64{1, 0}
	}
	if d := f.capacity - float64(k)*f.emean; f.negligible(k, d) {
		if d > 0 {
			return [2]float64{1, 0}
		}
		return [2]float64{0, 1}
	}
	if k > dist.MaxSumIIDTerms {
		return [2]float64{math.NaN(), math.NaN()}
	}
	if f.closed {
		// A closed form costs less than the cache's lock and lookup.
		b, a := f.sums.Tails(int(k), f.capacity)
		return [2]float64{b, a}
	}
	if f.shared {
		// A value from dist.PointTails' shared panels (about a
		// microsecond: the panels are its cache) costs little more than
		// the cache's locks, lookup and growth, and a fleet's dates or a
		// search seldom ask one k twice.
		b, a := f.point.Tails(int(k))
		return [2]float64{b, a}
	}
	z := f.lazy()
	z.mu.Lock()
	v, ok := z.cache[k]
	z.mu.Unlock()
	if ok {
		return v
	}
	b, a := f.point.Tails(int(k))
	v = [2]float64{b, a}
	z.mu.Lock()
	if z.cache == nil {
		z.cache = make(map[int64][2]float64)
	} else if len(z.cache) > 1<<16 {
		clear(z.cache)
	}
	z.cache[k] = v
	z.mu.Unlock()
	return v
}

// negligible reports whether the tail of S_k beyond C = kμ + d (above for
// d > 0, below for d < 0) is below 1e-300 by Hoeffding's or Bernstein's
// inequality, so that it may be returned as 0 (sparing an inversion far
// from the lifetime's bulk). For a law on [lo, hi] with variance σ²:
//
//	Hoeffding: P(S_k − kμ >= d) <= exp(−2d²/(k(hi−lo)²))
//	Bernstein: P(S_k − kμ >= d) <= exp(−d²/(2(kσ² + b·d/3))),  b = hi − μ
//
// and the same below with b = μ − lo (Hoeffding 1963, J. Amer. Statist.
// Assoc. 58:13–30, Thm 2; Boucheron, Lugosi & Massart, Concentration
// Inequalities, 2013, Cor. 2.11; from memory). Bernstein's is the sharper
// where the cycle's spread is small against its range, as with rare costly
// retransmissions; it prunes the groups of a fleet that lie far from its
// first failures.
func (f *kfold) negligible(k int64, d float64) bool {
	return f.logTailBound(k, d) < -300*math.Ln10
}

// logTailBound returns the log of the smaller of Hoeffding's and
// Bernstein's bounds (see negligible) on P(S_k − kμ >= d) for d > 0, or on
// P(S_k − kμ <= d) for d < 0; 0 (no bound) for d = 0 or an unbounded
// cycle law.
func (f *kfold) logTailBound(k int64, d float64) float64 {
	w := f.ehi - f.elo
	if !(w > 0) || math.IsInf(w, 0) || d == 0 || math.IsNaN(d) {
		return 0
	}
	kf := float64(k)
	hoeff := 2 * d * d / (kf * w * w)
	b := f.ehi - f.emean
	if d < 0 {
		b = f.emean - f.elo
	}
	ad := math.Abs(d)
	bern := ad * ad / (2 * (kf*f.evar + b*ad/3))
	return -max(hoeff, bern)
}

// boundTerms returns, for above, the largest number of terms K >= 1 with
// logTailBound(K, C − Kμ) <= −L (a deviation d = C − Kμ > 0 above the
// mean: a bound on P(S_K > C)), or otherwise the smallest K with the same
// for d < 0 (a bound on P(S_K <= C)); ok is false where there is none or
// the cycle law has no bounded support. The deviation at which each
// inequality reaches e^{−L} solves a quadratic once K = (C ∓ d)/μ is put
// in (Hoeffding: 2d² = L·w²·K, Bernstein: d² = 2L·(K·σ² + b·d/3)); the
// smaller of the two roots gives K, which is then checked against
// logTailBound with a relative margin of 1e-12 (stepped by one cycle, at
// most eight times, where rounding puts it just outside).
func (f *kfold) boundTerms(L float64, above bool) (int64, bool) {
	w := f.ehi - f.elo
	mu, s2, c := f.emean, f.evar, f.capacity
	if !(w > 0) || math.IsInf(w, 0) || !(L > 0) || math.IsInf(L, 0) || !(mu > 0) {
		return 0, false
	}
	q := 2 * L * c * s2 / mu
	B := L * w * w / mu
	var dB, dH float64
	if above {
		// Bernstein, b = hi − μ: d² + 2A·d − q = 0, A = L(σ²/μ − b/3)
		A := L * (s2/mu - (f.ehi-mu)/3)
		if r := math.Sqrt(A*A + q); A > 0 {
			dB = q / (A + r)
		} else {
			dB = r - A
		}
		// Hoeffding: 2d² + B·d − B·C = 0
		dH = 2 * B * c / (B + math.Sqrt(B*B+8*B*c))
	} else {
		// Bernstein, b = μ − lo: d² − 2A·d − q = 0, A = L(σ²/μ + b/3)
		A := L * (s2/mu + (mu-f.elo)/3)
		dB = A + math.Sqrt(A*A+q)
		// Hoeffding: 2d² − B·d − B·C = 0
		dH = (B + math.Sqrt(B*B+8*B*c)) / 4
	}
	d := min(dB, dH)
	holds := func(k int64) bool {
		return f.logTailBound(k, c-float64(k)*mu) <= -L*(1+1e-12)
	}
	if above {
		kf := math.Floor((c - d) / mu)
		if !(kf >= 1) {
			return 0, false
		}
		k := int64(kf)
		for range 8 {
			if k < 1 || c-float64(k)*mu <= 0 {
				return 0, false
			}
			if holds(k) {
				return k, true
			}
			k--
		}
		return 0, false
	}
	kf := math.Ceil((c + d) / mu)
	if !(kf >= 1 && kf < 1<<62) {
		return 0, false
	}
	k := int64(kf)
	for range 8 {
		if holds(k) && c-float64(k)*mu < 0 {
			return k, true
		}
		k++
	}
	return 0, false
}

// NewLifetime returns the lifetime law of a node running cycle c from the
// battery b. It is an error if the usable energy cannot power a single
// cycle's mean energy, or if the K-fold law cannot be computed at the
// median. For a cycle law whose values come from dist.PointTails' shared
// panels (see Accuracy) that check costs three transform values instead of
// a panel's 20–60 (which a fleet's far groups never need): the term's
// transform is exact and finite at 0 (dist.IIDSums.AtPoint), the median's
// number of cycles is within dist.MaxSumIIDTerms, and the cycle energy's
// centred log-transform at the tilt the median's panel starts from, on
// both sides, is finite and a log-transform (dist.PointTails.Check:
// Jensen's and Hoeffding's bounds). The panels are built when a value
// first needs them, so that building the law costs no inversion; a
// transform that fails only at a panel's complex nodes shows as NaN from
// CDF and Survival where a value needs it, as for every k.
func NewLifetime(c Cycle, b Battery) (Lifetime, error) {
	const fn = "NewLifetime"
	if c.energy == nil {
		return Lifetime{}, paramErr(fn, "c", "zero Cycle", "must be built by NewCycle")
	}
	if b.spec.NominalVoltage == 0 {
		return Lifetime{}, paramErr(fn, "b", "zero Battery", "must be built by NewBattery")
	}
	l := Lifetime{&lifeState{active: c.active, period: c.period, floor: c.floor,
		volt: b.spec.NominalVoltage, pulse: b.spec.PulseCurrent,
		capacity: b.UsableEnergy(), leak: b.SelfDischargePower()}}
	var err error
	if l.energy, err = c.energyWithLeak(l.leak); err != nil {
		return Lifetime{}, err
	}
	f := c.floor + l.leak
	// the exact mean (J) and variance (J²) per cycle, kept in the evaluator
	l.kf.emean = f*c.period.Mean() + c.mom.meanX
	l.kf.evar = f*f*c.period.Variance() + c.mom.varX
	if !(l.kf.emean > 0) {
		return Lifetime{}, paramErr(fn, "c", c.String(), "draws no energy: the lifetime is unbounded")
	}
	if l.kf.emean > l.capacity {
		return Lifetime{}, paramErr(fn, "b", b.String(), fmt.Sprintf("usable energy %g J is below one cycle's mean energy %g J", l.capacity, l.kf.emean))
	}
	t, ok := pointValue(c.period)
	l.fixed = ok
	if !ok {
		t = c.period.Mean()
	}
	l.step = t
	lo, hi := l.energy.Support()
	l.kmin, l.kmax = 0, math.MaxInt64
	if hi > 0 && !math.IsInf(hi, 1) {
		l.kmin = int64(math.Floor(l.capacity / hi))
	}
	if lo > 0 {
		if k := math.Floor(l.capacity / lo); k < 1<<62 {
			l.kmax = int64(k)
		}
	}
	sums, err := dist.NewIIDSums(l.energy)
	if err != nil {
		return Lifetime{}, causeErr(fn, "c", c.String(), "K-fold sums of the cycle energy", err)
	}
	point, err := sums.AtPoint(l.capacity)
	if err != nil {
		return Lifetime{}, causeErr(fn, "b", b.String(), "K-fold sums at the usable energy", err)
	}
	// The evaluator's fields written in place (a composite literal would be
	// built aside and moved, some 300 bytes with write barriers).
	kf := &l.kf
	kf.sums, kf.point = sums, point
	kf.capacity, kf.elo, kf.ehi = l.capacity, lo, hi
	if d, ok := l.energy.(dist.Discrete); ok && d.Len() > 1 {
		kf.discrete = true
	}
	kf.closed = sums.ClosedForm()
	kf.shared = point.Shared()
	// One evaluation at the renewal estimate of the median checks that the
	// K-fold law can be computed; the search for the exact median is left to
	// the first question that needs it. Where the values come from
	// dist.PointTails' shared panels (a term with an exact transform,
	// finite at 0, and C within 2·MaxSumIIDTerms means: AtPoint has checked
	// it), the check is that the median's k is within MaxSumIIDTerms and
	// dist.PointTails.Check at it (three transform values): the panels are
	// built on first use (a panel costs about 40 transform values, which a
	// fleet's far groups never need).
	mk, _ := l.cltK()
	med := int64(max(float64(l.kmin), min(math.Round(mk), min(float64(l.kmax), 1<<62))))
	if point.Shared() && med+1 <= dist.MaxSumIIDTerms {
		if err := point.Check(int(med + 1)); err != nil {
			return Lifetime{}, causeErr(fn, "c", c.String(), fmt.Sprintf("K-fold law of %d cycles", med+1), err)
		}
		l.kf.med = med + 1
		return l, nil
	}
	if v := l.kf.at(med + 1); math.IsNaN(v[0]) {
		_, err := sums.Accuracy(int(min(med+1, dist.MaxSumIIDTerms+1)))
		return Lifetime{}, causeErr(fn, "c", c.String(), fmt.Sprintf("K-fold law of %d cycles", med+1), err)
	}
	// The accuracy of the K-fold law at about the median stands for all k:
	// the inversion window scales with √k, so its error bound hardly moves.
	l.kf.med = med + 1
	return l, nil
}

// MustLifetime is NewLifetime that panics on bad input; for examples and tests.
func MustLifetime(c Cycle, b Battery) Lifetime {
	l, err := NewLifetime(c, b)
	if err != nil {
		panic(err) // panic-ok: Must form, documented
	}
	return l
}

// cltK returns the renewal central-limit mean and standard deviation of M
// (cycles): C/μ and sqrt(C·σ²/μ³).
func (l Lifetime) cltK() (mean, sd float64) {
	mu, s2 := l.kf.emean, l.kf.evar
	return l.capacity / mu, math.Sqrt(l.capacity * s2 / (mu * mu * mu))
}

// kQuantile returns the smallest k in [kmin, kmax] with P(M <= k) >= p
// (upper = false) or with P(M > k) <= p (upper = true), for p in (0, 1).
// P(M <= k) = P(S_{k+1} > C) and P(M > k) = P(S_{k+1} <= C).
func (l Lifetime) kQuantile(p float64, upper bool) int64 {
	pred := func(k int64) bool {
		v := l.kf.at(k + 1)
		if upper {
			return v[0] <= p
		}
		return v[1] >= p
	}
	m, sd := l.cltK()
	std := dist.MustNormal(0, 1)
	var zt float64 // the probit of the target level of P(M <= k)
	if upper {
		zt = std.UpperQuantile(p)
	} else {
		zt = std.Quantile(p)
	}
	guess := l.secantK(zt, m+sd*zt, max(1, sd))
	step := 2.0
	if math.IsNaN(guess) {
		guess, step = m+sd*zt, max(1, sd)
	}
	return searchK(pred, guess, step, l.kmin, l.kmax)
}

// secantK returns a k near the solution of z(k) = zt, where z(k) is the
// probit of P(M <= k) (taken from the smaller tail, so that it stays exact
// far out): nearly linear in k by the renewal central limit theorem, so a
// few secant steps from the guess g land within a cycle or two. NaN when a
// probability underflows.
func (l Lifetime) secantK(zt, g, step float64) float64 {
	std := dist.MustNormal(0, 1)
	lo, hi := float64(l.kmin), float64(l.kmax)
	clamp := func(x float64) float64 { return math.Round(min(max(x, lo), min(hi, 1<<62))) }
	z := func(k float64) float64 {
		v := l.kf.at(int64(k) + 1)
		if v[1] <= 0.5 {
			return std.Quantile(v[1])
		}
		return std.UpperQuantile(v[0])
	}
	// Start from the guess and one step beside it: never from points
	// evaluated earlier (a cache's content depends on what was asked
	// before, and the search's end point, hence the answer's rounding,
	// would follow it).
	k0 := clamp(g)
	z0 := z(k0)
	k1 := clamp(k0 + math.Copysign(step, zt-z0))
	if k1 == k0 {
		k1 = clamp(k0 - math.Copysign(step, zt-z0))
	}
	z1 := z(k1)
	for range 12 {
		if math.IsInf(z0, 0) || math.IsInf(z1, 0) || math.IsNaN(z0+z1) || z1 == z0 || k1 == k0 {
			return math.NaN()
		}
		k2 := clamp(k1 + (zt-z1)*(k1-k0)/(z1-z0))
		if math.Abs(k2-k1) <= 1 {
			return k2
		}
		k0, z0 = k1, z1
		k1, z1 = k2, z(k2)
	}
	return k1
}

// searchK returns the smallest k in [lo, hi] with pred(k), pred monotone
// (false, then true) and pred(hi) assumed true; guess and step start the
// bracket.
func searchK(pred func(int64) bool, guess, step float64, lo, hi int64) int64 {
	clamp := func(x float64) int64 {
		switch {
		case !(x > float64(lo)):
			return lo
		case x >= float64(hi) || x >= 1<<62:
			return hi
		}
		return int64(x)
	}
	k := clamp(math.Round(guess))
	var a, b int64 // pred(a) false (or a = lo-1), pred(b) true
	if pred(k) {
		b = k
		for {
			a = clamp(float64(b) - step)
			if a == lo && pred(lo) {
				return lo
			}
			if !pred(a) {
				break
			}
			b = a
			step *= 2
		}
	} else {
		a = k
		for {
			b = clamp(float64(a) + step)
			if b == hi || pred(b) {
				break
			}
			a = b
			step *= 2
		}
	}
	for b-a > 1 {
		m := a + (b-a)/2
		if pred(m) {
			b = m
		} else {
			a = m
		}
	}
	return b
}

// Cycles returns P(M >= k) and P(M < k): the probabilities that the cell
// powers at least k complete cycles, and not. NaN, NaN if the K-fold law
// cannot be computed.
func (l Lifetime) Cycles(k int64) (atLeast, fewer float64) {
	v := l.kfolds().at(k)
	return v[0], v[1]
}

// CDF returns P(lifetime <= t) = P(S_{k+1} > C) with k = floor(t/T) (t in
// s); 0 for t < 0. NaN for NaN t or when the K-fold law fails.
func (l Lifetime) CDF(t float64) float64 {
	switch {
	case math.IsNaN(t) || l.kfolds() == nil:
		if l.kfolds() == nil {
			return math.NaN()
		}
		return t
	case t < 0:
		return 0
	case math.IsInf(t, 1):
		return 1
	}
	k := math.Floor(t / l.step)
	if k >= float64(l.kmax) {
		return 1
	}
	return l.kf.at(int64(k) + 1)[1]
}

// Survival returns P(lifetime > t) = P(S_{k+1} <= C) with k = floor(t/T),
// computed directly (t in s); 1 for t < 0.
func (l Lifetime) Survival(t float64) float64 {
	switch {
	case math.IsNaN(t) || l.kfolds() == nil:
		if l.kfolds() == nil {
			return math.NaN()
		}
		return t
	case t < 0:
		return 1
	case math.IsInf(t, 1):
		return 0
	}
	k := math.Floor(t / l.step)
	if k >= float64(l.kmax) {
		return 0
	}
	return l.kf.at(int64(k) + 1)[0]
}

// Tails returns CDF(t) and Survival(t) from one K-fold evaluation, each
// accurate relative to its own value (the smaller tail is the one computed
// directly); NaN, NaN for NaN t or when the K-fold law fails. Order
// statistics over groups (orderstat.MinOfGroups, through
// orderstat.TwoTails) use it instead of choosing a side at the median.
func (l Lifetime) Tails(t float64) (cdf, survival float64) {
	switch {
	case math.IsNaN(t) || l.kfolds() == nil:
		if l.kfolds() == nil {
			return math.NaN(), math.NaN()
		}
		return t, t
	case t < 0:
		return 0, 1
	case math.IsInf(t, 1):
		return 1, 0
	}
	k := math.Floor(t / l.step)
	if k >= float64(l.kmax) {
		return 1, 0
	}
	v := l.kf.at(int64(k) + 1)
	return v[1], v[0]
}

// LowerBoundPoint returns a date t0 (s) with CDF(t) <= exp(logP) for every
// t <= t0: (K−1)·T for the largest number of cycles K at which the smaller
// of Hoeffding's and Bernstein's bounds on P(S_K > C) (see negligible) is
// at most exp(logP) (the bounds fall as K does), or (kmin−1)·T where that
// is later (CDF is 0 there: M >= kmin surely). −Inf for logP >= 0 or NaN,
// a zero Lifetime, or a cycle law without a bounded support. A few
// arithmetic operations: order statistics over groups
// (orderstat.TailBounded) use it to leave out groups far from the answer.
func (l Lifetime) LowerBoundPoint(logP float64) float64 {
	if l.kfolds() == nil || !(logP < 0) {
		return math.Inf(-1)
	}
	k0 := float64(l.kmin - 1)
	if k, ok := l.kf.boundTerms(-logP, true); ok {
		k0 = max(k0, float64(k-1))
	}
	return k0 * l.step
}

// UpperBoundPoint returns a date t1 (s) with Survival(t) <= exp(logP) for
// every t >= t1: K·T for the smallest number of cycles K at which the
// smaller of Hoeffding's and Bernstein's bounds on P(S_K <= C) is at most
// exp(logP) (the bounds fall as K grows), or kmax·T where that is earlier
// (Survival is 0 there). +Inf for logP >= 0 or NaN, a zero Lifetime, or
// where no such K is found.
func (l Lifetime) UpperBoundPoint(logP float64) float64 {
	if l.kfolds() == nil || !(logP < 0) {
		return math.Inf(1)
	}
	k1 := math.Inf(1)
	if l.kmax != math.MaxInt64 {
		k1 = float64(l.kmax)
	}
	if k, ok := l.kf.boundTerms(-logP, false); ok {
		k1 = min(k1, float64(k))
	}
	return k1 * l.step
}

// Quantile returns the smallest lifetime t = k·T (s) with CDF(t) >= p,
// searched over k on the K-fold law; NaN for p outside [0, 1].
func (l Lifetime) Quantile(p float64) float64 {
	switch {
	case !(p >= 0 && p <= 1) || l.kfolds() == nil:
		return math.NaN()
	case p == 0:
		lo, _ := l.Support()
		return lo
	case p == 1:
		_, hi := l.Support()
		return hi
	case p > 0.5:
		return l.UpperQuantile(1 - p)
	}
	return float64(l.kQuantile(p, false)) * l.step
}

// UpperQuantile returns the smallest lifetime t = k·T (s) with
// Survival(t) <= q; accurate for tiny q. NaN for q outside [0, 1].
func (l Lifetime) UpperQuantile(q float64) float64 {
	switch {
	case !(q >= 0 && q <= 1) || l.kfolds() == nil:
		return math.NaN()
	case q == 1:
		lo, _ := l.Support()
		return lo
	case q == 0:
		_, hi := l.Support()
		return hi
	}
	return float64(l.kQuantile(q, true)) * l.step
}

// Support returns [kmin·T, kmax·T] (s), where kmin and kmax are the fewest
// and most complete cycles the energy law's support allows; the upper end
// is +Inf when a cycle can cost arbitrarily little.
func (l Lifetime) Support() (lo, hi float64) {
	if l.lifeState == nil {
		return 0, 0
	}
	hi = math.Inf(1)
	if l.kmax != math.MaxInt64 {
		hi = float64(l.kmax) * l.step
	}
	return float64(l.kmin) * l.step, hi
}

// momentTol is the error the lifetime moments' adaptive rule stops at:
// successive trapezoidal sums of E[M] within momentTol·sd(M) cycles and of
// the second moment within momentTol·sd(M)·(the range's width) cycles²
// (the second moment's weight grows to the width). momentNoise is the
// largest difference, in sd(M), at which it stops because the differences
// no longer fall (the values' own errors).
const (
	momentTol   = 1e-9
	momentNoise = 1e-6
)

// momentMinStride is the number of grid intervals the adaptive rule starts
// from (at least), and momentExact the width of the range below which the
// terms are summed one by one.
const (
	momentMinStride = 8
	momentExact     = 32
)

// moments computes E[M] = Σ_{k>=1} g(k) and E[(M−c)²] = Σ_{k>=1} (2(k−c)−1)·g(k) + c²,
// with g(k) = P(M >= k) = P(S_k <= C) and c the median number of cycles,
// once, and Var M = E[(M−c)²] − (E[M]−c)², free of cancellation. Below the
// k where P(S_k > C) first exceeds 1e-17 g is 1 to that accuracy and the
// terms are summed in closed form; above the k where g falls below 1e-17
// they are dropped. In between (about 17 renewal standard deviations) the
// terms are summed one by one when there are at most momentExact of them;
// otherwise by an adaptive trapezoidal rule on every h-th k with the
// Euler–Maclaurin end corrections (g is flat at both ends, so they are
// (f(a)+f(b))/2 and, for the second moment's linear weight, (h²−1)/6): h
// starts as a power of two giving at least momentMinStride intervals and is
// halved (each halving evaluates only the new midpoints) until two
// successive sums agree within momentTol·sd(M) = 1e-9·sd(M) cycles (and the
// second moments within momentTol·sd(M)·width), or h = 1, the plain sum.
// For a smooth curve the trapezoidal error falls like exp(−2π²·sd²/h²), so
// the rule stops near h ≈ sd/2 with an error far below the difference it
// stopped at. Once h is below sd(M), a difference that no longer falls by 4
// per halving but is below momentNoise·sd(M) = 1e-6·sd(M) is the error of
// the values of P(M >= k) themselves (a tilted inversion's 1e-9 relative,
// say), which halving does not remove: the rule stops there too. Larger
// differences that do not fall are fine structure of the curve (the atoms
// of a nearly commensurate discrete cycle law), which the plain sum (h = 1)
// resolves. The last difference is reported (MomentError; zero but for
// rounding for the plain sum).
func (l Lifetime) moments() (mean, vari, errMean float64) {
	f := l.kfolds()
	if f == nil {
		return math.NaN(), math.NaN(), math.NaN()
	}
	z := f.lazy()
	z.once.Do(func() {
		const eps = 1e-17
		a := l.kQuantile(eps, false) + 1 // about the first k with P(S_k > C) >= eps
		b := l.kQuantile(eps, true) + 1  // the first k with P(S_k <= C) <= eps
		c := l.kQuantile(0.5, false)
		if a < 1 {
			a = 1
		}
		if b < a {
			b = a
		}
		// Σ_{k=1}^{a-1} g(k) = a−1 and Σ_{k=1}^{a-1} (2(k−c)−1) + c² = (c−a+1)²,
		// exact in integers; s0, s1 collect the rest.
		var s0, s1 float64
		g := func(k int64) float64 { return f.at(k)[0] }
		w := func(k int64) float64 { return float64(2*(k-c) - 1) }
		if b-a <= momentExact {
			for k := a; k <= b; k++ {
				v := g(k)
				s0 += v
				s1 += w(k) * v
			}
		} else {
			_, sd := l.cltK()
			sd = max(1, sd)
			h := int64(1)
			for h*2*momentMinStride <= b-a {
				h *= 2
			}
			n := (b - a + h - 1) / h // intervals of the coarsest grid
			end := a + n*h
			ga, ge := g(a), g(end)
			// coarsest trapezoidal sums (halves at the ends)
			t0, t1 := float64(h)*(ga+ge)/2, float64(h)*(w(a)*ga+w(end)*ge)/2
			for k := a + h; k < end; k += h {
				v := g(k)
				t0 += float64(h) * v
				t1 += float64(h) * w(k) * v
			}
			evals := n + 1
			d0 := math.Inf(1)
			for h > 1 {
				h /= 2
				var m0, m1 float64 // the new midpoints
				for k := a + h; k < end; k += 2 * h {
					v := g(k)
					m0 += v
					m1 += w(k) * v
					evals++
				}
				u0, u1 := t0/2+float64(h)*m0, t1/2+float64(h)*m1
				prev := d0
				d0 = math.Abs(u0 - t0)
				d1 := math.Abs(u1 - t1)
				t0, t1 = u0, u1
				if d0 <= momentTol*sd && d1 <= momentTol*sd*float64(end-a) {
					break
				}
				if float64(h) <= sd && d0 > prev/4 && d0 <= momentNoise*sd {
					// no longer converging at a step finer than the
					// curve's width: the differences are the errors of the
					// values themselves (a tilted inversion's 1e-9
					// relative, say), which halving does not remove; the
					// last difference is reported
					break
				}
			}
			if h == 1 {
				d0 = 0 // the plain sum
			}
			s0 += t0 + (ga+ge)/2
			s1 += t1 + (w(a)*ga+w(end)*ge)/2 + float64(h*h-1)/6*ga
			z.momentError = d0 + 1e-16*float64(evals)*max(1, math.Abs(t0))
		}
		d := float64(c - a + 1)
		z.mean = float64(a-1) + s0
		dm := s0 - d // E[M] − c
		z.vari = d*d + s1 - dm*dm
	})
	return z.mean, z.vari, z.momentError
}

// Mean returns E[lifetime] = T·E[M] (s), computed on first use (see
// moments); MomentError gives its estimated error.
func (l Lifetime) Mean() float64 {
	if l.lifeState == nil {
		return math.NaN()
	}
	m, _, _ := l.moments()
	return m * l.step
}

// Variance returns Var[lifetime] = T²·Var[M] (s²), computed on first use.
func (l Lifetime) Variance() float64 {
	if l.lifeState == nil {
		return math.NaN()
	}
	_, v, _ := l.moments()
	return v * l.step * l.step
}

// MomentError returns the estimated absolute error of Mean (s): rounding
// when the terms were summed one by one, otherwise the difference between
// the last two sums of the adaptive trapezoidal rule (see moments), which
// stops once it is below 1e-10 renewal standard deviations.
func (l Lifetime) MomentError() float64 {
	if l.lifeState == nil {
		return math.NaN()
	}
	_, _, e := l.moments()
	return e * l.step
}

// Rand draws a lifetime (s) by inverting a uniform on the law (a few K-fold
// evaluations, cached). For the independent path use Simulate.
func (l Lifetime) Rand(r *rand.Rand) float64 {
	u := r.Float64()
	if u < 0.5 {
		return l.Quantile(u)
	}
	return l.UpperQuantile(1 - u)
}

// Simulate draws one lifetime (s) from the structure (NaN for a zero
// Lifetime): cycle energies drawn
// with Cycle.Rand (plus the self-discharge drain) are added until they
// exceed the usable energy; it returns the number of complete cycles times
// T. Its cost is proportional to the number of cycles.
func (l Lifetime) Simulate(r *rand.Rand) float64 {
	if l.kfolds() == nil {
		return math.NaN()
	}
	s := 0.0
	var k int64
	for {
		t := l.period.Rand(r)
		e, _ := l.active.sample(r, l.floor, nil)
		s += (l.floor+l.leak)*t + e
		if s > l.capacity {
			return float64(k) * l.step
		}
		k++
	}
}

// Accuracy reports the error bounds of P(S_k <= C) that dist.IIDSums
// states (its tests check them against independent oracles; zero for
// closed forms), which stand for every k: at about the median number of
// cycles, where the inversion window scales with √k, so the bound hardly
// moves; for a purely discrete cycle law rounding only for two or three
// energies, which are exact, and for more the proven bound of the
// saddlepoint (Esseen's inequality) at 12 renewal standard deviations below
// the median number of cycles, which holds for every larger k (the bound
// falls with k). For a cycle law that dist inverts by a tilted Fourier
// series (a transform, no atoms, no closed form: the values come from
// dist.PointTails) it states the largest of the values' own error
// estimates over probes from the median outwards (see pointAccuracy).
func (l Lifetime) Accuracy() dist.Accuracy {
	f := l.kfolds()
	if f == nil {
		return dist.Accuracy{Method: "zero Lifetime: not built by NewLifetime"}
	}
	z := f.lazy()
	z.accOnce.Do(func() {
		if f.point.Shared() {
			z.acc = l.pointAccuracy()
			return
		}
		k := f.med
		if f.discrete {
			_, sd := l.cltK()
			k = max(1, f.med-int64(math.Ceil(12*sd)))
		}
		acc, err := f.sums.Accuracy(int(min(k, dist.MaxSumIIDTerms)))
		if err != nil {
			acc = dist.Accuracy{CDFAbs: math.NaN(), Method: err.Error()}
		}
		z.acc = acc
	})
	a := z.acc
	a.Method = "renewal identity P(M >= k) = P(S_k <= C); " + a.Method
	return a
}

// pointProbeStep is the spacing of pointAccuracy's probes in renewal
// standard deviations of M, pointProbeSlack the factor its bounds carry for
// the values between the probes, and pointProbeFloor the smallest tail it
// probes (the TailFloor it states).
const (
	pointProbeStep  = 0.5
	pointProbeSlack = 1.25
	pointProbeFloor = 1e-30
)

// pointAccuracy states the error of the values that dist.PointTails
// returns for this lifetime: each value comes with an estimate of the
// relative error of its smaller tail (the rounding of the tilted sum, which
// the panels hold below dist.PointTailsRel, and of its exponents
// k·log M), and that estimate varies smoothly with k (it grows
// with the tilt, about linearly in the distance from the median). The
// estimates are read at the median number of cycles and every
// pointProbeStep = 0.5 renewal standard deviations on both sides until the
// smaller tail falls below pointProbeFloor = 1e-30 (at most 40 standard
// deviations); CDFAbs is pointProbeSlack = 1.25 times the largest product
// of estimate and smaller tail (plus the rounding of the larger tail,
// 2.2e-16), SurvivalRel 1.25 times the largest estimate. Over the 60 groups
// of BenchmarkFirstFailure60 (1.5·10^5 to 7.9·10^5 cycles) this states
// 6.6e-13 to 1.2e-12 absolute and 4.4e-12 to 7.8e-12 relative.
func (l Lifetime) pointAccuracy() dist.Accuracy {
	f := l.kfolds()
	m, sd := l.cltK()
	sd = max(1, sd)
	var abs, rel float64
	for _, dir := range []float64{-1, 1} {
		for j := 0; float64(j)*pointProbeStep <= 40; j++ {
			kf := math.Round(m + dir*float64(j)*pointProbeStep*sd)
			if kf < 1 || kf < float64(l.kmin) || kf > float64(l.kmax) || kf > dist.MaxSumIIDTerms {
				break
			}
			b, a, r, err := f.point.Evaluate(int(kf))
			if err != nil {
				return dist.Accuracy{CDFAbs: math.NaN(), SurvivalRel: math.NaN(), Method: err.Error()}
			}
			small := min(b, a)
			abs = max(abs, r*small)
			rel = max(rel, r)
			if small < pointProbeFloor {
				break
			}
		}
	}
	return dist.Accuracy{
		CDFAbs:      pointProbeSlack*abs + 2.2e-16,
		SurvivalRel: pointProbeSlack * rel,
		TailFloor:   pointProbeFloor,
		Method:      "renewal identity P(M >= k) = P(S_k <= C); tilted Fourier-series inversion, transform values shared between neighbouring k (dist.PointTails), error estimated value by value",
	}
}

// Step returns the time per cycle T (s): the fixed period, or the mean
// period when the period is random.
func (l Lifetime) Step() float64 {
	if l.lifeState == nil {
		return 0
	}
	return l.step
}

// Capacity returns the usable energy C (J).
func (l Lifetime) Capacity() float64 {
	if l.lifeState == nil {
		return 0
	}
	return l.capacity
}

// CycleEnergy returns the law of one cycle's energy with the self-discharge
// drain included (J).
func (l Lifetime) CycleEnergy() dist.Law {
	if l.lifeState == nil {
		return nil
	}
	return l.energy
}

// PulseWarnings returns the battery's pulse check of the cycle.
func (l Lifetime) PulseWarnings() []PulseWarning {
	if l.lifeState == nil {
		return nil
	}
	if l.pulse == 0 {
		return nil
	}
	return pulseCheck((Cycle{active: l.active}).visitStates(), l.volt, l.pulse)
}

// InYears returns the lifetime law in Julian years.
func (l Lifetime) InYears() dist.Law { y, _ := dist.Affine(l, 1/Year, 0); return y }

// InDays returns the lifetime law in days.
func (l Lifetime) InDays() dist.Law { d, _ := dist.Affine(l, 1/Day, 0); return d }

// String summarises the law in years: median and 5–95 % range.
func (l Lifetime) String() string {
	if l.lifeState == nil {
		return "Lifetime(zero value: not built by NewLifetime)"
	}
	return fmt.Sprintf("Lifetime(median %.4g years, 5–95%% [%.4g, %.4g] years, %.6g J usable, %.4g W mean)",
		l.Quantile(0.5)/Year, l.Quantile(0.05)/Year, l.UpperQuantile(0.05)/Year, l.capacity, l.kf.emean/l.step)
}

// RenewalEstimate is the renewal central-limit quick estimate of a lifetime
// (Cox, Renewal Theory, 1962, §6.3; Ross, Stochastic Processes, 2nd ed.,
// Theorem 3.3.5; section numbers from memory): the number of cycles is approximately
//
//	M ≈ Normal(C/μ, C·σ²/μ³)
//
// with μ and σ² the mean and variance of one cycle's energy. It is a quick
// estimate, not the law: its error against the exact law is reported with
// it, and shrinks like 1/√(C/μ).
type RenewalEstimate struct {
	Law dist.Normal // the estimate of the lifetime (s): Normal(T·C/μ, T·sqrt(C·σ²/μ³))
	// MaxCDFError is the largest |F_exact(t) − F_estimate(t)| found at the
	// exact law's quantiles of levels 0.001, 0.01, 0.05, 0.1, …, 0.9, 0.95,
	// 0.99, 0.999 (at t and just below it).
	MaxCDFError float64
	// MedianError is (estimate's median − exact median)/exact median.
	MedianError float64
}

// RenewalEstimate returns the renewal central-limit estimate and its error
// against the exact law.
func (l Lifetime) RenewalEstimate() (RenewalEstimate, error) {
	if l.lifeState == nil {
		return RenewalEstimate{}, paramErr("Lifetime.RenewalEstimate", "l", "zero Lifetime", "must be built by NewLifetime")
	}
	m, sd := l.cltK()
	n, err := dist.NewNormal(m*l.step, sd*l.step)
	if err != nil {
		return RenewalEstimate{}, causeErr("Lifetime.RenewalEstimate", "lifetime", l.String(), "normal estimate", err)
	}
	out := RenewalEstimate{Law: n}
	for _, p := range []float64{0.001, 0.01, 0.05, 0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 0.8, 0.9, 0.95, 0.99, 0.999} {
		t := l.Quantile(p)
		for _, x := range []float64{t, t - l.step/2} {
			out.MaxCDFError = max(out.MaxCDFError, math.Abs(l.CDF(x)-n.CDF(x)))
		}
	}
	med := l.Quantile(0.5)
	out.MedianError = (n.Quantile(0.5) - med) / med
	return out, nil
}
