package lora

import (
	"fmt"
	"math"
	"math/bits"
)

// MaxChannels caps the uplink channels of a region's plan that a
// ChannelMask can select (US902-928 and AU915-928 have 72).
const MaxChannels = 128

// ChannelMask selects some of a region's uplink channels, by their index in
// Region.UplinkChannels (the ChMask of LinkADRReq, LoRaWAN 1.0.3 §5.3, and
// the channel plan a gateway listens on). The zero value selects no channel;
// a ChannelMask is a comparable value, safe for concurrent use.
type ChannelMask struct {
	bits [MaxChannels / 64]uint64
}

// Has reports whether channel i is selected.
func (m ChannelMask) Has(i int) bool {
	return i >= 0 && i < MaxChannels && m.bits[i/64]&(1<<(i%64)) != 0
}

// Len returns the number of selected channels.
func (m ChannelMask) Len() int {
	n := 0
	for _, w := range m.bits {
		n += bits.OnesCount64(w)
	}
	return n
}

// Indices returns the selected channels' indices, increasing.
func (m ChannelMask) Indices() []int {
	var out []int
	for i := 0; i < MaxChannels; i++ {
		if m.Has(i) {
			out = append(out, i)
		}
	}
	return out
}

// String prints the selected indices, e.g. "channels [8 9 … 15 65]".
func (m ChannelMask) String() string { return fmt.Sprintf("channels %v", m.Indices()) }

// Mask returns the mask that selects the given uplink channels (indices
// into UplinkChannels). It fails, wrapping ErrParam, on an index the region
// lacks or when no channel is given.
func (r Region) Mask(channels ...int) (ChannelMask, error) {
	if r.t == nil {
		return ChannelMask{}, errZeroRegion()
	}
	if len(channels) == 0 {
		return ChannelMask{}, paramErr("Region.Mask", "channels", "[]", "must select at least one channel")
	}
	var m ChannelMask
	for _, c := range channels {
		if c < 0 || c >= len(r.t.channels) {
			return ChannelMask{}, paramErr("Region.Mask", "channels", c, fmt.Sprintf("%s uplink channels are 0 … %d", r.t.name, len(r.t.channels)-1))
		}
		m.bits[c/64] |= 1 << (c % 64)
	}
	return m, nil
}

// AllChannels returns the mask selecting every uplink channel of the plan
// (EU863-870 and IN865-867: the three default channels; US902-928 and
// AU915-928: all 72).
func (r Region) AllChannels() ChannelMask {
	if r.t == nil {
		return ChannelMask{}
	}
	idx := make([]int, len(r.t.channels))
	for i := range idx {
		idx[i] = i
	}
	m, _ := r.Mask(idx...)
	return m
}

// ChannelBlocks returns the number of eight-channel blocks of a 64 + 8
// channel plan (US902-928, AU915-928: 8), or 0 for a region without them.
func (r Region) ChannelBlocks() int {
	if r.t == nil || len(r.t.channels) != 72 {
		return 0
	}
	return 8
}

// ChannelBlock returns the mask of block b (0 … 7) of a 64 + 8 channel plan:
// the eight 125 kHz channels 8b … 8b+7 and the 500 kHz channel 64 + b. A
// gateway of eight receive paths listens on one such block (common practice;
// networks call block 1, channels 8 … 15 and 65, "sub-band 2"), and end
// devices are masked to it. It fails, wrapping ErrParam, for a region
// without blocks (ChannelBlocks() == 0) or b out of range.
func (r Region) ChannelBlock(b int) (ChannelMask, error) {
	n := r.ChannelBlocks()
	if n == 0 {
		return ChannelMask{}, paramErr("Region.ChannelBlock", "Region", r.Name(), "has no blocks of eight channels (a 64 + 8 channel plan)")
	}
	if b < 0 || b >= n {
		return ChannelMask{}, paramErr("Region.ChannelBlock", "b", b, fmt.Sprintf("must be 0 … %d", n-1))
	}
	idx := []int{64 + b}
	for i := 8 * b; i < 8*b+8; i++ {
		idx = append(idx, i)
	}
	return r.Mask(idx...)
}

// ChannelsCarrying returns how many channels of mask allow data rate dr for
// uplinks: the channels over which a node's frames at dr spread evenly, and
// so the collision domains of dr. A zero mask means AllChannels.
func (r Region) ChannelsCarrying(mask ChannelMask, dr int) int {
	if r.t == nil {
		return 0
	}
	if mask.Len() == 0 {
		mask = r.AllChannels()
	}
	n := 0
	for i, c := range r.t.channels {
		if mask.Has(i) && dr >= c.MinDR && dr <= c.MaxDR {
			n++
		}
	}
	return n
}

// RX1Frequency returns the frequency (Hz) of the RX1 window that follows an
// uplink on channel ch (an index into UplinkChannels): the uplink's own
// frequency in EU863-870 and IN865-867; downlink channel ch mod 8 (923.3 MHz
// + 600 kHz·(ch mod 8)) in US902-928 and AU915-928 (RP002-1.0.3, each
// region's "Downlink channels" rule).
func (r Region) RX1Frequency(ch int) (float64, error) {
	if r.t == nil {
		return 0, errZeroRegion()
	}
	if ch < 0 || ch >= len(r.t.channels) {
		return 0, paramErr("Region.RX1Frequency", "ch", ch, fmt.Sprintf("%s uplink channels are 0 … %d", r.t.name, len(r.t.channels)-1))
	}
	if len(r.t.downlink) == 0 {
		return r.t.channels[ch].Frequency, nil
	}
	return r.t.downlink[ch%len(r.t.downlink)], nil
}

// UplinkDutyCycle returns the duty-cycle limit that binds a node's uplinks
// at dr on the channels of mask (a zero mask means AllChannels): the
// strictest limit among the sub-bands holding those channels (the node's
// frames are taken to share one sub-band's budget, as they do on the
// EU863-870 default channels), or 1 where the region has no duty-cycle
// sub-bands. It fails, wrapping ErrParam, when no channel of mask carries dr
// or a channel lies outside every sub-band.
//
// The limits are for planning, not certification: check the local
// regulations (in Europe ETSI EN 300 220 and the national implementation of
// ERC Recommendation 70-03) and defer to the regulator.
func (r Region) UplinkDutyCycle(mask ChannelMask, dr int) (float64, error) {
	if r.t == nil {
		return 0, errZeroRegion()
	}
	if r.ChannelsCarrying(mask, dr) == 0 {
		return 0, paramErr("Region.UplinkDutyCycle", "dr", dr, fmt.Sprintf("no channel of %v carries DR%d in %s", mask, dr, r.t.name))
	}
	return r.strictestDutyCycle(mask, dr, false)
}

// strictestDutyCycle returns the strictest duty cycle among the sub-bands
// of mask's channels that carry dr (any data rate when anyDR), 1 without
// sub-bands.
func (r Region) strictestDutyCycle(mask ChannelMask, dr int, anyDR bool) (float64, error) {
	if len(r.t.subBands) == 0 {
		return 1, nil
	}
	if mask.Len() == 0 {
		mask = r.AllChannels()
	}
	d := math.Inf(1)
	for i, c := range r.t.channels {
		if !mask.Has(i) || !anyDR && (dr < c.MinDR || dr > c.MaxDR) {
			continue
		}
		sb, err := r.SubBandAt(c.Frequency)
		if err != nil {
			return 0, err
		}
		d = min(d, sb.DutyCycle)
	}
	if math.IsInf(d, 1) {
		return 1, nil
	}
	return d, nil
}
