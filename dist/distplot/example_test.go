package distplot_test

import (
	"bytes"
	"fmt"

	"gonum.org/v1/plot/vg"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/dist/distplot"
)

// Two laws of a cycle's energy (invented for the example) on one exceedance
// plot with a log scale, encoded as SVG bytes for a notebook.
func Example() {
	quiet := dist.MustNormal(0.020, 0.002) // J
	busy, err := dist.Mixture([]float64{0.9, 0.1}, []dist.Law{dist.MustPointMass(0.021), dist.MustNormal(0.060, 0.005)})
	if err != nil {
		fmt.Println(err)
		return
	}
	pl, err := distplot.Survival([]distplot.Curve{
		{Name: "quiet node", Law: quiet},
		{Name: "busy node", Law: busy},
	}, distplot.Options{Title: "Energy per cycle", XLabel: "energy per cycle (mJ)", XScale: 1e3, LogY: true})
	if err != nil {
		fmt.Println(err)
		return
	}
	svg, err := distplot.Encode(pl, "svg", 16*vg.Centimeter, 10*vg.Centimeter)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println("svg:", bytes.Contains(svg, []byte("<svg")))
	ys, err := distplot.Values("survival", busy, []float64{0.020, 0.021, 0.050, 0.070})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("P(E > x): %.4g\n", ys)
	// Output:
	// svg: true
	// P(E > x): [1 0.1 0.09772 0.002275]
}
