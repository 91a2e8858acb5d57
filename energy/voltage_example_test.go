package energy_test

import (
	"fmt"

	"github.com/joulelaw/joulelaw/energy"
)

// The share of a typical bobbin cell's capacity a node can use before its
// 2.8 V brown-out under its transmit pulse, at room temperature and in the
// cold (planning figures from memory; use your cell's data sheet).
func ExampleVoltageCurve_UsableFraction() {
	v := energy.TypicalBobbinCurve()
	for _, pulse := range []float64{10 * energy.MilliAmp, 40 * energy.MilliAmp, 100 * energy.MilliAmp} {
		for _, t := range []float64{20, -20} {
			u, err := v.UsableFraction(pulse, t, 2.8)
			if err != nil {
				fmt.Println(err)
				return
			}
			fmt.Printf("pulse %3.0f mA at %3.0f °C: %5.1f %% usable\n", pulse/energy.MilliAmp, t, 100*u)
		}
	}
	// Output:
	// pulse  10 mA at  20 °C:  96.4 % usable
	// pulse  10 mA at -20 °C:  92.8 % usable
	// pulse  40 mA at  20 °C:  91.3 % usable
	// pulse  40 mA at -20 °C:  59.0 % usable
	// pulse 100 mA at  20 °C:  71.2 % usable
	// pulse 100 mA at -20 °C:   0.0 % usable
}
