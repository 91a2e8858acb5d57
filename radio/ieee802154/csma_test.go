package ieee802154_test

import (
	"math"
	"math/big"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/dist/disttest"
	"github.com/joulelaw/joulelaw/radio/ieee802154"
)

func nan() float64 { return math.NaN() }

// TestCSMARanges: the attributes' ranges and defaults of IEEE Std
// 802.15.4-2006 §7.5.1.4 and Table 86 (from memory; kept in the 2020
// edition's MAC PIB): macMinBE 0 … macMaxBE (default 3), macMaxBE 3 … 8
// (default 5), macMaxCSMABackoffs 0 … 5 (default 4), macMaxFrameRetries
// 0 … 7 (default 3). Each value just outside is an error naming the
// attribute and its range; each end of a range is accepted.
func TestCSMARanges(t *testing.T) {
	d := ieee802154.DefaultCSMA()
	assert.Equal(t, ieee802154.CSMA{MinBE: 3, MaxBE: 5, MaxCSMABackoffs: 4, MaxFrameRetries: 3}, d)
	require.NoError(t, d.Validate())
	for _, tc := range []struct {
		edit  func(*ieee802154.CSMA)
		attr  string
		rng   string
		valid bool
	}{
		{func(c *ieee802154.CSMA) { c.MinBE = -1 }, "macMinBE", "0 … macMaxBE (5)", false},
		{func(c *ieee802154.CSMA) { c.MinBE = 6 }, "macMinBE", "0 … macMaxBE (5)", false},
		{func(c *ieee802154.CSMA) { c.MinBE = 0 }, "", "", true},
		{func(c *ieee802154.CSMA) { c.MinBE = 5 }, "", "", true},
		{func(c *ieee802154.CSMA) { c.MaxBE = 2 }, "macMaxBE", "3 … 8", false},
		{func(c *ieee802154.CSMA) { c.MaxBE = 9 }, "macMaxBE", "3 … 8", false},
		{func(c *ieee802154.CSMA) { c.MaxBE = 8 }, "", "", true},
		{func(c *ieee802154.CSMA) { c.MinBE, c.MaxBE = 0, 3 }, "", "", true},
		{func(c *ieee802154.CSMA) { c.MaxCSMABackoffs = -1 }, "macMaxCSMABackoffs", "0 … 5", false},
		{func(c *ieee802154.CSMA) { c.MaxCSMABackoffs = 6 }, "macMaxCSMABackoffs", "0 … 5", false},
		{func(c *ieee802154.CSMA) { c.MaxCSMABackoffs = 0 }, "", "", true},
		{func(c *ieee802154.CSMA) { c.MaxFrameRetries = -1 }, "macMaxFrameRetries", "0 … 7", false},
		{func(c *ieee802154.CSMA) { c.MaxFrameRetries = 8 }, "macMaxFrameRetries", "0 … 7", false},
		{func(c *ieee802154.CSMA) { c.MaxFrameRetries = 7 }, "", "", true},
	} {
		c := d
		tc.edit(&c)
		err := c.Validate()
		if tc.valid {
			assert.NoError(t, err, "%+v", c)
			continue
		}
		require.ErrorIs(t, err, ieee802154.ErrParam, "%+v", c)
		assert.Contains(t, err.Error(), tc.attr)
		assert.Contains(t, err.Error(), tc.rng)
		_, err = c.CCAs(0.3)
		assert.ErrorIs(t, err, ieee802154.ErrParam)
	}
	assert.Error(t, ieee802154.CSMA{}.Validate(), "the zero value is not valid")
	for _, b := range []float64{-0.1, 1.1, nan(), math.Inf(1)} {
		_, err := d.CCAs(b)
		assert.ErrorIs(t, err, ieee802154.ErrParam, "busy %g", b)
		_, err = d.AccessFailure(b)
		assert.ErrorIs(t, err, ieee802154.ErrParam)
		_, err = d.BackoffPeriods(b)
		assert.ErrorIs(t, err, ieee802154.ErrParam)
		_, err = d.Frame(b, 0.1, true)
		assert.ErrorIs(t, err, ieee802154.ErrParam)
		_, err = d.Frame(0.1, b, true)
		assert.ErrorIs(t, err, ieee802154.ErrParam)
	}
}

// TestCCAsClosedForm checks the number of CCAs of a run against the
// closed forms of the unslotted CSMA-CA algorithm (IEEE Std 802.15.4-2020
// §6.2.5.1) with independent busy CCAs: P(N = k) = b^(k−1)(1 − b) for
// k <= m, P(N = m+1) = b^m, the failure probability b^(m+1) per run and
// the mean (1 − b^(m+1))/(1 − b) (a finite geometric series).
func TestCCAsClosedForm(t *testing.T) {
	for _, m := range []int{0, 1, 4, 5} {
		c := ieee802154.DefaultCSMA()
		c.MaxCSMABackoffs = m
		for _, b := range []float64{0, 1e-9, 0.05, 0.3, 0.9, 1} {
			n, err := c.CCAs(b)
			require.NoError(t, err)
			for k := 1; k <= m+1; k++ {
				want := math.Pow(b, float64(k-1))
				if k <= m {
					want *= 1 - b
				}
				got := n.CDF(float64(k)) - n.CDF(float64(k)-0.5)
				assert.InDelta(t, want, got, 1e-15, "m=%d b=%g k=%d", m, b, k)
			}
			f, err := c.AccessFailure(b)
			require.NoError(t, err)
			assert.InDelta(t, math.Pow(b, float64(m+1)), f, 1e-16*math.Max(f, 1e-300)+1e-300)
			if b < 1 {
				assert.InEpsilon(t, (1-math.Pow(b, float64(m+1)))/(1-b), n.Mean(), 1e-14)
			} else {
				assert.Equal(t, float64(m+1), n.Mean())
			}
		}
	}
	c := ieee802154.DefaultCSMA()
	f, err := c.AccessFailure(1e-60)
	require.NoError(t, err)
	assert.InEpsilon(t, 1e-300, f, 1e-13, "b^5 kept down to 1e-300")
}

// enumBackoff enumerates every run of the CSMA-CA algorithm (IEEE Std
// 802.15.4-2020 §6.2.5.1) written out directly: a run with k CCAs has
// backoffs drawn uniformly from 0 … 2^BE − 1, BE starting at macMinBE and
// raised by one (up to macMaxBE) after each busy CCA. Every tuple of draws
// is listed and the tuples with each total are counted exactly (integers);
// P(total = j) = Σ_k P(N = k)·count_k(j)/Π_i 2^BE(i), with P(N = k) from
// the walk of the CCAs (busy with probability b) written out by hand.
func enumBackoff(c ieee802154.CSMA, b float64) map[int]float64 {
	out := map[int]float64{}
	be := c.MinBE
	reach := 1.0 // P(the first k−1 CCAs busy)
	var sizes []int
	for k := 1; k <= c.MaxCSMABackoffs+1; k++ {
		sizes = append(sizes, 1<<be)
		pk := reach * (1 - b) // the k-th CCA idle
		if k == c.MaxCSMABackoffs+1 {
			pk = reach // idle, or busy and the run fails: k CCAs either way
		}
		counts := map[int]int64{}
		var walk func(i, total int)
		walk = func(i, total int) {
			if i == len(sizes) {
				counts[total]++
				return
			}
			for u := 0; u < sizes[i]; u++ {
				walk(i+1, total+u)
			}
		}
		walk(0, 0)
		tuples := 1.0
		for _, s := range sizes {
			tuples *= float64(s)
		}
		for j, n := range counts {
			out[j] += pk * float64(n) / tuples
		}
		reach *= b
		be = min(be+1, c.MaxBE)
	}
	return out
}

// TestBackoffEnumeration checks BackoffPeriods atom by atom against the
// enumeration of every path of the algorithm (4 194 304 backoff tuples
// for the defaults), and its mean against E[B] = Σ_i b^i·(2^BE(i) − 1)/2
// (Wald: stage i runs iff the first i CCAs were busy).
func TestBackoffEnumeration(t *testing.T) {
	for _, tc := range []struct {
		c ieee802154.CSMA
		b float64
	}{
		{ieee802154.DefaultCSMA(), 0.3},
		{ieee802154.CSMA{MinBE: 0, MaxBE: 3, MaxCSMABackoffs: 3}, 0.6},
		{ieee802154.CSMA{MinBE: 2, MaxBE: 3, MaxCSMABackoffs: 5}, 0.95},
		{ieee802154.CSMA{MinBE: 3, MaxBE: 8, MaxCSMABackoffs: 2}, 0.5},
		{ieee802154.CSMA{MinBE: 0, MaxBE: 3, MaxCSMABackoffs: 0}, 0.5},
		{ieee802154.DefaultCSMA(), 0},
		{ieee802154.DefaultCSMA(), 1},
	} {
		law, err := tc.c.BackoffPeriods(tc.b)
		require.NoError(t, err)
		at, ok := law.(dist.Atomic)
		require.True(t, ok, "exact discrete law")
		want := enumBackoff(tc.c, tc.b)
		total := 0.0
		for _, a := range at.Atoms() {
			j := int(math.Round(a.Value))
			require.InDelta(t, float64(j), a.Value, 1e-9)
			// Six terms at most, each exact to rounding: 1e-15 relative.
			assert.InDelta(t, want[j], a.Mass, 1e-15*want[j]+1e-300, "%+v b=%g j=%d", tc.c, tc.b, j)
			delete(want, j)
			total += a.Mass
		}
		for j, p := range want {
			assert.Zero(t, p, "atom %d missing", j)
		}
		assert.InDelta(t, 1, total, 1e-14)
		mean := 0.0
		for i := 0; i <= tc.c.MaxCSMABackoffs; i++ {
			mean += math.Pow(tc.b, float64(i)) * (math.Ldexp(1, tc.c.BE(i)) - 1) / 2
		}
		assert.InDelta(t, mean, law.Mean(), 1e-12*mean+1e-300)
		sec, err := tc.c.BackoffTime(ieee802154.OQPSK2450(), tc.b)
		require.NoError(t, err)
		assert.InDelta(t, 320e-6*mean, sec.Mean(), 1e-12*320e-6*mean+1e-300)
		// The run: backoffs plus E[N] = Σ_i b^i CCAs of 128 µs.
		ccas := 0.0
		for i := 0; i <= tc.c.MaxCSMABackoffs; i++ {
			ccas += math.Pow(tc.b, float64(i))
		}
		rt, err := tc.c.RunTime(ieee802154.OQPSK2450(), tc.b)
		require.NoError(t, err)
		assert.InEpsilon(t, 320e-6*mean+128e-6*ccas, rt.Mean(), 1e-12)
	}
}

// enumFrame enumerates every sequence of attempts written out directly:
// each attempt ends in an access failure (probability f, the sending
// stops), a delivery ((1 − f)(1 − a), stops) or a loss ((1 − f)·a, a new
// attempt while retries remain). It returns the joint law of (runs,
// transmissions) and the three fates.
func enumFrame(f, a float64, retries int) (joint map[[2]int]float64, del, fail, limit float64) {
	joint = map[[2]int]float64{}
	var walk func(run, tx int, p float64)
	walk = func(run, tx int, p float64) {
		joint[[2]int{run, tx - 1}] += p * f
		fail += p * f
		joint[[2]int{run, tx}] += p * (1 - f) * (1 - a)
		del += p * (1 - f) * (1 - a)
		if run == retries+1 {
			joint[[2]int{run, tx}] += p * (1 - f) * a
			limit += p * (1 - f) * a
			return
		}
		walk(run+1, tx+1, p*(1-f)*a)
	}
	walk(1, 1, 1)
	return joint, del, fail, limit
}

// TestFrameEnumeration checks CSMA.Frame against the enumeration of every
// sequence of attempts.
func TestFrameEnumeration(t *testing.T) {
	for _, tc := range []struct {
		retries int
		b, a    float64
	}{{3, 0.3, 0.2}, {0, 0.5, 0.5}, {7, 0.8, 0.9}, {3, 0, 1}, {3, 1, 0.5}, {5, 0.1, 0}} {
		c := ieee802154.DefaultCSMA()
		c.MaxFrameRetries = tc.retries
		o, err := c.Frame(tc.b, tc.a, true)
		require.NoError(t, err)
		f := math.Pow(tc.b, 5)
		joint, del, fail, limit := enumFrame(f, tc.a, tc.retries)
		assert.InDelta(t, del, o.Delivered, 1e-15)
		assert.InDelta(t, fail, o.AccessFailure, 1e-15)
		assert.InDelta(t, limit, o.RetryLimit, 1e-15)
		runs, tx := map[int]float64{}, map[int]float64{}
		for k, p := range joint {
			runs[k[0]] += p
			tx[k[1]] += p
		}
		for j := 0; j <= tc.retries+1; j++ {
			assert.InDelta(t, runs[j], o.Runs.CDF(float64(j))-o.Runs.CDF(float64(j)-0.5), 1e-15, "runs %d", j)
			assert.InDelta(t, tx[j], o.Transmissions.CDF(float64(j))-o.Transmissions.CDF(float64(j)-0.5), 1e-15, "tx %d", j)
		}
	}
	// Without an acknowledgement request: one run, sent unless it fails.
	o, err := ieee802154.DefaultCSMA().Frame(0.5, 0.9, false)
	require.NoError(t, err)
	assert.InDelta(t, 1-math.Pow(0.5, 5), o.Delivered, 1e-15)
	assert.InDelta(t, math.Pow(0.5, 5), o.AccessFailure, 1e-15)
	assert.Zero(t, o.RetryLimit)
	assert.Equal(t, "PointMass(1)", o.Runs.String())
}

// TestCSMALawsConformance runs the shared law conformance checker on every
// law of CSMA.
func TestCSMALawsConformance(t *testing.T) {
	c := ieee802154.DefaultCSMA()
	for i, b := range []float64{0, 0.2, 0.7, 1} {
		n, err := c.CCAs(b)
		require.NoError(t, err)
		assert.NoError(t, disttest.Check(n, disttest.WithSeed(uint64(10+i))), "CCAs b=%g", b)
		bp, err := c.BackoffPeriods(b)
		require.NoError(t, err)
		assert.NoError(t, disttest.Check(bp, disttest.WithSeed(uint64(20+i))), "BackoffPeriods b=%g", b)
		bt, err := c.BackoffTime(ieee802154.BPSK868(), b)
		require.NoError(t, err)
		assert.NoError(t, disttest.Check(bt, disttest.WithSeed(uint64(30+i))), "BackoffTime b=%g", b)
		rt, err := c.RunTime(ieee802154.OQPSK2450(), b)
		require.NoError(t, err)
		assert.NoError(t, disttest.Check(rt, disttest.WithSeed(uint64(60+i))), "RunTime b=%g", b)
		o, err := c.Frame(b, 0.3, true)
		require.NoError(t, err)
		assert.NoError(t, disttest.Check(o.Runs, disttest.WithSeed(uint64(40+i))), "Runs b=%g", b)
		assert.NoError(t, disttest.Check(o.Transmissions, disttest.WithSeed(uint64(50+i))), "Transmissions b=%g", b)
	}
}

// TestNearlyAlwaysBusy: with b = 1 − 1e-10 a run succeeds with probability
// 1 − b^5 ≈ 5e-10; the fates keep it to 1e-14 relative (1 − b^5 taken
// as 1 minus the rounded b^5 erred by 2e-10 relative here, and can by
// 1e-7). Oracle: b^5 and 1 − b^5 in 256-bit
// arithmetic (math/big) from the same float64 b.
func TestNearlyAlwaysBusy(t *testing.T) {
	b := 1 - 1e-10
	x := new(big.Float).SetPrec(256).SetFloat64(b)
	p := new(big.Float).SetPrec(256).SetFloat64(1)
	for range 5 {
		p.Mul(p, x)
	}
	ok, _ := new(big.Float).SetPrec(256).Sub(big.NewFloat(1), p).Float64()
	c := ieee802154.DefaultCSMA()
	o, err := c.Frame(b, 0, false)
	require.NoError(t, err)
	assert.InEpsilon(t, ok, o.Delivered, 1e-14)
	o, err = c.Frame(b, 0.5, true)
	require.NoError(t, err)
	// P(delivered) = Σ_j L^(j−1)·ok·(1 − a), L = ok·a: ok·(1 − a)·(1 − L^4)/(1 − L).
	l := ok * 0.5
	assert.InEpsilon(t, ok*0.5*(1-math.Pow(l, 4))/(1-l), o.Delivered, 1e-14)
}
