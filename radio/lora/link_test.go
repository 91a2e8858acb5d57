package lora_test

import (
	"math"
	"math/big"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/dist/disttest"
	"github.com/joulelaw/joulelaw/radio/lora"
)

// TestSensitivity checks the floor formula against the receiver
// sensitivities commonly published for LoRa transceivers (common practice,
// from memory: about −137 dBm at SF12/125 kHz and −123 dBm at SF7/125 kHz,
// with the 6 dB noise figure common practice assumes) within 0.5 dB at SF12
// and 2 dB at SF7 (published figures are rounded and measured; the formula
// is idealised), and its own arithmetic exactly.
func TestSensitivity(t *testing.T) {
	s, err := lora.Sensitivity(12, 125e3, 6)
	require.NoError(t, err)
	assert.InDelta(t, -174+10*math.Log10(125e3)+6-20, s, 1e-12)
	assert.InDelta(t, -137, s, 0.5)
	s, err = lora.Sensitivity(7, 125e3, 6)
	require.NoError(t, err)
	assert.InDelta(t, -123, s, 2)
	for sf, want := range map[int]float64{7: -7.5, 8: -10, 9: -12.5, 10: -15, 11: -17.5, 12: -20} {
		got, err := lora.SNRThreshold(sf)
		require.NoError(t, err)
		assert.Equal(t, want, got, "SF%d (common practice)", sf)
	}
	_, err = lora.SNRThreshold(6)
	assert.ErrorIs(t, err, lora.ErrParam)
	_, err = lora.Sensitivity(7, 0, 6)
	assert.ErrorIs(t, err, lora.ErrParam)
	_, err = lora.Sensitivity(7, 125e3, -1)
	assert.ErrorIs(t, err, lora.ErrParam)
}

// testLink is an invented suburban scenario, used only as input to checks
// against outside oracles: nodes uniform over a 3.5 km disk, 128.95 dB at
// 1 km, exponent 3.5, 6 dB shadowing.
func testLink(t *testing.T, sigma float64) lora.Link {
	disk, err := lora.NewDisk(3500)
	require.NoError(t, err)
	return lora.Link{
		Distance:    disk,
		PathLoss:    lora.PathLoss{Reference: 128.95, RefDistance: 1000, Exponent: 3.5, Shadowing: sigma},
		GatewayGain: 3,
		NoiseFigure: 6,
		Margin:      10,
	}
}

// coverage is the share of a disk of radius R over which a log-distance
// loss with log-normal shadowing stays at or below t: the closed form of
// Jakes (Microwave Mobile Communications, 1974) for the fraction of useful
// service area, as given by Rappaport, Wireless Communications, 2nd ed.,
// §4.9.2 (from memory):
//
//	U = ½[1 − erf(a) + exp((1 − 2ab)/b²)·(1 − erf((1 − ab)/b))]
//	a = (PL(R) − t)/(σ√2),  b = 10·n·log10(e)/(σ√2)
func coverage(p lora.PathLoss, R, t float64) float64 {
	a := (p.Median(R) - t) / (p.Shadowing * math.Sqrt2)
	b := 10 * p.Exponent * math.Log10(math.E) / (p.Shadowing * math.Sqrt2)
	return 0.5 * (1 - math.Erf(a) + math.Exp((1-2*a*b)/(b*b))*(1-math.Erf((1-a*b)/b)))
}

// limit is the largest loss (dB) at which dr meets the margin at eirp.
func limit(t *testing.T, reg lora.Region, link lora.Link, dr int, eirp float64) float64 {
	d, err := reg.DataRate(dr)
	require.NoError(t, err)
	s, err := lora.Sensitivity(d.SF, d.Bandwidth, link.NoiseFigure)
	require.NoError(t, err)
	return eirp + link.GatewayGain - s - link.Margin
}

// TestSettleADRCoverage checks the quadrature against the closed-form
// coverage of a disk: the share of nodes at DR ≥ k (all powers) is the
// coverage at DR k's loss limit at full power, and the share out of reach is
// one minus the coverage at DR0's limit.
func TestSettleADRCoverage(t *testing.T) {
	eu := lora.EU868()
	for _, sigma := range []float64{2, 6, 10} {
		link := testLink(t, sigma)
		s, err := lora.SettleADR(eu, link, lora.ADRConfig{PowerSteps: 4})
		require.NoError(t, err)
		require.Less(t, s.ErrorBound(), 1e-9)
		set := s.Settings()
		require.Len(t, set, 5+4)
		for k := 0; k <= 5; k++ {
			atLeast := 0.0
			for _, c := range set {
				if c.DR >= k {
					atLeast += c.Prob
				}
			}
			want := coverage(link.PathLoss, 3500, limit(t, eu, link, k, 16))
			assert.InDelta(t, want, atLeast, s.ErrorBound()+1e-12, "σ=%g DR≥%d", sigma, k)
		}
		want := 1 - coverage(link.PathLoss, 3500, limit(t, eu, link, 0, 16))
		assert.InDelta(t, want, s.OutOfReach(), s.ErrorBound()+1e-12, "σ=%g out of reach", sigma)
		// Power steps at DR5: coverage differences at 16, 14, 12, 10 dBm.
		for j := 0; j < 3; j++ {
			want := coverage(link.PathLoss, 3500, limit(t, eu, link, 5, 16-2*float64(j))) -
				coverage(link.PathLoss, 3500, limit(t, eu, link, 5, 14-2*float64(j)))
			assert.InDelta(t, want, set[5+j].Prob, 2*s.ErrorBound()+1e-12, "σ=%g DR5 TXPower %d", sigma, j)
			assert.Equal(t, 5, set[5+j].DR)
			assert.Equal(t, j, set[5+j].TXPower)
		}
		total := s.OutOfReach()
		for _, c := range set {
			total += c.Prob
		}
		assert.InDelta(t, 1, total, 1e-9)
	}
}

// adrByRule applies the ADR rule to one node directly, from received powers
// (an independent restatement of the rule of SettleADR): the fastest data
// rate meeting the margin at full power, then at the fastest data rate the
// lowest power still meeting it. It returns −1 for a node out of reach.
func adrByRule(t *testing.T, reg lora.Region, link lora.Link, loss float64, drs []int, steps int) (dr, pow int) {
	for k := len(drs) - 1; k >= 0; k-- {
		d, err := reg.DataRate(drs[k])
		require.NoError(t, err)
		floor, _ := lora.Sensitivity(d.SF, d.Bandwidth, link.NoiseFigure)
		p0, _ := reg.TXPower(0)
		if p0+link.GatewayGain-loss-floor < link.Margin {
			continue
		}
		if k < len(drs)-1 {
			return drs[k], 0
		}
		pow = 0
		for j := 1; j < steps; j++ {
			pj, _ := reg.TXPower(j)
			if pj+link.GatewayGain-loss-floor >= link.Margin {
				pow = j
			}
		}
		return drs[k], pow
	}
	return -1, -1
}

// TestSettleADRMonteCarlo samples the geometry (distance, then shadowing)
// and applies the rule node by node; each outcome's count must lie within
// the binomial bounds at level 1e-6 (z = 4.9) of the computed law.
func TestSettleADRMonteCarlo(t *testing.T) {
	for _, tc := range []struct {
		name string
		reg  lora.Region
		link lora.Link
	}{
		{"EU disk", lora.EU868(), testLink(t, 6)},
		{"US annulus", lora.US915(), func() lora.Link {
			l := testLink(t, 8)
			l.Distance = lora.Annulus(must(lora.NewAnnulus(300, 2500)))
			return l
		}()},
		{"EU gamma distance", lora.EU868(), func() lora.Link {
			l := testLink(t, 4)
			l.Distance = dist.MustGamma(3, 3.0/1800) // mean 1.8 km
			return l
		}()},
	} {
		t.Run(tc.name, func(t *testing.T) {
			s, err := lora.SettleADR(tc.reg, tc.link, lora.ADRConfig{PowerSteps: 4})
			require.NoError(t, err)
			drs := tc.reg.ADRDataRates()
			const n = 200000
			r := rand.New(rand.NewPCG(6, 1))
			shadow := dist.MustNormal(0, tc.link.PathLoss.Shadowing)
			counts := map[[2]int]int{}
			for i := 0; i < n; i++ {
				d := tc.link.Distance.Rand(r)
				loss := tc.link.PathLoss.Median(d) + shadow.Rand(r)
				dr, p := adrByRule(t, tc.reg, tc.link, loss, drs, 4)
				counts[[2]int{dr, p}]++
			}
			check := func(name string, p float64, k int) {
				sd := math.Sqrt(n * p * (1 - p))
				assert.InDelta(t, n*p, float64(k), 4.9*sd+1, name)
			}
			check("out of reach", s.OutOfReach(), counts[[2]int{-1, -1}])
			for _, c := range s.Settings() {
				check(lora.Setting{DR: c.DR, TXPower: c.TXPower}.String(), c.Prob, counts[[2]int{c.DR, c.TXPower}])
			}
		})
	}
}

func must[T any](v T, err error) T {
	if err != nil {
		panic(err) // panic-ok: test helper
	}
	return v
}

// TestSettleADRExact checks the two exact paths: without shadowing the
// outcomes are rings of the disk, (r_hi² − r_lo²)/R², with the ring radii
// where the median loss meets each limit; with an atomic distance law the
// outcome probabilities are sums of normal-CDF differences.
func TestSettleADRExact(t *testing.T) {
	eu := lora.EU868()
	link := testLink(t, 0)
	s, err := lora.SettleADR(eu, link, lora.ADRConfig{PowerSteps: 1})
	require.NoError(t, err)
	assert.Zero(t, s.ErrorBound())
	radius := func(loss float64) float64 {
		return math.Min(1000*math.Pow(10, (loss-128.95)/35), 3500)
	}
	set := s.Settings()
	require.Len(t, set, 6)
	for k := 0; k <= 5; k++ {
		hi := radius(limit(t, eu, link, k, 16))
		lo := 0.0
		if k < 5 {
			lo = radius(limit(t, eu, link, k+1, 16))
		}
		assert.InDelta(t, (hi*hi-lo*lo)/(3500*3500), set[k].Prob, 1e-14, "DR%d", k)
	}
	r0 := radius(limit(t, eu, link, 0, 16))
	assert.InDelta(t, 1-r0*r0/(3500*3500), s.OutOfReach(), 1e-14)

	link = testLink(t, 6)
	link.Distance = dist.MustDiscrete([]float64{500, 1500, 2500}, []float64{0.2, 0.5, 0.3})
	s, err = lora.SettleADR(eu, link, lora.ADRConfig{PowerSteps: 1})
	require.NoError(t, err)
	phi := func(x float64) float64 { return dist.MustNormal(0, 6).CDF(x) }
	for k, c := range s.Settings() {
		want := 0.0
		for i, d := range []float64{500, 1500, 2500} {
			m := link.PathLoss.Median(d)
			hi := phi(limit(t, eu, link, k, 16) - m)
			lo := 0.0
			if k < 5 {
				lo = phi(limit(t, eu, link, k+1, 16) - m)
			}
			want += []float64{0.2, 0.5, 0.3}[i] * (hi - lo)
		}
		assert.InDelta(t, want, c.Prob, 1e-13, "DR%d", k)
	}
}

func TestSettleADRLaws(t *testing.T) {
	s, err := lora.SettleADR(lora.EU868(), testLink(t, 6), lora.ADRConfig{PowerSteps: 4})
	require.NoError(t, err)
	r, err := s.Reachable()
	require.NoError(t, err)
	sum := 0.0
	for _, c := range r {
		sum += c.Prob
	}
	assert.InDelta(t, 1, sum, 1e-12)
	law, err := s.DataRateLaw()
	require.NoError(t, err)
	lo, hi := law.Support()
	assert.GreaterOrEqual(t, lo, 0.0)
	assert.LessOrEqual(t, hi, 5.0)
	p5 := 0.0
	for _, c := range r {
		if c.DR == 5 {
			p5 += c.Prob
		}
	}
	assert.InDelta(t, p5, law.Survival(4.5), 1e-12)
}

func TestSettleADRErrors(t *testing.T) {
	eu := lora.EU868()
	good := testLink(t, 6)
	tests := []struct {
		name string
		reg  lora.Region
		link func() lora.Link
		cfg  lora.ADRConfig
	}{
		{"zero region", lora.Region{}, func() lora.Link { return good }, lora.ADRConfig{}},
		{"no distance", eu, func() lora.Link { l := good; l.Distance = nil; return l }, lora.ADRConfig{}},
		{"negative distance", eu, func() lora.Link { l := good; l.Distance = dist.MustNormal(1000, 10); return l }, lora.ADRConfig{}},
		{"bad exponent", eu, func() lora.Link { l := good; l.PathLoss.Exponent = 0; return l }, lora.ADRConfig{}},
		{"bad sigma", eu, func() lora.Link { l := good; l.PathLoss.Shadowing = -1; return l }, lora.ADRConfig{}},
		{"bad margin", eu, func() lora.Link { l := good; l.Margin = math.NaN(); return l }, lora.ADRConfig{}},
		{"bad NF", eu, func() lora.Link { l := good; l.NoiseFigure = -3; return l }, lora.ADRConfig{}},
		{"FSK DR", eu, func() lora.Link { return good }, lora.ADRConfig{DataRates: []int{0, 7}}},
		{"downlink DR", lora.US915(), func() lora.Link { return good }, lora.ADRConfig{DataRates: []int{0, 8}}},
		{"twice", eu, func() lora.Link { return good }, lora.ADRConfig{DataRates: []int{0, 0}}},
		{"power steps", eu, func() lora.Link { return good }, lora.ADRConfig{PowerSteps: 9}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			_, err := lora.SettleADR(tc.reg, tc.link(), tc.cfg)
			assert.ErrorIs(t, err, lora.ErrParam)
		})
	}
}

// TestAnnulus checks the distance law against its definition (area
// fractions of a uniform annulus) and its moments against the closed forms
// E r = (2/3)(R³−a³)/(R²−a²), E r² = (R²+a²)/2 (elementary calculus).
func TestAnnulus(t *testing.T) {
	a, err := lora.NewAnnulus(100, 1000)
	require.NoError(t, err)
	span := 1000.0*1000 - 100*100
	assert.InDelta(t, (500.0*500-100*100)/span, a.CDF(500), 1e-15)
	assert.InDelta(t, (1000.0*1000-500*500)/span, a.Survival(500), 1e-15)
	assert.InDelta(t, 2*500/span, a.Density(500), 1e-18)
	assert.InDelta(t, 500, a.Quantile(a.CDF(500)), 1e-9)
	q := 1e-12
	assert.InEpsilon(t, q, a.Survival(a.UpperQuantile(q)), 1e-3)
	assert.InDelta(t, 2.0/3*(1e9-1e6)/span, a.Mean(), 1e-9)
	assert.InDelta(t, (1e6+1e4)/2-a.Mean()*a.Mean(), a.Variance(), 1e-6)
	d, err := lora.NewDisk(30)
	require.NoError(t, err)
	assert.InDelta(t, 20, d.Mean(), 1e-13)
	assert.InDelta(t, 900.0/18, d.Variance(), 1e-12)
	assert.Equal(t, "Disk(30) m", d.String())
	assert.True(t, math.IsNaN(d.CDF(math.NaN())))
	assert.True(t, math.IsNaN(d.Quantile(1.5)))
	_, err = lora.NewAnnulus(10, 5)
	assert.ErrorIs(t, err, lora.ErrParam)
	_, err = lora.NewDisk(0)
	assert.ErrorIs(t, err, lora.ErrParam)
}

// TestAnnulusConformance runs the shared law checker on the distance laws,
// with the closed-form survival (R² − r²)/(R² − a²) as reference, evaluated
// in 200-bit arithmetic (math/big) so that the thin annulus keeps its
// digits.
func TestAnnulusConformance(t *testing.T) {
	for _, tc := range []struct{ inner, outer float64 }{{0, 3500}, {300, 2500}, {999, 1000}} {
		a := must(lora.NewAnnulus(tc.inner, tc.outer))
		ref := func(r float64) float64 {
			f := func(x float64) *big.Float { return new(big.Float).SetPrec(200).SetFloat64(x) }
			sq := func(x float64) *big.Float { return new(big.Float).SetPrec(200).Mul(f(x), f(x)) }
			num := new(big.Float).SetPrec(200).Sub(sq(tc.outer), sq(r))
			den := new(big.Float).SetPrec(200).Sub(sq(tc.outer), sq(tc.inner))
			v, _ := new(big.Float).SetPrec(200).Quo(num, den).Float64()
			return v
		}
		xs := []float64{tc.inner + (tc.outer-tc.inner)*0.1, (tc.inner + tc.outer) / 2, tc.outer - (tc.outer-tc.inner)*1e-6}
		assert.NoError(t, disttest.Check(a, disttest.WithSeed(6), disttest.WithReference(ref, xs, 1e-9)), "%v", a)
	}
}
