package orderstat

import "math"

// solve returns inf{x in [a, b] : h(x) >= 0} to floating-point resolution
// (four units in the last place), for h nondecreasing with h(a) < 0 <= h(b).
// ha and hb are h(a) and h(b). It uses the Illinois variant of regula falsi
// (Dowell & Jarratt 1971, BIT 11:168–174), falling back to bisection when a
// value is infinite or the bracket fails to halve in three steps, so it
// needs at most about three times the steps of bisection and usually far
// fewer.
func solve(h func(float64) float64, a, b, ha, hb float64) float64 {
	side := 0
	width := b - a
	stale := 0
	for iter := 0; iter < 400; iter++ {
		if b-a <= 4*epsilon*math.Max(math.Abs(a), math.Abs(b)) || b-a <= math.SmallestNonzeroFloat64*4 {
			break
		}
		m := a + (b-a)/2
		if stale < 3 && finite(ha) && finite(hb) && hb > ha {
			s := b - hb*((b-a)/(hb-ha))
			if s > a && s < b {
				m = s
			}
		}
		if m <= a || m >= b {
			break
		}
		hm := h(m)
		if math.IsNaN(hm) {
			hm = -math.Inf(1) // treat as "not yet": keeps the search inside [a, b]
		}
		if hm >= 0 {
			b, hb = m, hm
			if side == 1 {
				ha /= 2
			}
			side = 1
		} else {
			a, ha = m, hm
			if side == -1 {
				hb /= 2
			}
			side = -1
		}
		if b-a <= width/2 {
			width = b - a
			stale = 0
		} else {
			stale++ // after three slow steps the next one bisects
		}
	}
	return b
}

// epsilon is the float64 machine epsilon, 2^-52.
const epsilon = 0x1p-52
