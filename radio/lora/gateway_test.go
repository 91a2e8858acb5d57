package lora_test

import (
	"math"
	"math/rand/v2"
	"sort"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/stat/distuv"

	"github.com/joulelaw/joulelaw/radio/lora"
)

// One stream, or several of one band and lead: the gateway is a loss
// system with one server holding each answer for Airtime/d, so the share
// sent is 1/(1 + ρ), ρ = Σ Rate·Airtime/d, whatever the airtimes (Erlang's
// loss formula with one server and its insensitivity to the holding-time
// law; Kleinrock, Queueing Systems vol. 1, 1975: the M/M/m/m system and
// the remark that its loss formula holds for any service-time law).
func TestGatewayDownlinksLossFormula(t *testing.T) {
	for _, rho := range []float64{0, 0.01, 0.5, 1, 5, 50} {
		b, err := lora.GatewayDownlinks([]lora.DownlinkStream{{Rate: rho * 0.01 / 0.2, Airtime: 0.2, Lead: 1, Band: 2, DutyCycle: 0.01}})
		require.NoError(t, err)
		assert.InDelta(t, 1/(1+rho), b.Sent[0], 1e-13, "ρ = %g", rho)
		assert.LessOrEqual(t, b.Error, 1e-13)
		require.Len(t, b.Bands, 1)
		assert.InDelta(t, rho*0.01, b.Bands[0].Offered, 1e-15)
		assert.InDelta(t, 0.01*rho/(1+rho), b.Bands[0].Used, 1e-15, "used share stays below d")
		assert.Equal(t, rho > 1, b.Bands[0].Over())
	}
	// Two airtimes in one pool: ρ = 0.3 + 2.2.
	b, err := lora.GatewayDownlinks([]lora.DownlinkStream{
		{Rate: 0.3 * 0.1 / 0.05, Airtime: 0.05, Lead: 1, DutyCycle: 0.1},
		{Rate: 2.2 * 0.1 / 1.3, Airtime: 1.3, Lead: 1, DutyCycle: 0.1},
	})
	require.NoError(t, err)
	assert.InDelta(t, 1/3.5, b.Sent[0], 1e-13)
	assert.InDelta(t, 1/3.5, b.Sent[1], 1e-13)
}

func TestGatewayDownlinksErrors(t *testing.T) {
	ok := lora.DownlinkStream{Rate: 1, Airtime: 0.1, Lead: 1, DutyCycle: 0.01}
	for _, mod := range []func(s *lora.DownlinkStream){
		func(s *lora.DownlinkStream) { s.Rate = -1 },
		func(s *lora.DownlinkStream) { s.Rate = math.Inf(1) },
		func(s *lora.DownlinkStream) { s.Airtime = 0 },
		func(s *lora.DownlinkStream) { s.Lead = math.NaN() },
		func(s *lora.DownlinkStream) { s.DutyCycle = 0 },
		func(s *lora.DownlinkStream) { s.DutyCycle = 1.5 },
	} {
		s := ok
		mod(&s)
		_, err := lora.GatewayDownlinks([]lora.DownlinkStream{s})
		assert.ErrorIs(t, err, lora.ErrParam, "%+v", s)
	}
	other := ok
	other.DutyCycle = 0.1
	_, err := lora.GatewayDownlinks([]lora.DownlinkStream{ok, other})
	assert.ErrorIs(t, err, lora.ErrParam, "one band, two limits")
	_, err = lora.GatewayDownlinks(make([]lora.DownlinkStream, lora.MaxDownlinkStreams+1))
	assert.ErrorIs(t, err, lora.ErrParam)
	b, err := lora.GatewayDownlinks(nil)
	require.NoError(t, err)
	assert.Empty(t, b.Sent)
}

// bookingSim plays the gateway's booking rules directly (independently of
// GatewayDownlinks): Poisson bookings per stream; an answer is sent unless
// it overlaps on the transmitter, or within its band on the closed time
// Airtime/d after a start, an answer booked and sent before it; a refused
// answer of a stream with a Fallback is booked at once with the stream it
// names, by the same rules. It returns, per stream and for each of batches
// consecutive stretches, the share of its own answers sent in its window
// and the share sent in its fallback's.
func bookingSim(r *rand.Rand, streams []lora.DownlinkStream, horizon float64, batches int) (ok, fell [][]float64) {
	type booking struct {
		t float64
		i int
	}
	var bs []booking
	for i, s := range streams {
		if s.Rate == 0 {
			continue
		}
		for t := r.ExpFloat64() / s.Rate; t < horizon; t += r.ExpFloat64() / s.Rate {
			bs = append(bs, booking{t, i})
		}
	}
	sort.Slice(bs, func(a, b int) bool { return bs[a].t < bs[b].t })
	type tx struct {
		start, end, closed float64
		band               int
	}
	var sent []tx
	minLead := math.Inf(1)
	for _, s := range streams {
		minLead = math.Min(minLead, s.Lead)
	}
	grid := func() [][]float64 {
		g := make([][]float64, len(streams))
		for i := range g {
			g[i] = make([]float64, batches)
		}
		return g
	}
	booked := grid()
	ok, fell = grid(), grid()
	try := func(t float64, i int) bool {
		s := streams[i]
		start := t + s.Lead
		x := tx{start: start, end: start + s.Airtime, closed: start + s.Airtime/s.DutyCycle, band: s.Band}
		for _, y := range sent {
			if x.start < y.end && y.start < x.end || x.band == y.band && x.start < y.closed && y.start < x.closed {
				return false
			}
		}
		sent = append(sent, x)
		return true
	}
	for _, b := range bs {
		keep := sent[:0]
		for _, y := range sent { // drop what can no longer conflict
			if math.Max(y.end, y.closed) > b.t+minLead {
				keep = append(keep, y)
			}
		}
		sent = keep
		k := int(b.t / horizon * float64(batches))
		booked[b.i][k]++
		if try(b.t, b.i) {
			ok[b.i][k]++
		} else if f := streams[b.i].Fallback; f != 0 && try(b.t, f-1) {
			fell[b.i][k]++
		}
	}
	for i := range ok {
		for k := range ok[i] {
			ok[i][k] /= booked[i][k]
			fell[i][k] /= booked[i][k]
		}
	}
	return ok, fell
}

// TestGatewayDownlinksAgainstBookings compares GatewayDownlinks with the
// booking rules played out, at several loads, for a European gateway (RX1
// in the 1 % sub-band of 868.0–868.6 MHz after 1 s, answers of two
// lengths; RX2 at 869.525 MHz, 10 %, after 2 s: ERC Rec. 70-03 Annex 1) and
// a US902-928 one (no duty cycle: the transmitter alone). Each stream's
// share sent is the mean of 200 batch shares (batches far longer than any
// holding time, so nearly independent); the tolerance is Student's t at
// two-sided level 1e-6 (gonum) times the batches' standard error, plus the
// Error that GatewayDownlinks states.
func TestGatewayDownlinksAgainstBookings(t *testing.T) {
	const batches = 200
	tq := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: batches - 1}.Quantile(1 - 5e-7)
	cases := gatewayCases(false)
	r := rand.New(rand.NewPCG(7, 23))
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			b, err := lora.GatewayDownlinks(tc.streams)
			require.NoError(t, err)
			shares, _ := bookingSim(r, tc.streams, tc.horizon, batches)
			for i, xs := range shares {
				mean, sd := meanSD(xs)
				tol := tq*sd/math.Sqrt(batches) + b.Error
				assert.InDelta(t, b.Sent[i], mean, tol, "stream %d: analytic %.4f, sampled %.4f ± %.4f (stated error %.2g)", i, b.Sent[i], mean, tol, b.Error)
				if b.Sent[i] < 0.9 {
					// The check has power: a gateway without limits (all sent) fails it.
					assert.Greater(t, 1-mean, tol, "stream %d", i)
				}
				t.Logf("%s stream %d: analytic %.4f, sampled %.4f, tolerance %.4f (stated error %.2g)", tc.name, i, b.Sent[i], mean, tol, b.Error)
			}
		})
	}
}

func meanSD(xs []float64) (mean, sd float64) {
	for _, x := range xs {
		mean += x
	}
	mean /= float64(len(xs))
	for _, x := range xs {
		sd += (x - mean) * (x - mean)
	}
	return mean, math.Sqrt(sd / float64(len(xs)-1))
}

// TestGatewayDownlinksFallback: answers refused in RX1 are booked in RX2
// (the network server's fallback). The model (Sent, FallbackSent, Booked)
// against the booking rules played out (bookingSim, which moves a refused
// answer to its fallback stream at once), at several loads, for a European
// gateway (RX1 in the 1 % sub-band after 1 s, RX2 at 869.525 MHz, 10 %,
// after 2 s: ERC Rec. 70-03 Annex 1) and a US902-928 one (the transmitter
// alone); the tolerance is Student's t at two-sided level 1e-6 (gonum)
// over 200 batch shares plus the stated Error. Without a fallback the
// same answers are lost: the check has power where FallbackSent is large.
func TestGatewayDownlinksFallback(t *testing.T) {
	const batches = 200
	tq := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: batches - 1}.Quantile(1 - 5e-7)
	cases := gatewayCases(true)
	r := rand.New(rand.NewPCG(11, 29))
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			b, err := lora.GatewayDownlinks(tc.streams)
			require.NoError(t, err)
			ok, fell := bookingSim(r, tc.streams, tc.horizon, batches)
			for i, st := range tc.streams {
				mean, sd := meanSD(ok[i])
				tol := tq*sd/math.Sqrt(batches) + b.Error
				assert.InDelta(t, b.Sent[i], mean, tol, "stream %d sent: analytic %.4f, sampled %.4f", i, b.Sent[i], mean)
				t.Logf("%s stream %d: sent analytic %.4f, sampled %.4f, tolerance %.4f (stated error %.2g)", tc.name, i, b.Sent[i], mean, tol, b.Error)
				if st.Fallback == 0 {
					assert.Zero(t, b.FallbackSent[i])
					continue
				}
				fm, fsd := meanSD(fell[i])
				ftol := tq*fsd/math.Sqrt(batches) + b.FallbackError
				assert.InDelta(t, b.FallbackSent[i], fm, ftol, "stream %d fallback", i)
				assert.LessOrEqual(t, b.FallbackSent[i], 1-b.Sent[i])
				if b.FallbackSent[i] > 2*ftol {
					assert.Greater(t, fm, ftol, "stream %d: a model that loses refused answers would pass", i)
				}
				t.Logf("%s stream %d: sent in the fallback, analytic %.4f, sampled %.4f, tolerance %.4f (stated error %.2g)", tc.name, i, b.FallbackSent[i], fm, ftol, b.FallbackError)
			}
			// Booked: the fallback stream takes the others' refusals.
			for y := range tc.streams {
				want := tc.streams[y].Rate
				for x, sx := range tc.streams {
					if sx.Fallback == y+1 {
						want += sx.Rate * (1 - b.Sent[x])
					}
				}
				assert.InDelta(t, want, b.Booked[y], 1e-12*want+1e-300)
			}
		})
	}
	// Bad fallbacks: out of range, itself, a chain.
	for _, f := range [][2]int{{3, 0}, {-1, 0}, {1, 0}, {2, 1}} {
		st := gatewayCases(true)[4].streams
		st[0].Fallback, st[1].Fallback = f[0], f[1]
		_, err := lora.GatewayDownlinks(st)
		assert.ErrorIs(t, err, lora.ErrParam, "fallbacks %v", f)
	}
}

// gatewayCase is one load of a gateway's answer streams for the tests
// against the booking rules.
type gatewayCase struct {
	name    string
	streams []lora.DownlinkStream
	horizon float64 // s of bookings played
}

// gatewayCases are six loads: a European gateway (RX1 in the 1 % sub-band
// of 868.0–868.6 MHz after 1 s, answers of two lengths; RX2 at 869.525 MHz,
// 10 %, after 2 s: ERC Rec. 70-03 Annex 1) and a US902-928 one (no duty
// cycle: the transmitter alone), each light, busy and far over. With
// fallback the RX1 streams fall back to RX2 (whose own share is then
// smaller).
func gatewayCases(fallback bool) []gatewayCase {
	f1, f2, rx2 := 0, 0, []float64{0.02, 0.5}
	if fallback {
		f1, f2, rx2 = 3, 2, []float64{0.005, 0.2}
	}
	eu := func(scale float64) []lora.DownlinkStream {
		return []lora.DownlinkStream{
			{Rate: scale * 0.02, Airtime: 0.06, Lead: 1, Band: 2, DutyCycle: 0.01, Fallback: f1},
			{Rate: scale * 0.01, Airtime: 0.4, Lead: 1, Band: 2, DutyCycle: 0.01, Fallback: f1},
			{Rate: scale * rx2[0], Airtime: 1.2, Lead: 2, Band: 4, DutyCycle: 0.1},
		}
	}
	us := func(scale float64) []lora.DownlinkStream {
		return []lora.DownlinkStream{
			{Rate: scale * 1, Airtime: 0.03, Lead: 1, Band: -1, DutyCycle: 1, Fallback: f2},
			{Rate: scale * rx2[1], Airtime: 0.2, Lead: 2, Band: -1, DutyCycle: 1},
		}
	}
	return []gatewayCase{
		{"EU light", eu(0.1), 4e6},
		{"EU at the limit", eu(1), 1e6},
		{"EU ten times over", eu(10), 4e5},
		{"US light", us(0.1), 2e5},
		{"US busy", us(1), 4e4},
		{"US saturated", us(4), 2e4},
	}
}
