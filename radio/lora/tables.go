package lora

// The regional tables below follow LoRaWAN Regional Parameters RP002-1.0.3
// (LoRa Alliance, 2021), transcribed from memory; check them against the
// current edition of the document before relying on them. The European
// duty-cycle sub-bands follow ETSI EN 300 220-2 and ERC Recommendation 70-03
// Annex 1. They are for planning, not for certification.

// rp002 names the Regional Parameters edition of the tables.
const rp002 = "LoRaWAN Regional Parameters RP002-1.0.3"

// classATiming is the timing common to EU863-870 and US902-928
// (RP002-1.0.3, "Default settings" of each region, as used with the
// LoRaWAN 1.0.3 specification; ACK_TIMEOUT, called RETRANSMIT_TIMEOUT from
// LoRaWAN 1.0.4 on, is 2 ± 1 s: a random delay between 1 and 3 s).
func classATiming() Timing {
	return Timing{
		ReceiveDelay1: 1, ReceiveDelay2: 2,
		JoinAcceptDelay1: 5, JoinAcceptDelay2: 6,
		AckTimeoutMin: 1, AckTimeoutMax: 3,
		ADRAckLimit: 64, ADRAckDelay: 32,
	}
}

// Regions returns every region this package models, in a fixed order
// (EU863-870, US902-928, AU915-928, IN865-867): for a program that looks a
// region up by its name.
func Regions() []Region { return []Region{EU868(), US915(), AU915(), IN865()} }

// EU868 returns the EU863-870 region (RP002-1.0.3 §2.4, "EU863-870 ISM
// band"). Data rates DR0 … DR6 are LoRa (SF12 … SF7 at 125 kHz, SF7 at
// 250 kHz); DR7 (FSK) and DR8 … DR11 (LR-FHSS) are listed but not modelled.
// Payload limits are those for devices without repeaters. Default maximum
// EIRP +16 dBm with 2 dB TXPower steps 0 … 7; RX2 at 869.525 MHz, DR0.
func EU868() Region {
	// RP002-1.0.3 Table "EU863-870 Data rate and end-device output power
	// encoding" and "EU863-870 maximum payload size (not repeater
	// compatible)": M = 59, 59, 59, 123, 250, 250, 250, 250 for DR0 … DR7.
	drs := []drEntry{
		{sf: 12, bw: 125e3, up: true, down: true, maxMAC: 59},
		{sf: 11, bw: 125e3, up: true, down: true, maxMAC: 59},
		{sf: 10, bw: 125e3, up: true, down: true, maxMAC: 59},
		{sf: 9, bw: 125e3, up: true, down: true, maxMAC: 123},
		{sf: 8, bw: 125e3, up: true, down: true, maxMAC: 250},
		{sf: 7, bw: 125e3, up: true, down: true, maxMAC: 250},
		{sf: 7, bw: 250e3, up: true, down: true, maxMAC: 250},
		{kind: "FSK"},
		{kind: "LR-FHSS"}, {kind: "LR-FHSS"}, {kind: "LR-FHSS"}, {kind: "LR-FHSS"},
		{kind: "RFU"}, {kind: "RFU"}, {kind: "RFU"}, {kind: "RFU"},
	}
	// RP002-1.0.3 Table "EU863-870 downlink RX1 data rate mapping":
	// RX1 DR = max(upstream DR − RX1DROffset, DR0), offsets 0 … 5.
	rx1 := make([][]int, 8)
	for up := range rx1 {
		rx1[up] = make([]int, 6)
		for off := range rx1[up] {
			rx1[up][off] = max(up-off, 0)
		}
	}
	// Default channels (RP002-1.0.3 "EU863-870 default channels"): 868.1,
	// 868.3 and 868.5 MHz, 125 kHz, DR0 … DR5.
	ch := []Channel{
		{Frequency: 868.1e6, Bandwidth: 125e3, MinDR: 0, MaxDR: 5},
		{Frequency: 868.3e6, Bandwidth: 125e3, MinDR: 0, MaxDR: 5},
		{Frequency: 868.5e6, Bandwidth: 125e3, MinDR: 0, MaxDR: 5},
	}
	// Sub-bands, ERC Recommendation 70-03 Annex 1 (non-specific short range
	// devices) / ETSI EN 300 220-2. The 868.0–868.6 (1 %), 868.7–869.2
	// (0.1 %) and 869.4–869.65 MHz (10 %, 500 mW) bands are the ones
	// LoRaWAN devices use; the others are given from memory.
	sb := []SubBand{
		{Low: 863.0e6, High: 865.0e6, DutyCycle: 0.001, MaxERP: 14},
		{Low: 865.0e6, High: 868.0e6, DutyCycle: 0.01, MaxERP: 14},
		{Low: 868.0e6, High: 868.6e6, DutyCycle: 0.01, MaxERP: 14},
		{Low: 868.7e6, High: 869.2e6, DutyCycle: 0.001, MaxERP: 14},
		{Low: 869.4e6, High: 869.65e6, DutyCycle: 0.1, MaxERP: 27},
		{Low: 869.7e6, High: 870.0e6, DutyCycle: 0.01, MaxERP: 14},
	}
	return Region{t: &regionTable{
		name: "EU863-870", version: rp002,
		drs:     drs,
		maxEIRP: 16, powerSteps: 8, powerStep: 2,
		rx1:     rx1,
		rx2Freq: 869.525e6, rx2DR: 0,
		timing:   classATiming(),
		channels: ch, subBands: sb,
		adrDRs: []int{0, 1, 2, 3, 4, 5},
	}}
}

// US915 returns the US902-928 region (RP002-1.0.3 §2.5, "US902-928 ISM
// band"). Uplink data rates DR0 … DR3 (SF10 … SF7 at 125 kHz) and DR4
// (SF8/500 kHz); downlink data rates DR8 … DR13 (SF12 … SF7 at 500 kHz);
// DR5 and DR6 (LR-FHSS) are listed but not modelled. The 400 ms dwell-time
// limit applies to uplinks. TXPower 0 … 14 in 2 dB steps below 30 dBm; RX2
// at 923.3 MHz, DR8.
func US915() Region {
	// RP002-1.0.3 Tables "US902-928 TX Data rate table" and "US902-928
	// maximum payload size (not repeater compatible)".
	drs := []drEntry{
		{sf: 10, bw: 125e3, up: true, maxMAC: 19},
		{sf: 9, bw: 125e3, up: true, maxMAC: 61},
		{sf: 8, bw: 125e3, up: true, maxMAC: 133},
		{sf: 7, bw: 125e3, up: true, maxMAC: 250},
		{sf: 8, bw: 500e3, up: true, maxMAC: 250},
		{kind: "LR-FHSS"}, {kind: "LR-FHSS"},
		{kind: "RFU"},
		{sf: 12, bw: 500e3, down: true, maxMAC: 61},
		{sf: 11, bw: 500e3, down: true, maxMAC: 137},
		{sf: 10, bw: 500e3, down: true, maxMAC: 250},
		{sf: 9, bw: 500e3, down: true, maxMAC: 250},
		{sf: 8, bw: 500e3, down: true, maxMAC: 250},
		{sf: 7, bw: 500e3, down: true, maxMAC: 250},
		{kind: "RFU"}, {kind: "RFU"},
	}
	// RP002-1.0.3 Table "US902-928 downlink RX1 data rate mapping",
	// upstream DR0 … DR4, RX1DROffset 0 … 3:
	rx1 := [][]int{
		{10, 9, 8, 8},
		{11, 10, 9, 8},
		{12, 11, 10, 9},
		{13, 12, 11, 10},
		{13, 13, 12, 11},
	}
	// Channel plan (RP002-1.0.3 "US902-928 Channel Frequencies"): 64
	// channels of 125 kHz from 902.3 MHz in 200 kHz steps (DR0 … DR3) and 8
	// of 500 kHz from 903.0 MHz in 1.6 MHz steps (DR4).
	ch := make([]Channel, 0, 72)
	for i := 0; i < 64; i++ {
		ch = append(ch, Channel{Frequency: 902.3e6 + 200e3*float64(i), Bandwidth: 125e3, MinDR: 0, MaxDR: 3})
	}
	for i := 0; i < 8; i++ {
		ch = append(ch, Channel{Frequency: 903.0e6 + 1.6e6*float64(i), Bandwidth: 500e3, MinDR: 4, MaxDR: 4})
	}
	return Region{t: &regionTable{
		name: "US902-928", version: rp002,
		drs:     drs,
		maxEIRP: 30, powerSteps: 15, powerStep: 2,
		rx1:     rx1,
		rx2Freq: 923.3e6, rx2DR: 8,
		timing:   classATiming(),
		dwell:    0.4,
		channels: ch,
		downlink: downlinkChannels(923.3e6, 600e3, 8),
		adrDRs:   []int{0, 1, 2, 3, 4},
	}}
}

// downlinkChannels returns n downlink channels from first (Hz) in steps of
// step (Hz): the RX1 channels of the US902-928 and AU915-928 plans.
func downlinkChannels(first, step float64, n int) []float64 {
	out := make([]float64, n)
	for i := range out {
		out[i] = first + step*float64(i)
	}
	return out
}

// AU915 returns the AU915-928 region (RP002-1.0.3 §2.7, "AU915-928 Band",
// transcribed from memory: check it against the current edition). Uplink
// data rates DR0 … DR5 (SF12 … SF7 at 125 kHz) and DR6 (SF8/500 kHz);
// downlink data rates DR8 … DR13 (SF12 … SF7 at 500 kHz); DR7 (LR-FHSS) is
// listed but not modelled. TXPower 0 … 14 in 2 dB steps below 30 dBm; RX2
// at 923.3 MHz, DR8. The payload limits are those with UplinkDwellTime = 0
// (no dwell-time limit, the default of the table as recalled); a network
// that sets the 400 ms dwell time with TxParamSetupReq lowers them at DR0
// … DR2. Australian rules (the ACMA's class licence for low-interference
// potential devices) govern, not these tables.
func AU915() Region {
	// RP002-1.0.3 Tables "AU915-928 Data rate and end-device output power
	// encoding" and "AU915-928 maximum payload size (not repeater
	// compatible)", from memory: M = 59, 59, 59, 123, 250, 250, 250 for
	// DR0 … DR6 and 61, 137, 250, 250, 250, 250 for DR8 … DR13.
	drs := []drEntry{
		{sf: 12, bw: 125e3, up: true, maxMAC: 59},
		{sf: 11, bw: 125e3, up: true, maxMAC: 59},
		{sf: 10, bw: 125e3, up: true, maxMAC: 59},
		{sf: 9, bw: 125e3, up: true, maxMAC: 123},
		{sf: 8, bw: 125e3, up: true, maxMAC: 250},
		{sf: 7, bw: 125e3, up: true, maxMAC: 250},
		{sf: 8, bw: 500e3, up: true, maxMAC: 250},
		{kind: "LR-FHSS"},
		{sf: 12, bw: 500e3, down: true, maxMAC: 61},
		{sf: 11, bw: 500e3, down: true, maxMAC: 137},
		{sf: 10, bw: 500e3, down: true, maxMAC: 250},
		{sf: 9, bw: 500e3, down: true, maxMAC: 250},
		{sf: 8, bw: 500e3, down: true, maxMAC: 250},
		{sf: 7, bw: 500e3, down: true, maxMAC: 250},
		{kind: "RFU"}, {kind: "RFU"},
	}
	// RP002-1.0.3 Table "AU915-928 downlink RX1 data rate mapping",
	// upstream DR0 … DR6, RX1DROffset 0 … 5 (from memory):
	rx1 := [][]int{
		{8, 8, 8, 8, 8, 8},
		{9, 8, 8, 8, 8, 8},
		{10, 9, 8, 8, 8, 8},
		{11, 10, 9, 8, 8, 8},
		{12, 11, 10, 9, 8, 8},
		{13, 12, 11, 10, 9, 8},
		{13, 13, 12, 11, 10, 9},
	}
	// Channel plan (RP002-1.0.3 "AU915-928 Channel Frequencies", from
	// memory): 64 channels of 125 kHz from 915.2 MHz in 200 kHz steps
	// (DR0 … DR5), 8 of 500 kHz from 915.9 MHz in 1.6 MHz steps (DR6), and
	// 8 downlink channels of 500 kHz from 923.3 MHz in 600 kHz steps.
	ch := make([]Channel, 0, 72)
	for i := 0; i < 64; i++ {
		ch = append(ch, Channel{Frequency: 915.2e6 + 200e3*float64(i), Bandwidth: 125e3, MinDR: 0, MaxDR: 5})
	}
	for i := 0; i < 8; i++ {
		ch = append(ch, Channel{Frequency: 915.9e6 + 1.6e6*float64(i), Bandwidth: 500e3, MinDR: 6, MaxDR: 6})
	}
	return Region{t: &regionTable{
		name: "AU915-928", version: rp002,
		drs:     drs,
		maxEIRP: 30, powerSteps: 15, powerStep: 2,
		rx1:     rx1,
		rx2Freq: 923.3e6, rx2DR: 8,
		timing:   classATiming(),
		channels: ch,
		downlink: downlinkChannels(923.3e6, 600e3, 8),
		adrDRs:   []int{0, 1, 2, 3, 4, 5, 6},
	}}
}

// IN865 returns the IN865-867 region (RP002-1.0.3 §2.12, "IN865-867 ISM
// Band", transcribed from memory: check it against the current edition).
// Data rates DR0 … DR5 are SF12 … SF7 at 125 kHz; DR7 (FSK) is listed but
// not modelled. Default maximum EIRP 30 dBm with TXPower 0 … 10 in 2 dB
// steps; three default channels (865.0625, 865.4025 and 865.985 MHz); RX2
// at 866.550 MHz, DR2. The band has no duty-cycle sub-bands in the tables
// (Indian rules for the 865–867 MHz band, as recalled, set power, not a
// duty cycle): the regulator's current rules govern.
func IN865() Region {
	// RP002-1.0.3 Tables "IN865-867 TX Data rate table" and "IN865-867
	// maximum payload size", from memory: M = 59, 59, 59, 123, 250, 250.
	drs := []drEntry{
		{sf: 12, bw: 125e3, up: true, down: true, maxMAC: 59},
		{sf: 11, bw: 125e3, up: true, down: true, maxMAC: 59},
		{sf: 10, bw: 125e3, up: true, down: true, maxMAC: 59},
		{sf: 9, bw: 125e3, up: true, down: true, maxMAC: 123},
		{sf: 8, bw: 125e3, up: true, down: true, maxMAC: 250},
		{sf: 7, bw: 125e3, up: true, down: true, maxMAC: 250},
		{kind: "RFU"},
		{kind: "FSK"},
		{kind: "RFU"}, {kind: "RFU"}, {kind: "RFU"}, {kind: "RFU"},
		{kind: "RFU"}, {kind: "RFU"}, {kind: "RFU"}, {kind: "RFU"},
	}
	// RP002-1.0.3 "IN865-867 downlink RX1 data rate mapping" (from
	// memory): RX1DROffset 0 … 5 lower the data rate, 6 and 7 raise it by
	// 1 and 2; RX1 DR = min(5, max(0, DR − effective offset)).
	rx1 := make([][]int, 6)
	for up := range rx1 {
		rx1[up] = make([]int, 8)
		for off := range rx1[up] {
			eff := off
			if off >= 6 {
				eff = 5 - off // 6 → −1, 7 → −2
			}
			rx1[up][off] = min(5, max(0, up-eff))
		}
	}
	ch := []Channel{
		{Frequency: 865.0625e6, Bandwidth: 125e3, MinDR: 0, MaxDR: 5},
		{Frequency: 865.4025e6, Bandwidth: 125e3, MinDR: 0, MaxDR: 5},
		{Frequency: 865.985e6, Bandwidth: 125e3, MinDR: 0, MaxDR: 5},
	}
	return Region{t: &regionTable{
		name: "IN865-867", version: rp002,
		drs:     drs,
		maxEIRP: 30, powerSteps: 11, powerStep: 2,
		rx1:     rx1,
		rx2Freq: 866.55e6, rx2DR: 2,
		timing:   classATiming(),
		channels: ch,
		adrDRs:   []int{0, 1, 2, 3, 4, 5},
	}}
}
