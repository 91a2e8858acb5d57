package lora

import (
	"errors"
	"fmt"
	"math"
	"sort"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/internal/quad"
)

// ThermalNoise is the thermal noise density at 290 K, in dBm/Hz (−174
// dBm/Hz, kT at room temperature; common practice).
const ThermalNoise = -174.0

// SNRThreshold returns the lowest SNR at which a LoRa receiver demodulates
// spreading factor sf, in dB: −7.5 dB at SF7, 2.5 dB lower for each step, to
// −20 dB at SF12 (Augustin et al., "A Study of LoRa", Sensors
// 16(9):1466, 2016, table of SNR limits per SF, from memory; common
// practice).
func SNRThreshold(sf int) (float64, error) {
	if sf < 7 || sf > 12 {
		return 0, paramErr("SNRThreshold", "sf", sf, "must be 7 … 12")
	}
	return -7.5 - 2.5*float64(sf-7), nil
}

// Sensitivity returns the demodulation floor of a receiver with the given
// noise figure (dB) at spreading factor sf and bandwidth (Hz), in dBm:
//
//	S = −174 dBm/Hz + 10·log10(BW) + NF + SNR(SF)
//
// (common practice). For SF12 at 125 kHz and a 6 dB noise figure it is
// −137.0 dBm.
func Sensitivity(sf int, bandwidth, noiseFigure float64) (float64, error) {
	snr, err := SNRThreshold(sf)
	if err != nil {
		return 0, err
	}
	if !finite(bandwidth) || bandwidth <= 0 {
		return 0, paramErr("Sensitivity", "bandwidth", bandwidth, "must be finite and > 0 Hz")
	}
	if !finite(noiseFigure) || noiseFigure < 0 {
		return 0, paramErr("Sensitivity", "noiseFigure", noiseFigure, "must be finite and >= 0 dB")
	}
	return ThermalNoise + 10*math.Log10(bandwidth) + noiseFigure + snr, nil
}

// PathLoss is a log-distance path-loss model with log-normal shadowing: the
// loss at distance d (m) is
//
//	PL(d) = Reference + 10·Exponent·log10(d / RefDistance) + X,  X ~ N(0, Shadowing²)
//
// in dB (Rappaport, Wireless Communications, 2nd ed., §4.9). The shadowing
// X is a property of the node's location: it is drawn once per node and
// stays, so ADR settles on it.
type PathLoss struct {
	Reference   float64 // median loss at RefDistance, dB
	RefDistance float64 // reference distance, m, > 0
	Exponent    float64 // path-loss exponent n, > 0
	Shadowing   float64 // standard deviation σ of the shadowing, dB, >= 0
}

// Validate returns an error wrapping ErrParam naming the first bad field, or nil.
func (p PathLoss) Validate() error {
	const fn = "PathLoss.Validate"
	switch {
	case !finite(p.Reference):
		return paramErr(fn, "Reference", p.Reference, "must be finite dB")
	case !finite(p.RefDistance) || p.RefDistance <= 0:
		return paramErr(fn, "RefDistance", p.RefDistance, "must be finite and > 0 m")
	case !finite(p.Exponent) || p.Exponent <= 0:
		return paramErr(fn, "Exponent", p.Exponent, "must be finite and > 0")
	case !finite(p.Shadowing) || p.Shadowing < 0:
		return paramErr(fn, "Shadowing", p.Shadowing, "must be finite and >= 0 dB")
	}
	return nil
}

// Median returns the median loss at distance d (m), in dB; −Inf at d = 0.
func (p PathLoss) Median(d float64) float64 {
	return p.Reference + 10*p.Exponent*math.Log10(d/p.RefDistance)
}

// distanceAt returns the distance (m) at which the median loss is loss (dB).
func (p PathLoss) distanceAt(loss float64) float64 {
	return p.RefDistance * math.Pow(10, (loss-p.Reference)/(10*p.Exponent))
}

// Link describes the uplinks of a population of nodes to one gateway: where
// the nodes are, how the signal fades, and what the gateway needs.
type Link struct {
	// Distance is the law of the distance from a node to the gateway, m;
	// its support must lie in [0, ∞). NewDisk and NewAnnulus give the
	// uniform placements.
	Distance dist.Law
	// PathLoss is the propagation model.
	PathLoss PathLoss
	// GatewayGain is the gateway antenna gain less its cable losses, dB
	// (the node's transmit power is an EIRP and already counts its antenna).
	GatewayGain float64
	// NoiseFigure is the gateway receiver's noise figure, dB, >= 0.
	NoiseFigure float64
	// Margin is the installation margin ADR keeps above the demodulation
	// floor, dB, >= 0 (network servers commonly use 10–15 dB).
	Margin float64
}

// ADRConfig restricts what ADR may choose.
type ADRConfig struct {
	// DataRates are the uplink data rates ADR may assign; nil means
	// Region.ADRDataRates(). Their demodulation floors must rise with the
	// data-rate index (faster data rates need more signal), as they do in
	// EU863-870 and US902-928.
	DataRates []int
	// PowerSteps is the number of TXPower indices, from 0 (the maximum), ADR
	// may use; 0 means all of the region's.
	PowerSteps int
}

// Setting is one (data rate, transmit power) pair with its probability.
type Setting struct {
	DR      int     // uplink data rate
	TXPower int     // TXPower index (0 = MaxEIRP)
	EIRP    float64 // transmit power, dBm EIRP
	Prob    float64 // probability, in [0, 1]
}

// String prints "DR5 TXPower 2 (12 dBm): 0.1234".
func (s Setting) String() string {
	return fmt.Sprintf("DR%d TXPower %d (%g dBm): %.6g", s.DR, s.TXPower, s.EIRP, s.Prob)
}

// Settled is the law of the data rate and transmit power that ADR settles on
// for a node drawn at random from a Link's population, with the share of
// nodes out of reach. It is an immutable value.
type Settled struct {
	settings []Setting // reachable nodes, unconditional probabilities
	out      float64   // P(out of reach)
	bound    float64   // absolute error bound on every probability
	method   string
}

// Settings returns the joint law of (data rate, TXPower) over all nodes:
// the probabilities sum to 1 − OutOfReach(). Rows are ordered by increasing
// data rate, then increasing TXPower index; every reachable combination ADR
// can choose has a row, possibly of probability 0.
func (s Settled) Settings() []Setting { return append([]Setting(nil), s.settings...) }

// OutOfReach returns the share of nodes whose link misses the margin even at
// the slowest data rate and full power (computed directly, accurate when
// small). ADR leaves such nodes at the slowest data rate and full power;
// most of their frames are lost.
func (s Settled) OutOfReach() float64 { return s.out }

// ErrorBound returns an absolute bound on the numerical error of every
// probability of Settings and OutOfReach (0 when computed exactly).
func (s Settled) ErrorBound() float64 { return s.bound }

// Method says how the law was computed.
func (s Settled) Method() string { return s.method }

// Reachable returns Settings conditioned on the node being in reach: the
// probabilities divided by 1 − OutOfReach so that they sum to 1. It fails,
// wrapping ErrParam, when no node is in reach.
func (s Settled) Reachable() ([]Setting, error) {
	total := 0.0
	for _, c := range s.settings {
		total += c.Prob
	}
	if !(total > 0) {
		return nil, paramErr("Settled.Reachable", "Settled", fmt.Sprintf("out of reach %g", s.out), "no node is in reach")
	}
	out := s.Settings()
	for i := range out {
		out[i].Prob /= total
	}
	return out, nil
}

// DataRateLaw returns the law of the data rate of a node in reach (values
// are DR indices).
func (s Settled) DataRateLaw() (dist.Discrete, error) {
	r, err := s.Reachable()
	if err != nil {
		return dist.Discrete{}, err
	}
	vals := make([]float64, len(r))
	probs := make([]float64, len(r))
	for i, c := range r {
		vals[i], probs[i] = float64(c.DR), c.Prob
	}
	return dist.NewDiscrete(vals, probs)
}

// adrCell is one outcome of the ADR rule: loss in (lo, hi] dB.
type adrCell struct {
	lo, hi float64
	set    Setting // Prob unused
}

// SettleADR returns the law of the (data rate, TXPower) that ADR settles on
// for a node of the link's population in region reg, and the share out of
// reach. The modelled rule (as in the rate-adaptation algorithm commonly
// run by network servers, from memory): a node whose path loss is L uses
// the fastest allowed data rate k whose surplus
//
//	EIRP(0) + GatewayGain − L − Sensitivity(k) ≥ Margin
//
// and, once at the fastest allowed data rate, the lowest allowed power that
// keeps the same inequality. Nodes that miss the margin at the slowest data
// rate and full power are out of reach. The shadowing makes L normal given
// the distance d, so each outcome has probability
//
//	∫ [Φ((t_hi − PL(d))/σ) − Φ((t_lo − PL(d))/σ)] dF(d)
//
// which is computed by globally adaptive Gauss–Kronrod quadrature over the
// distance quantile u = F(d) (to an absolute error bound of 1e-10 per
// outcome, reported by ErrorBound), exactly as a sum for a purely atomic
// distance law, and exactly from the distance CDF when σ = 0.
func SettleADR(reg Region, link Link, cfg ADRConfig) (Settled, error) {
	const fn = "SettleADR"
	if reg.t == nil {
		return Settled{}, errZeroRegion()
	}
	if link.Distance == nil {
		return Settled{}, paramErr(fn, "link.Distance", nil, "must be a distance law (m)")
	}
	if lo, _ := link.Distance.Support(); !(lo >= 0) {
		return Settled{}, paramErr(fn, "link.Distance", fmt.Sprintf("support from %g", lo), "must lie in [0, ∞) m")
	}
	if err := link.PathLoss.Validate(); err != nil {
		return Settled{}, fmt.Errorf("lora.%s: link.PathLoss: %w", fn, err)
	}
	if !finite(link.GatewayGain) {
		return Settled{}, paramErr(fn, "link.GatewayGain", link.GatewayGain, "must be finite dB")
	}
	if !finite(link.Margin) || link.Margin < 0 {
		return Settled{}, paramErr(fn, "link.Margin", link.Margin, "must be finite and >= 0 dB")
	}
	cells, err := adrCells(reg, link, cfg)
	if err != nil {
		return Settled{}, err
	}
	// Component 0: out of reach (loss above the first cell's upper end);
	// components 1…: the cells.
	top := cells[0].hi
	sigma := link.PathLoss.Shadowing
	probs := make([]float64, len(cells)+1)
	var bound float64
	method := ""
	if sigma == 0 {
		// Exact: L ≤ t ⟺ d ≤ distanceAt(t).
		F := link.Distance
		probs[0] = F.Survival(link.PathLoss.distanceAt(top))
		for i, c := range cells {
			hi := link.PathLoss.distanceAt(c.hi)
			if math.IsInf(c.lo, -1) {
				probs[i+1] = F.CDF(hi)
				continue
			}
			probs[i+1] = lawBetween(F, link.PathLoss.distanceAt(c.lo), hi)
		}
		method = "exact from the distance CDF (no shadowing)"
	} else {
		eval := func(d float64, dst []float64) {
			m := link.PathLoss.Median(d)
			if math.IsInf(m, -1) { // d = 0: the best cell surely
				clear(dst)
				dst[len(dst)-1] = 1
				return
			}
			dst[0] = normalAbove((top - m) / sigma)
			for i, c := range cells {
				dst[i+1] = normalBetween((c.lo-m)/sigma, (c.hi-m)/sigma)
			}
		}
		if atoms, ok := allAtoms(link.Distance); ok {
			buf := make([]float64, len(probs))
			for _, a := range atoms {
				eval(a.Value, buf)
				for j := range probs {
					probs[j] += a.Mass * buf[j]
				}
			}
			bound = 1e-15 * float64(len(atoms))
			method = "exact sum over the atoms of the distance law"
		} else {
			F := link.Distance
			f := func(u float64, dst []float64) { eval(F.Quantile(u), dst) }
			r, err := quad.AdaptiveVec(probs, f, 0, 1, quad.Options{AbsTol: 1e-10, MaxEvals: 60000})
			if errors.Is(err, quad.ErrParam) { // the distance law or the path loss gave NaN or ±Inf
				return Settled{}, fmt.Errorf("lora.%s: quadrature over the distance quantile: %w", fn, err)
			}
			// a spent budget keeps the result with its (larger) bound
			bound = r.Error + 1e-15
			method = "adaptive Gauss–Kronrod 7/15 over the distance quantile"
		}
	}
	s := Settled{out: clamp01(probs[0]), bound: bound, method: method}
	for i, c := range cells {
		set := c.set
		set.Prob = clamp01(probs[i+1])
		s.settings = append(s.settings, set)
	}
	sort.Slice(s.settings, func(i, j int) bool {
		a, b := s.settings[i], s.settings[j]
		if a.DR != b.DR {
			return a.DR < b.DR
		}
		return a.TXPower < b.TXPower
	})
	return s, nil
}

// adrCells returns the outcomes of the ADR rule as loss intervals, from the
// largest loss (slowest data rate) down.
func adrCells(reg Region, link Link, cfg ADRConfig) ([]adrCell, error) {
	const fn = "SettleADR"
	drs := cfg.DataRates
	if drs == nil {
		drs = reg.ADRDataRates()
	}
	if len(drs) == 0 {
		return nil, paramErr(fn, "cfg.DataRates", "[]", "must not be empty")
	}
	steps := cfg.PowerSteps
	if steps == 0 {
		steps = reg.TXPowerSteps()
	}
	if steps < 1 || steps > reg.TXPowerSteps() {
		return nil, paramErr(fn, "cfg.PowerSteps", cfg.PowerSteps, fmt.Sprintf("must be 0 … %d", reg.TXPowerSteps()))
	}
	if !finite(link.NoiseFigure) || link.NoiseFigure < 0 {
		return nil, paramErr(fn, "link.NoiseFigure", link.NoiseFigure, "must be finite and >= 0 dB")
	}
	sorted := append([]int(nil), drs...)
	sort.Ints(sorted)
	sens := make([]float64, len(sorted))
	for i, dr := range sorted {
		d, err := reg.UplinkDataRate(dr)
		if err != nil {
			return nil, err
		}
		if i > 0 && dr == sorted[i-1] {
			return nil, paramErr(fn, "cfg.DataRates", drs, fmt.Sprintf("DR%d is listed twice", dr))
		}
		sens[i], _ = Sensitivity(d.SF, d.Bandwidth, link.NoiseFigure)
		if i > 0 && sens[i] < sens[i-1] {
			return nil, paramErr(fn, "cfg.DataRates", drs,
				fmt.Sprintf("DR%d needs less signal than DR%d; the ADR model needs floors rising with the data rate", dr, sorted[i-1]))
		}
	}
	eirp := reg.TXPowers()[:steps]
	// Largest loss allowed at data rate i and power j.
	limit := func(i, j int) float64 { return eirp[j] + link.GatewayGain - sens[i] - link.Margin }
	var cells []adrCell
	last := len(sorted) - 1
	for i := 0; i < last; i++ {
		cells = append(cells, adrCell{lo: limit(i+1, 0), hi: limit(i, 0), set: Setting{DR: sorted[i], TXPower: 0, EIRP: eirp[0]}})
	}
	for j := 0; j < steps; j++ {
		lo := math.Inf(-1)
		if j+1 < steps {
			lo = limit(last, j+1)
		}
		cells = append(cells, adrCell{lo: lo, hi: limit(last, j), set: Setting{DR: sorted[last], TXPower: j, EIRP: eirp[j]}})
	}
	return cells, nil
}

// allAtoms returns the atoms of l when they carry all its mass.
func allAtoms(l dist.Law) ([]dist.Atom, bool) {
	a, ok := l.(dist.Atomic)
	if !ok {
		return nil, false
	}
	atoms := a.Atoms()
	sum := 0.0
	for _, x := range atoms {
		sum += x.Mass
	}
	return atoms, len(atoms) > 0 && math.Abs(sum-1) <= 1e-12
}

// lawBetween returns P(a < X ≤ b) for a ≤ b, from the nearer tail.
func lawBetween(l dist.Law, a, b float64) float64 {
	if b <= a {
		return 0
	}
	if l.CDF(a) > 0.5 {
		return max(l.Survival(a)-l.Survival(b), 0)
	}
	return max(l.CDF(b)-l.CDF(a), 0)
}

// normalAbove returns P(Z > z) for a standard normal Z, by erfc.
func normalAbove(z float64) float64 { return 0.5 * math.Erfc(z/math.Sqrt2) }

// normalBetween returns P(a < Z ≤ b) for a standard normal Z and a ≤ b,
// from the nearer tail so that small cells keep their relative precision.
func normalBetween(a, b float64) float64 {
	switch {
	case b <= a:
		return 0
	case a >= 0:
		return max(normalAbove(a)-normalAbove(b), 0)
	case b <= 0:
		return max(normalAbove(-b)-normalAbove(-a), 0)
	}
	return max(1-normalAbove(b)-normalAbove(-a), 0)
}

func clamp01(p float64) float64 { return min(max(p, 0), 1) }
