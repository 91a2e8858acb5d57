package energy

import (
	"fmt"
	"math"

	"github.com/joulelaw/joulelaw/dist"
)

// Caps and cuts of renewal counts.
const (
	// MaxRenewals caps the renewals counted by one Renewals law: a node
	// replaced on failure more than MaxRenewals times within the horizon
	// with probability above RenewalCut is an error. (dist.SumIID expands a
	// law with an atom, the calendar limit's, binomially over it up to 32
	// terms.)
	MaxRenewals = 32
	// RenewalCut is the probability below which further renewals are not
	// counted: the count law's last atom holds P(N >= n) for its n, which
	// includes at most RenewalCut (plus the stated error) of more.
	RenewalCut = 1e-13
)

// Renewals is the law of the number of renewals N(t) of a renewal process
// by the time t, for t in [0, horizon]: a node whose cell is replaced the
// moment it fails (each new cell's life drawn afresh from the lifetime
// law), N(t) the cells used after the first by t. It is exact through
//
//	N(t) >= n  if and only if  S_n = L_1 + … + L_n <= t,
//	P(N(t) >= n) = P(S_n <= t),
//
// with the k-fold sums S_n from dist.SumIID (NewRenewals: closed forms for
// exponential and gamma lives, exact for finite discrete ones, transform
// sums with a stated error for other laws, which can take a second each)
// or on a lattice with a stated error (NewLatticeRenewals: milliseconds
// for a tabulated node law with its calendar atom). Renewals
// are counted while P(S_n <= horizon) can exceed RenewalCut: the count
// stops at the first n whose bound min(F(h)^n, 1 − S(h/n)^n) (all n lives
// end by h; one of them by h/n) or whose computed value is below it.
//
// Renewals is immutable and safe for concurrent use.
type Renewals struct {
	life    dist.Law
	horizon float64
	sums    []dist.Law // S_1 … S_m (the exact path)
	lat     *renewalLattice
	max     int // m on the lattice path
	acc     dist.Accuracy
}

// NewRenewals returns the renewal counts of the lifetime law life (s, support
// in [0, ∞), no more than RenewalCut of its mass at 0) up to horizon (s,
// finite and >= 0). Errors (wrapping ErrParam): a nil law, a law with mass
// below 0 or too much at 0, a bad horizon, more than MaxRenewals renewals, a
// sum dist.SumIID cannot form.
func NewRenewals(life dist.Law, horizon float64) (Renewals, error) {
	const fn = "NewRenewals"
	if err := checkRenewalLife(fn, life, horizon); err != nil {
		return Renewals{}, err
	}
	r := Renewals{life: life, horizon: horizon, acc: dist.Accuracy{TailFloor: RenewalCut, Method: "renewal counts P(N(t) >= n) = P(S_n <= t), k-fold sums by dist.SumIID"}}
	fh, sh := life.CDF(horizon), 0.0
	for n := 1; ; n++ {
		if n > 1 {
			sh = life.Survival(horizon / float64(n))
			bound := min(math.Pow(fh, float64(n)), -math.Expm1(float64(n)*math.Log(sh)))
			if bound <= RenewalCut {
				break
			}
		} else if fh <= RenewalCut {
			break
		}
		if n > MaxRenewals {
			return Renewals{}, paramErr(fn, "horizon", horizon, fmt.Sprintf("would count more than %d renewals of %v (P(S_%d <= horizon) > %g)", MaxRenewals, life, n, RenewalCut))
		}
		var s dist.Law = life
		if n > 1 {
			var err error
			if s, err = dist.SumIID(life, n); err != nil {
				return Renewals{}, causeErr(fn, "life", fmt.Sprint(life), fmt.Sprintf("the %d-fold sum", n), err)
			}
		}
		r.sums = append(r.sums, s)
		if e, ok := s.(dist.Estimated); ok {
			a := e.Accuracy()
			r.acc.CDFAbs = max(r.acc.CDFAbs, a.CDFAbs)
		}
		if s.CDF(horizon) <= RenewalCut {
			break
		}
	}
	r.acc.CDFAbs += RenewalCut
	return r, nil
}

func checkRenewalLife(fn string, life dist.Law, horizon float64) error {
	switch {
	case life == nil:
		return paramErr(fn, "life", "nil", "must be a lifetime law")
	case !(horizon >= 0) || math.IsInf(horizon, 0):
		return paramErr(fn, "horizon", horizon, "must be finite and >= 0 (s)")
	}
	if lo, _ := life.Support(); !(lo >= 0) {
		return paramErr(fn, "life", fmt.Sprint(life), "must have support in [0, ∞) (a lifetime, s)")
	}
	if f0 := life.CDF(0); !(f0 <= RenewalCut) {
		return paramErr(fn, "life", fmt.Sprint(life), fmt.Sprintf("must put at most %g of its mass at 0 (P(L <= 0) = %g)", RenewalCut, f0))
	}
	return nil
}

// Horizon returns the horizon (s).
func (r Renewals) Horizon() float64 { return r.horizon }

// Max returns the largest count the laws hold (its atom holds P(N >= Max)).
func (r Renewals) Max() int {
	if r.lat != nil {
		return r.max
	}
	return len(r.sums)
}

// sumCDF returns P(S_n <= t), 1 <= n <= Max, by the path that built r.
func (r Renewals) sumCDF(n int, t float64) float64 {
	if r.lat != nil {
		return r.lat.atLeast(n, t)
	}
	return r.sums[n-1].CDF(t)
}

// Accuracy states the error of AtLeast and of Count's probabilities: the
// largest stated CDF error of the k-fold sums plus RenewalCut.
func (r Renewals) Accuracy() dist.Accuracy { return r.acc }

// AtLeast returns P(N(t) >= n) = P(S_n <= t), directly (1 for n <= 0; NaN
// for t outside [0, horizon] or a zero Renewals). Beyond Max it is 0 (at
// most RenewalCut is cut).
func (r Renewals) AtLeast(n int, t float64) float64 {
	switch {
	case (r.life == nil && r.lat == nil) || !(t >= 0 && t <= r.horizon):
		return math.NaN()
	case n <= 0:
		return 1
	case n > r.Max():
		return 0
	}
	// P(S_n <= t) does not grow with n; keep the computed values so.
	p := 1.0
	for k := 1; k <= n; k++ {
		p = min(p, max(0, r.sumCDF(k, t)))
	}
	return p
}

// Count returns the law of N(t), t in [0, horizon] (s): a finite discrete
// law on 0 … Max, P(N = n) = P(S_n <= t) − P(S_{n+1} <= t), its last atom
// P(N >= Max).
func (r Renewals) Count(t float64) (dist.Discrete, error) {
	const fn = "Renewals.Count"
	if r.life == nil && r.lat == nil {
		return dist.Discrete{}, paramErr(fn, "r", "zero Renewals", "must be built by NewRenewals")
	}
	if !(t >= 0 && t <= r.horizon) {
		return dist.Discrete{}, paramErr(fn, "t", t, fmt.Sprintf("must be in [0, horizon %g s]", r.horizon))
	}
	m := r.Max()
	at := make([]float64, m+2) // at[n] = P(N >= n)
	at[0] = 1
	for n := 1; n <= m; n++ {
		at[n] = min(at[n-1], max(0, r.sumCDF(n, t)))
	}
	vals := make([]float64, 0, m+1)
	probs := make([]float64, 0, m+1)
	for n := 0; n <= m; n++ {
		if p := at[n] - at[n+1]; p > 0 {
			vals = append(vals, float64(n))
			probs = append(probs, p)
		}
	}
	d, err := dist.NewDiscrete(vals, probs)
	if err != nil {
		return dist.Discrete{}, causeErr(fn, "t", t, "count law", err)
	}
	return d, nil
}
