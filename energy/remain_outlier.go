package energy

import (
	"math"

	"github.com/joulelaw/joulelaw/dist"
)

// OutlierTest says how improbable a device's observations are under its
// group's model (the DeviceModel's NodeSpec: its settings' shares, its
// per-node spreads, its cell). Each field is a p-value: the probability
// that a device drawn from the group shows something at least as extreme.
// Flagging a device when P <= level has a false-alarm rate of at most
// level per device and check under the model (the two tests are combined
// by Bonferroni's rule, which needs no independence).
type OutlierTest struct {
	// Activity is the upper-tail p-value of the device's recent counted
	// energy (the Tally's exponentially weighted sum of event counts ×
	// their mean costs, time constant DeviceOptions.Memory, at its newest
	// event) against its own long-run rate: under steady traffic its mean is
	// r·X and its variance about v·Y, with r the counted energy over the
	// cell's age, v = Σ_k n_k·e_k² over the age the variance rate of
	// counts n_k of kinds costing e_k (independent, Poisson-like counts;
	// periodic reports vary less, so the test is conservative for them),
	// X = ∫w and Y = ∫w² the weights' exposure; the score is normal.
	// Low when the device has lately done much more of what the back-end
	// counts than it used to: a retransmission loop, a fall to a slow data
	// rate, a burst of rejoins. A device that has behaved so since its
	// cell was installed is not flagged by this test (its readings may
	// flag it); a device whose group plans data rates of very different
	// costs is not compared with them (its placement is its own).
	Activity float64
	// Reading is the two-sided p-value of the newest kept reading given
	// the group's prior, the energy the device was counted to spend by
	// then and its being alive at its newest event (not its older
	// readings: a device that has always drawn too much would explain its
	// newest reading by its older ones). Its predictive law is the mixture
	// over the prior's nodes, weighted by being alive, of the reading
	// model (the loaded voltage plus the reading's normal error); the
	// p-value is twice the smaller of the predictive probabilities of
	// reading at or below the reported bin and at or above it
	// (conservative for a binned reading). Low when the cell's voltage has
	// fallen (or stayed up) against what the counted energy and the
	// group's spreads allow: a failing sensor or board drawing more than
	// its floor, a weak cell. 1 without readings. It is a sum over the
	// model's nodes: below about 1/Nodes its relative error can be large,
	// far below any useful level.
	Reading float64
	// P = min(1, 2·min(Activity, Reading)), or the one available.
	P float64
	// Z is the score of P: the standard normal quantile Φ̄⁻¹(P/2), how
	// many standard deviations away a two-sided normal statistic would
	// have to be (0 for P = 1).
	Z float64
}

// Flag reports whether the device is an outlier at level (a false-alarm
// rate in (0, 1)): P <= level.
func (o OutlierTest) Flag(level float64) bool { return o.P <= level }

// Outlier tests the device's observations against its group's model at
// now (see OutlierTest). The time and tally rules are Posterior's; a
// device on external power is refused. Errors wrap ErrParam.
func (m DeviceModel) Outlier(t Tally, now float64) (OutlierTest, error) {
	const fn = "DeviceModel.Outlier"
	if err := m.checkUse(fn, t, now); err != nil {
		return OutlierTest{}, err
	}
	d := m.d
	o := OutlierTest{Activity: d.activityP(&t), Reading: 1}
	if t.nRead > 0 {
		p, err := m.readingP(t, now)
		if err != nil {
			return OutlierTest{}, err
		}
		o.Reading = p
	}
	o.P = min(1, 2*min(o.Activity, o.Reading))
	if t.nRead == 0 {
		o.P = o.Activity
	}
	if o.P < 1 {
		o.Z = normUpperQuantile(o.P / 2)
	}
	return o, nil
}

// normUpperQuantile returns z with Φ̄(z) = q, q in [0, 1] (accurate for
// tiny q: dist's normal upper quantile).
func normUpperQuantile(q float64) float64 {
	return dist.MustNormal(0, 1).UpperQuantile(q)
}

// activityP returns the upper-tail p-value of the tally's weighted
// recent counted energy at its newest event against the device's own
// long-run rate.
func (d *deviceData) activityP(t *Tally) float64 {
	// Everything at the newest count (ewAt): the time after it holds no
	// counts yet; the weighted sums and their exposure, each gap credited
	// at its end as its counts are.
	age := t.ewAt - t.install
	if !(age > 0) || t.events == 0 {
		return 1
	}
	e, x, y := t.ewE, t.ewX, t.ewY
	v := 0.0
	for k, c := range d.costs {
		v += float64(t.counts[k]) * c.mean * c.mean
	}
	v /= age
	mean := t.active / age * x
	sd := math.Sqrt(v * y)
	switch {
	case sd > 0:
		return normSurv((e - mean) / sd)
	case e > mean:
		return 0
	}
	return 1
}

// readingP returns the two-sided predictive p-value of the tally's newest
// reading given its counted energy and being alive.
func (m DeviceModel) readingP(t Tally, now float64) (float64, error) {
	d := m.d
	newest := (t.next - 1 + MaxReadings) % MaxReadings
	r := t.reads[newest]
	rest := t
	rest.nRead, rest.next = 0, 0 // the evidence without readings
	post, err := m.Posterior(rest, now)
	if err != nil {
		return 0, err
	}
	pd := post.p
	n := d.n
	fe, q, sdd := d.floorE(r.tau), n.quiescent*r.tau, d.selfD(r.tau)
	drop := d.load * d.curve.ResistanceMultiplier(d.temp(r.tau))
	below, above := 0.0, 0.0 // P(reading < hi), P(reading >= lo)
	for k, w := range pd.w {
		if w == 0 {
			continue // a node without weight (its factors may not be valid)
		}
		dep := (pd.a[k]*r.active+pd.f[k]*fe+q)/(pd.c[k]*n.nominal) + sdd
		dep = min(1, max(0, dep))
		v := d.curve.loadedAt(dep, drop)
		if !math.IsInf(r.hi, 1) {
			below += w * normSurv((v-r.hi)/r.noise)
		} else {
			below += w
		}
		if !math.IsInf(r.lo, -1) {
			above += w * normSurv((r.lo-v)/r.noise)
		} else {
			above += w
		}
	}
	return min(1, 2*min(below, above)), nil
}
