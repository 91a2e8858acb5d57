// Command lawtour prints a few laws built with package dist: the smallest
// runnable use of the library, on invented numbers.
package main

import (
	"fmt"

	"github.com/joulelaw/joulelaw/dist"
)

func main() {
	// An invented sensing burst: its energy is 2.0 mJ or 3.5 mJ, depending on
	// whether a second measurement is taken, and a radio burst of about 40 mJ.
	sense := dist.MustDiscrete([]float64{2.0e-3, 3.5e-3}, []float64{0.8, 0.2})
	radio := dist.MustNormal(40e-3, 4e-3)
	fmt.Println("sensing energy (J):", sense)
	fmt.Println("radio energy (J):  ", radio)
	fmt.Printf("radio energy above 55 mJ: %.3g\n", radio.Survival(55e-3))
}
