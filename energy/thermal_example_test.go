package energy_test

import (
	"fmt"

	"github.com/joulelaw/joulelaw/energy"
)

// Month by month, how much faster a typical bobbin cell self-discharges and
// how much more a board's sleep current draws than at 20 °C, and what
// capacity the cell delivers, over a seasonal year with a 10 °C daily
// range (invented site; the cell's figures are planning values from
// TypicalThermal).
func ExampleThermal() {
	th := energy.TypicalThermal()
	c, err := energy.NewSeasonalClimate(10, 12, 6, 10)
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, m := range []int{0, 3, 6} {
		t := c.Month(m)
		capacity, err := th.CapacityFactor(t)
		if err != nil {
			fmt.Println(err)
			return
		}
		fmt.Printf("month %d at %5.1f °C: self-discharge ×%.3f, floor ×%.3f, capacity %.3f\n",
			m, t, th.SelfDischargeFactor(t, c.DailySwing()), th.FloorFactor(t, c.DailySwing()), capacity)
	}
	fmt.Println(len(th.RangeWarnings(c.Shift(-50))), "warnings in a year 50 °C colder")
	// Output:
	// month 0 at  -2.0 °C: self-discharge ×0.197, floor ×0.224, capacity 0.885
	// month 3 at  10.0 °C: self-discharge ×0.500, floor ×0.515, capacity 0.950
	// month 6 at  22.0 °C: self-discharge ×1.180, floor ×1.183, capacity 1.000
	// 2 warnings in a year 50 °C colder
}
