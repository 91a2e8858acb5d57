package dist

import (
	"fmt"
	"math"
)

// EqualTailed returns the interval [lo, hi] that leaves probability
// (1-level)/2 in each tail: lo = Quantile((1-level)/2) and
// hi = UpperQuantile((1-level)/2). level must be in (0, 1). lo <= hi always
// (see ordered).
func EqualTailed(l Law, level float64) (lo, hi float64, err error) {
	if l == nil {
		return 0, 0, paramErr("EqualTailed", "l", nil, "must not be nil")
	}
	if !(level > 0 && level < 1) {
		return 0, 0, paramErr("EqualTailed", "level", level, "must be in (0, 1)")
	}
	a := (1 - level) / 2
	lo, hi = ordered(l.Quantile(a), l.UpperQuantile(a))
	return lo, hi, nil
}

// ordered returns lo, hi, or their midpoint twice when a level so small
// that the two ends are one point (1e-300, say) lets their separately
// rounded values cross: an interval never has lo > hi.
func ordered(lo, hi float64) (float64, float64) {
	if lo > hi {
		m := lo/2 + hi/2
		return m, m
	}
	return lo, hi
}

// MinHighestDensityLevel is the smallest level HighestDensity takes: the
// widths it compares are about level/density, each end rounded to about
// 1e-16 of its value, so below it the differences between candidate
// intervals drown in rounding (at 1e-300 any quantile gave an "interval" of
// width zero, and its ends crossed).
const MinHighestDensityLevel = 1e-9

// HighestDensity returns the shortest interval [Quantile(p),
// Quantile(p+level)] over p in [0, 1-level]: for a unimodal law it is the
// highest-density interval at the given level. The search is a grid over p
// refined by golden-section search, to a relative tolerance in p of 1e-10;
// for a multimodal law it returns the shortest single interval found. level
// must be in [MinHighestDensityLevel, 1); lo <= hi always.
func HighestDensity(l Law, level float64) (lo, hi float64, err error) {
	if l == nil {
		return 0, 0, paramErr("HighestDensity", "l", nil, "must not be nil")
	}
	if !(level >= MinHighestDensityLevel && level < 1) {
		return 0, 0, paramErr("HighestDensity", "level", level, fmt.Sprintf("must be in [%g, 1) (MinHighestDensityLevel)", MinHighestDensityLevel))
	}
	rest := 1 - level
	ends := func(p float64) (float64, float64) {
		return l.Quantile(p), l.UpperQuantile(rest - p)
	}
	width := func(p float64) float64 {
		a, b := ends(p)
		return b - a
	}
	const grid = 64
	best, bestW := 0.0, math.Inf(1)
	for i := 0; i <= grid; i++ {
		p := rest * float64(i) / grid
		if w := width(p); w < bestW {
			best, bestW = p, w
		}
	}
	a := max(0, best-rest/grid)
	b := min(rest, best+rest/grid)
	const g = 0.6180339887498949
	c, d := b-g*(b-a), a+g*(b-a)
	wc, wd := width(c), width(d)
	for i := 0; i < 200 && b-a > 1e-10*rest; i++ {
		if wc <= wd {
			b, d, wd = d, c, wc
			c = b - g*(b-a)
			wc = width(c)
		} else {
			a, c, wc = c, d, wd
			d = a + g*(b-a)
			wd = width(d)
		}
	}
	for _, p := range []float64{c, d} {
		if w := width(p); w < bestW {
			best, bestW = p, w
		}
	}
	lo, hi = ordered(ends(best))
	return lo, hi, nil
}
