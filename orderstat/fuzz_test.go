package orderstat_test

import (
	"errors"
	"math"
	"testing"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/orderstat"
)

// FuzzGroups builds groups from fuzzed parameters (some invalid) and checks
// that the group constructors never panic, that they either return an error
// wrapping ErrParam or ErrRange or a law whose CDF and Survival lie in
// [0, 1], add up to 1 and move the right way, and whose quantiles invert
// them.
func FuzzGroups(f *testing.F) {
	f.Add(0.0, 1.0, int64(10), 2.0, 0.5, int64(3), int64(5), 0.7)
	f.Add(1e300, 1e-300, int64(1), -5.0, 3.0, int64(1e15), int64(1), 1e-9)
	f.Add(0.0, -1.0, int64(0), 0.0, 0.0, int64(-4), int64(0), math.NaN())
	f.Add(3.0, 0.1, int64(1000000), 3.0, 0.1, int64(1000000), int64(1000000), 0.999999)
	f.Fuzz(func(t *testing.T, mu1, sd1 float64, n1 int64, mu2, sd2 float64, n2, k int64, p float64) {
		var gs []orderstat.Group
		for _, g := range []struct {
			mu, sd float64
			n      int64
		}{{mu1, sd1, n1}, {mu2, sd2, n2}} {
			var law dist.Law
			if nl, err := dist.NewNormal(g.mu, g.sd); err == nil {
				law = nl
			}
			gs = append(gs, orderstat.Group{Law: law, Count: g.n})
		}
		for _, build := range []func() (dist.Law, error){
			func() (dist.Law, error) { return orderstat.MaxOfGroups(gs) },
			func() (dist.Law, error) { return orderstat.MinOfGroups(gs) },
			func() (dist.Law, error) { return orderstat.KthOfGroups(gs, k) },
		} {
			l, err := build()
			if err != nil {
				if !errors.Is(err, orderstat.ErrParam) && !errors.Is(err, orderstat.ErrRange) {
					t.Fatalf("error wraps neither sentinel: %v", err)
				}
				continue
			}
			if !(p > 0 && p < 1) {
				if !math.IsNaN(l.Quantile(p)) && (p < 0 || p > 1 || math.IsNaN(p)) {
					t.Fatalf("Quantile(%v) = %v, want NaN", p, l.Quantile(p))
				}
				continue
			}
			x := l.Quantile(p)
			if math.IsNaN(x) {
				t.Fatalf("Quantile(%v) = NaN for %v", p, l)
			}
			for _, y := range []float64{x, x - 1, x + 1} {
				c, s := l.CDF(y), l.Survival(y)
				if !(c >= 0 && c <= 1 && s >= 0 && s <= 1) || math.Abs(c+s-1) > 1e-12 {
					t.Fatalf("CDF(%v) = %v, Survival = %v", y, c, s)
				}
			}
			if finite(x) {
				if c := l.CDF(x); c < p*(1-1e-9)-1e-300 {
					t.Fatalf("CDF(Quantile(%v)) = %v", p, c)
				}
			}
		}
	})
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

// FuzzPoissonBinomial builds counts from fuzzed probabilities and counts
// and checks that the constructor never panics and that a returned law has
// masses summing to 1, the exact mean Σ n·p, and tails that add to 1.
func FuzzPoissonBinomial(f *testing.F) {
	f.Add(0.3, 0.7, 0.01, int64(3), int64(5), int64(100))
	f.Add(0.0, 1.0, 1e-300, int64(1), int64(1), int64(1e12))
	f.Add(-0.1, 2.0, math.NaN(), int64(0), int64(-1), int64(7))
	f.Add(0.5, 0.5, 0.5, int64(100000), int64(1), int64(1))
	f.Fuzz(func(t *testing.T, p1, p2, p3 float64, n1, n2, n3 int64) {
		probs := []float64{p1, p2, p3}
		counts := []int64{n1, n2, n3}
		c, err := orderstat.PoissonBinomial(probs, counts)
		if err != nil {
			if !errors.Is(err, orderstat.ErrParam) && !errors.Is(err, orderstat.ErrRange) {
				t.Fatalf("error wraps neither sentinel: %v", err)
			}
			return
		}
		total := 0.0
		for _, a := range c.Atoms() {
			total += a.Mass
		}
		if math.Abs(total-1) > 1e-9 {
			t.Fatalf("masses sum to %v", total)
		}
		mean := float64(n1)*p1 + float64(n2)*p2 + float64(n3)*p3
		if math.Abs(c.Mean()-mean) > 1e-12*math.Max(1, mean) {
			t.Fatalf("mean %v, want %v", c.Mean(), mean)
		}
		x := math.Floor(mean)
		if s := c.CDF(x) + c.Survival(x); math.Abs(s-1) > 1e-12 {
			t.Fatalf("CDF + Survival = %v at %v", s, x)
		}
	})
}
