package scenario

import (
	"encoding/json"
	"fmt"

	"github.com/joulelaw/joulelaw/radio/lora"
)

// The network's settings: optional fields of format 2 (a file without them
// keeps the region's defaults, as FORMAT.md says beside each).

// has reports whether the optional key is present.
func (o obj) has(key string) bool {
	if !o.ok {
		return false
	}
	_, ok := o.m[key]
	return ok
}

// readChannels reads a gateway's optional channel mask: "channel_block" (a
// block of eight 125 kHz channels and one 500 kHz channel of a 64 + 8
// plan) or "channels" (indices into the region's uplink channels), not
// both; neither means every channel of the plan.
func readChannels(c *checker, p string, o obj, region lora.Region) lora.ChannelMask {
	switch {
	case o.has("channel_block") && o.has("channels"):
		c.fail(p+".channels", nil, "give channel_block or channels, not both")
	case o.has("channel_block"):
		n := region.ChannelBlocks()
		if n == 0 {
			c.fail(p+".channel_block", nil, fmt.Sprintf("%s has no blocks of eight channels (only US902-928 and AU915-928 do); use channels", region.Name()))
			return lora.ChannelMask{}
		}
		b, ok := o.integer("channel_block", 0, n-1, "block b is the 125 kHz channels 8b … 8b+7 and the 500 kHz channel 64+b")
		if !ok {
			return lora.ChannelMask{}
		}
		m, err := region.ChannelBlock(b)
		if err != nil {
			c.fail(p+".channel_block", b, err.Error())
		}
		return m
	case o.has("channels"):
		nch := len(region.UplinkChannels())
		items := o.array("channels", 1, nch)
		var idx []int
		for i, it := range items {
			n, isNum := it.(json.Number)
			x, err := n.Int64()
			if !isNum || err != nil || x < 0 || x >= int64(nch) {
				c.fail(index(p+".channels", i), raw(it), fmt.Sprintf("must be a channel index 0 … %d of %s", nch-1, region.Name()))
				return lora.ChannelMask{}
			}
			idx = append(idx, int(x))
		}
		if len(idx) == 0 {
			return lora.ChannelMask{}
		}
		m, err := region.Mask(idx...)
		if err != nil {
			c.fail(p+".channels", note(fmt.Sprint(idx)), err.Error())
		}
		return m
	}
	return lora.ChannelMask{}
}

// readNetworkSettings reads a group's optional RX1 offset, RX2 window and
// rejoin interval.
func readNetworkSettings(c *checker, p string, o obj, region lora.Region, g *Group) {
	if o.has("rx1_dr_offset") {
		g.RX1DROffset, _ = o.integer("rx1_dr_offset", 0, region.RX1DROffsets()-1, "RX1DROffset of "+region.Name())
	}
	if o.has("rx2") {
		v, _ := o.get("rx2")
		r := c.object(p+".rx2", v, "frequency_mhz", "data_rate")
		f, okF := r.number("frequency_mhz", open(0, 10000))
		dr, okD := r.integer("data_rate", 0, 15)
		if okD {
			if _, err := region.DownlinkDataRate(dr); err != nil {
				c.fail(p+".rx2.data_rate", dr, "must be a LoRa downlink data rate of "+region.Name())
				okD = false
			}
		}
		if okF && okD {
			g.RX2 = lora.RX2Window{Frequency: f * 1e6, DR: dr}
			if _, _, err := region.DownlinkBand(g.RX2.Frequency); err != nil {
				c.fail(p+".rx2.frequency_mhz", f, "lies outside every duty-cycle sub-band of "+region.Name())
			}
		}
	}
	if o.has("rejoin_every_reports") {
		g.RejoinEvery, _ = o.integer("rejoin_every_reports", 1, lora.MaxJoinEvery, "an out-of-reach node sends a Join-request in one report of this many")
	}
}

// checkNetwork checks the network's settings of a Go-built scenario: each
// group's RX1 offset, RX2 window and rejoin interval, and that its
// gateway's channels carry every data rate ADR may choose.
func checkNetwork(c *checker, s Scenario) {
	reg := s.Region
	if reg.Name() == "" {
		return
	}
	for i, g := range s.Groups {
		p := index("groups", i)
		if n := reg.RX1DROffsets(); g.RX1DROffset < 0 || g.RX1DROffset >= n {
			c.fail(p+".rx1_dr_offset", g.RX1DROffset, fmt.Sprintf("must be a whole number in [0, %d] (RX1DROffset of %s)", n-1, reg.Name()))
		}
		if g.RX2 != (lora.RX2Window{}) {
			if _, err := reg.DownlinkDataRate(g.RX2.DR); err != nil {
				c.fail(p+".rx2.data_rate", g.RX2.DR, "must be a LoRa downlink data rate of "+reg.Name())
			}
			if _, _, err := reg.DownlinkBand(g.RX2.Frequency); err != nil || !(g.RX2.Frequency > 0) {
				c.fail(p+".rx2.frequency_mhz", g.RX2.Frequency/1e6, "must be > 0 and inside a duty-cycle sub-band of "+reg.Name()+" where it has them")
			}
		}
		if g.RejoinEvery < 0 || g.RejoinEvery > lora.MaxJoinEvery {
			c.fail(p+".rejoin_every_reports", g.RejoinEvery, fmt.Sprintf("must be 0 (none) or a whole number in [1, %d]", lora.MaxJoinEvery))
		}
		if g.Gateway < 0 || g.Gateway >= len(s.Gateways) {
			continue
		}
		for _, dr := range reg.ADRDataRates() {
			if reg.ChannelsCarrying(s.Gateways[g.Gateway].Channels, dr) == 0 {
				c.fail(index("gateways", g.Gateway)+".channels", note(s.Gateways[g.Gateway].Channels.String()), fmt.Sprintf("carry no channel for DR%d, a data rate ADR may choose", dr))
				break
			}
		}
	}
}
