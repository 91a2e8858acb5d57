package ieee802154_test

import (
	"fmt"
	"math/rand/v2"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/energy"
	"github.com/joulelaw/joulelaw/radio/ieee802154"
)

// Example plans the energy of one node in an invented scenario: 200
// sensors on one 2.4 GHz channel, each sending a 24-octet reading every
// minute with an acknowledgement request and the standard's default MAC
// attributes; 5 % of transmissions go unacknowledged. The currents are
// typical values, from memory (use your radio's data sheet); channels and
// transmit power are set by local regulations, not by this example.
func Example() {
	node := ieee802154.Node{
		PHY: ieee802154.OQPSK2450(), CSMA: ieee802154.DefaultCSMA(), Currents: ieee802154.TypicalCurrents(),
		Payload: 24, AckRequest: true, AckLoss: 0.05,
		Before: energy.MustFixedState("sense", 3e-3, 3, 20e-3),
	}
	busy, err := node.BusyFromTraffic(ieee802154.Traffic{Nodes: 200, Interval: 60})
	if err != nil {
		fmt.Println(err)
		return
	}
	node.Busy = busy
	tl, err := node.Timeline()
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("frame %d octets, %.0f µs on air; CCA busy %.5f\n", tl.FrameOctets, tl.Frame*1e6, busy)
	o := tl.Outcomes
	fmt.Printf("delivered %.6f, access failure %.2g, retry limit %.2g\n", o.Delivered, o.AccessFailure, o.RetryLimit)

	frame, err := node.FrameEnergy()
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("energy per frame: mean %.1f µJ, median %.1f µJ, 99th percentile %.1f µJ\n",
		frame.Mean()*1e6, frame.Quantile(0.5)*1e6, frame.UpperQuantile(0.01)*1e6)

	cycle, err := node.Cycle(dist.MustPointMass(60))
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("mean current %.2f µA\n", cycle.MeanCurrent(3)*1e6)
	r := rand.New(rand.NewPCG(1, 2))
	fmt.Printf("one sampled cycle: %.1f µJ\n", cycle.Energy().Rand(r)*1e6)
	// Output:
	// frame 35 octets, 1312 µs on air; CCA busy 0.00668
	// delivered 0.999994, access failure 1.4e-11, retry limit 6.2e-06
	// energy per frame: mean 125.1 µJ, median 118.1 µJ, 99th percentile 255.8 µJ
	// mean current 3.69 µA
	// one sampled cycle: 658.4 µJ
}

// ExampleCSMA shows the laws of one unslotted CSMA-CA run with the
// standard's default attributes on the 2.4 GHz PHY when each CCA finds the
// channel busy with probability 0.2.
func ExampleCSMA() {
	c := ieee802154.DefaultCSMA()
	phy := ieee802154.OQPSK2450()
	ccas, _ := c.CCAs(0.2)
	fail, _ := c.AccessFailure(0.2)
	backoff, _ := c.BackoffTime(phy, 0.2)
	run, _ := c.RunTime(phy, 0.2)
	fmt.Printf("CCAs per run: mean %.4f; channel-access failure %.2e\n", ccas.Mean(), fail)
	fmt.Printf("backoff: mean %.3f ms, 99th percentile %.2f ms\n", backoff.Mean()*1e3, backoff.UpperQuantile(0.01)*1e3)
	fmt.Printf("run with its CCAs: mean %.3f ms, at most %.2f ms\n", run.Mean()*1e3, run.UpperQuantile(0)*1e3)
	o, _ := c.Frame(0.2, 0.1, true)
	fmt.Printf("acknowledged %.6f; transmissions per frame: mean %.4f\n", o.Delivered, o.Transmissions.Mean())
	// Output:
	// CCAs per run: mean 1.2496; channel-access failure 3.20e-04
	// backoff: mean 1.846 ms, 99th percentile 12.16 ms
	// run with its CCAs: mean 2.006 ms, at most 37.44 ms
	// acknowledged 0.999545; transmissions per frame: mean 1.1106
}

// ExampleNode_FrameEnergy shows settings beyond MaxFramePaths: with
// macMaxFrameRetries 7 the frame has 116 321 distinct paths (229 217 with
// macMaxBE 8 as well), so FrameEnergy prunes those of probability below
// DefaultPathTolerance and moves their mass to the worst-case path; the
// law states that mass as its error (dist.Estimated), and Node.PathError
// gives it for the cycle too. A setting whose pruned frame still keeps
// more paths than the cap is refused with an error naming the cap and
// PathTolerance.
func ExampleNode_FrameEnergy() {
	node := ieee802154.Node{
		PHY: ieee802154.OQPSK2450(), CSMA: ieee802154.DefaultCSMA(), Currents: ieee802154.TypicalCurrents(),
		Payload: 24, AckRequest: true, Busy: 0.1, AckLoss: 0.05,
	}
	node.CSMA.MaxFrameRetries = 7
	for _, maxBE := range []int{5, 8} {
		node.CSMA.MaxBE = maxBE
		law, err := node.FrameEnergy()
		if err != nil {
			fmt.Println(err)
			return
		}
		fmt.Printf("macMaxBE %d: mean %.2f µJ, 99.99 %% below %.2f µJ, stated CDF error %.1e\n",
			maxBE, law.Mean()*1e6, law.UpperQuantile(1e-4)*1e6, law.(dist.Estimated).Accuracy().CDFAbs)
	}
	// Output:
	// macMaxBE 5: mean 126.32 µJ, 99.99 % below 525.12 µJ, stated CDF error 1.0e-09
	// macMaxBE 8: mean 126.33 µJ, 99.99 % below 525.12 µJ, stated CDF error 1.6e-09
}
