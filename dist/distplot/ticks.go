package distplot

import (
	"fmt"
	"math"
	"strconv"

	"gonum.org/v1/plot"
)

// RoundTicks is a plot.Ticker that puts labelled ticks at round steps (1, 2
// or 5 times a power of ten, common practice for chart axes) giving 3 to 9
// labels, with an unlabelled tick halfway between, and labels in plain
// decimals without trailing zeros ("0, 5, 10" rather than "0.00, 5.00,
// 10.00").
type RoundTicks struct{}

// Ticks implements plot.Ticker.
func (RoundTicks) Ticks(lo, hi float64) []plot.Tick {
	if !(hi > lo) || math.IsInf(lo, 0) || math.IsInf(hi, 0) {
		return nil
	}
	step := roundStep((hi - lo) / 8)
	var ticks []plot.Tick
	for k := math.Ceil(lo / step * 2); k <= math.Floor(hi/step*2); k++ {
		x := k * step / 2
		if math.Mod(k, 2) != 0 {
			ticks = append(ticks, plot.Tick{Value: x})
			continue
		}
		ticks = append(ticks, plot.Tick{Value: x, Label: strconv.FormatFloat(roundTo(x, step), 'f', -1, 64)})
	}
	return ticks
}

// DecadeTicks is a plot.Ticker for a logarithmic axis that labels each
// power of ten: plain decimals down to 0.001, then 1e-4, 1e-5, ….
type DecadeTicks struct{}

// Ticks implements plot.Ticker.
func (DecadeTicks) Ticks(lo, hi float64) []plot.Tick {
	if !(lo > 0) || !(hi > lo) || math.IsInf(hi, 0) {
		return nil
	}
	var ticks []plot.Tick
	for k := math.Ceil(math.Log10(lo) - 1e-9); k <= math.Floor(math.Log10(hi)+1e-9); k++ {
		label := fmt.Sprintf("1e%d", int(k))
		if k >= -3 {
			label = strconv.FormatFloat(math.Pow(10, k), 'f', -1, 64)
		}
		ticks = append(ticks, plot.Tick{Value: math.Pow(10, k), Label: label})
	}
	return ticks
}

// roundStep returns the smallest of 1, 2 and 5 times a power of ten that is
// at least x (> 0).
func roundStep(x float64) float64 {
	p := math.Pow(10, math.Floor(math.Log10(x)))
	for _, m := range []float64{1, 2, 5, 10} {
		if m*p >= x*(1-1e-12) {
			return m * p
		}
	}
	return 10 * p
}

// roundTo rounds x to a multiple of step's decimal digits, so that
// 0.30000000000000004 prints as 0.3.
func roundTo(x, step float64) float64 {
	d := max(0, -math.Floor(math.Log10(step))+1)
	f := math.Pow(10, d)
	return math.Round(x*f) / f
}
