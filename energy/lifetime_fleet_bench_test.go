package energy_test

import (
	"math"
	"testing"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/energy"
	"github.com/joulelaw/joulelaw/internal/quad"
	"github.com/joulelaw/joulelaw/internal/testref"
)

// firstFailureBench is the 60-group fleet of BenchmarkFleet60 (10 000
// nodes of the soil node on the example bobbin cell) with 200 dates
// spanning its first-failure law's 0.1 % to 99.9 % points, and each group's
// cycle-energy cumulants for the Edgeworth baseline.
type firstFailureBench struct {
	groups []energy.FleetGroup
	dates  []float64
	// per group: count, capacity (J), period (s), mean, sd, skewness and
	// excess kurtosis of the cycle energy with the cell's leak
	n, capJ, step, mu, sd, g1, g2 []float64
}

// firstFailure builds the fleet and its first-failure law.
func firstFailure(tb testing.TB, groups []energy.FleetGroup) (energy.Fleet, dist.Law) {
	tb.Helper()
	f, err := energy.NewFleet(groups)
	if err != nil {
		tb.Fatal(err)
	}
	ff, err := f.FirstFailure()
	if err != nil {
		tb.Fatal(err)
	}
	return f, ff
}

func newFirstFailureBench(b *testing.B) firstFailureBench {
	b.Helper()
	fb := firstFailureBench{groups: fleet60Groups(b)}
	f, ff := firstFailure(b, fb.groups)
	lo, hi := ff.Quantile(1e-3), ff.Quantile(1-1e-3)
	for i := range 200 {
		fb.dates = append(fb.dates, lo+(hi-lo)*float64(i)/199)
	}
	for i := range fb.groups {
		l, _, _ := f.Lifetime(i)
		e := l.CycleEnergy()
		mu := e.Mean()
		elo, ehi := e.Support()
		// Central moments by the library's adaptive quadrature of the tails:
		// E[(X−μ)^m] = ∫_0^∞ m·u^(m−1)·(P(X > μ+u) + (−1)^m·P(X < μ−u)) du.
		central := func(m int) float64 {
			up, err := quad.Adaptive(func(u float64) float64 {
				return float64(m) * math.Pow(u, float64(m-1)) * e.Survival(mu+u)
			}, 0, ehi-mu, quad.Options{RelTol: 1e-13})
			if err != nil {
				b.Fatal(err)
			}
			down, err := quad.Adaptive(func(u float64) float64 {
				return float64(m) * math.Pow(u, float64(m-1)) * e.CDF(mu-u)
			}, 0, mu-elo, quad.Options{RelTol: 1e-13})
			if err != nil {
				b.Fatal(err)
			}
			if m%2 == 1 {
				return up.Value - down.Value
			}
			return up.Value + down.Value
		}
		m2, m3, m4 := central(2), central(3), central(4)
		fb.n = append(fb.n, float64(fb.groups[i].Count))
		fb.capJ = append(fb.capJ, l.Capacity())
		fb.step = append(fb.step, l.Step())
		fb.mu = append(fb.mu, mu)
		fb.sd = append(fb.sd, math.Sqrt(m2))
		fb.g1 = append(fb.g1, m3/math.Pow(m2, 1.5))
		fb.g2 = append(fb.g2, m4/(m2*m2)-3)
	}
	return fb
}

// edgeworthSurvival is the first-failure survival P(min > t) =
// Π_g P(S_k <= C_g)^{n_g}, k = ⌊t/T⌋ + 1 cycles, each factor by the plain
// second-order Edgeworth expansion of the k-fold sum (Kolassa, Series
// Approximation Methods in Statistics, 3rd ed., §3.3, from memory):
//
//	P(S_k <= C) ≈ Φ(z) − φ(z)·[γ₁/(6√k)·He₂(z) + γ₂/(24k)·He₃(z) + γ₁²/(72k)·He₅(z)]
//
// with z = (C − kμ)/(σ√k): what a user would otherwise write.
func (fb firstFailureBench) edgeworthSurvival(t float64) float64 {
	s := 0.0
	for g := range fb.n {
		k := math.Floor(t/fb.step[g]) + 1
		rk := math.Sqrt(k)
		z := (fb.capJ[g] - k*fb.mu[g]) / (fb.sd[g] * rk)
		z2 := z * z
		he2, he3, he5 := z2-1, z*(z2-3), z*(z2*z2-10*z2+15)
		phi := math.Exp(-z2/2) / math.Sqrt(2*math.Pi)
		p := 0.5*math.Erfc(-z/math.Sqrt2) - phi*(fb.g1[g]/(6*rk)*he2+fb.g2[g]/(24*k)*he3+fb.g1[g]*fb.g1[g]/(72*k)*he5)
		s += fb.n[g] * math.Log(p)
	}
	return math.Exp(s)
}

var sinkFF float64

// BenchmarkFirstFailure60 builds the 60-group fleet and its first-failure
// law and asks 200 values of its survival; BenchmarkFirstFailure60Edgeworth
// is the baseline, the same 200 values by the plain second-order Edgeworth
// expansion (cumulants computed once, outside the timed loop).
func BenchmarkFirstFailure60(b *testing.B) {
	fb := newFirstFailureBench(b)
	defer testref.ReportCPU(b)()
	for b.Loop() {
		_, ff := firstFailure(b, fb.groups)
		for _, t := range fb.dates {
			sinkFF += ff.Survival(t)
		}
	}
}

// It also reports how far the expansion lies from the library's law on
// these dates (max-diff-e-9, in units of 1e-9; a fixture figure, not an oracle: the expansion
// carries no bound).
func BenchmarkFirstFailure60Edgeworth(b *testing.B) {
	fb := newFirstFailureBench(b)
	report := testref.ReportCPU(b)
	for b.Loop() {
		for _, t := range fb.dates {
			sinkFF += fb.edgeworthSurvival(t)
		}
	}
	report()
	_, ff := firstFailure(b, fb.groups)
	worst := 0.0
	for _, d := range fb.dates {
		worst = math.Max(worst, math.Abs(ff.Survival(d)-fb.edgeworthSurvival(d)))
	}
	b.ReportMetric(worst*1e9, "max-diff-e-9")
}
