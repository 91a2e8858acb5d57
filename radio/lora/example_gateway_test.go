package lora_test

import (
	"fmt"

	"github.com/joulelaw/joulelaw/radio/lora"
)

// A European gateway asked to acknowledge 400 confirmed nodes every 10
// minutes (invented demo traffic): 85 % of the answers in RX1, in the 1 %
// sub-band of the uplink channels, the rest in RX2 at 869.525 MHz, 10 %.
// The acknowledgements are bare frames at SF9 in RX1 and SF12 in RX2; RX1
// alone needs 8.2 % of the time (0.567 answers/s × 144.4 ms), so about
// 1/(1 + 8.2) of them can go (the one-server loss formula). The
// limits are for planning, not certification: check the local rules for
// gateways (ERC Recommendation 70-03, ETSI EN 300 220) and defer to the
// regulator.
func ExampleGatewayDownlinks() {
	eu := lora.EU868()
	tm := eu.Timing()
	ack := func(dr int) float64 {
		d, _ := eu.DownlinkDataRate(dr)
		a, _ := d.DownlinkPHY().Airtime(lora.EmptyFrameBytes)
		return a
	}
	rx1Band, rx1Duty, _ := eu.DownlinkBand(868.1e6)
	f2, dr2 := eu.RX2()
	rx2Band, rx2Duty, _ := eu.DownlinkBand(f2)
	answers := 400.0 / 600 // per second
	b, err := lora.GatewayDownlinks([]lora.DownlinkStream{
		{Rate: 0.85 * answers, Airtime: ack(3), Lead: tm.ReceiveDelay1, Band: rx1Band, DutyCycle: rx1Duty},
		{Rate: 0.15 * answers, Airtime: ack(dr2), Lead: tm.ReceiveDelay2, Band: rx2Band, DutyCycle: rx2Duty},
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, u := range b.Bands {
		fmt.Printf("sub-band %d: needs %.1f %% of the time, limit %g %%, over: %v\n", u.Band, 100*u.Offered, 100*u.DutyCycle, u.Over())
	}
	fmt.Printf("answers sent: RX1 %.1f %%, RX2 %.1f %% (stated error %.1g)\n", 100*b.Sent[0], 100*b.Sent[1], b.Error)
	// Output:
	// sub-band 2: needs 8.2 % of the time, limit 1 %, over: true
	// sub-band 4: needs 9.9 % of the time, limit 10 %, over: false
	// answers sent: RX1 10.8 %, RX2 50.2 % (stated error 0.003)
}

// A US902-928 gateway of eight receive paths listens on one block of the
// 64 + 8 channel plan; its nodes' frames spread over 8 channels at DR0 …
// DR3 and one at DR4.
func ExampleRegion_ChannelBlock() {
	us := lora.US915()
	b, _ := us.ChannelBlock(1)
	fmt.Println(b)
	fmt.Println(us.ChannelsCarrying(b, 0), us.ChannelsCarrying(b, 4))
	f, _ := us.RX1Frequency(9)
	fmt.Printf("RX1 after channel 9: %.1f MHz\n", f/1e6)
	// Output:
	// channels [8 9 10 11 12 13 14 15 65]
	// 8 1
	// RX1 after channel 9: 923.9 MHz
}
