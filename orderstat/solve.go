package orderstat

import "github.com/joulelaw/joulelaw/internal/root"

// solve returns inf{x in [a, b] : h(x) >= 0} to floating-point resolution
// (four units in the last place), for h nondecreasing with h(a) < 0 <= h(b).
// ha and hb are h(a) and h(b). It is the library's one root finder
// (internal/root: Illinois regula falsi, Dowell & Jarratt 1971, BIT
// 11:168–174, falling back to bisection when a value is infinite or the
// bracket fails to halve in three steps), so it needs at most about four
// times the steps of bisection and usually far fewer.
func solve(h func(float64) float64, a, b, ha, hb float64) float64 {
	return root.Illinois(h, a, b, ha, hb, 0)
}

// epsilon is the float64 machine epsilon, 2^-52.
const epsilon = 0x1p-52
