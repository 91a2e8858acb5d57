package energy_test

import (
	"fmt"

	"github.com/joulelaw/joulelaw/energy"
)

// A site with a mean of 10 °C, ±12 °C over the seasons (warmest in July)
// and a 10 °C daily range; a year 3 °C colder than usual is the same
// profile shifted. Invented figures, for the demo.
func ExampleNewSeasonalClimate() {
	c, err := energy.NewSeasonalClimate(10, 12, 6, 10)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("January %.1f °C, April %.1f °C, July %.1f °C\n", c.Month(0), c.Month(3), c.Month(6))
	fmt.Printf("year: mean %.1f °C, coldest day %.1f °C, warmest day %.1f °C\n", c.Mean(), c.Min(), c.Max())
	cold := c.Shift(-3)
	fmt.Printf("a cold year: coldest day %.1f °C\n", cold.Min())
	// Output:
	// January -2.0 °C, April 10.0 °C, July 22.0 °C
	// year: mean 10.0 °C, coldest day -7.0 °C, warmest day 27.0 °C
	// a cold year: coldest day -10.0 °C
}
