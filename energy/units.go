package energy

// Unit factors. Multiply a number in the named unit by its factor to get the
// SI value this package works in (A, s, J, C, W); divide an SI value by the
// factor to get it back. For example 12*MilliAmp is 0.012 A and
// charge/MilliAmpHour is a charge in mAh.
const (
	MilliAmp     = 1e-3   // one milliampere, in A
	MicroAmp     = 1e-6   // one microampere, in A
	NanoAmp      = 1e-9   // one nanoampere, in A
	Millisecond  = 1e-3   // one millisecond, in s
	Microsecond  = 1e-6   // one microsecond, in s
	MilliJoule   = 1e-3   // one millijoule, in J
	MicroJoule   = 1e-6   // one microjoule, in J
	MilliWatt    = 1e-3   // one milliwatt, in W
	MicroWatt    = 1e-6   // one microwatt, in W
	MilliAmpHour = 3.6    // one milliampere-hour, in C
	AmpHour      = 3600.0 // one ampere-hour, in C

	Minute = 60.0         // one minute, in s
	Hour   = 3600.0       // one hour, in s
	Day    = 86400.0      // one day, in s
	Year   = 365.25 * Day // one Julian year (365.25 days), in s
	Month  = Year / 12    // one twelfth of a Julian year (30.4375 days), in s
	Week   = 7 * Day      // one week, in s
)

// MilliAmpHours returns the charge q (C) in mAh.
func MilliAmpHours(q float64) float64 { return q / MilliAmpHour }

// ChargeEnergy returns the energy (J) of the charge q (C) delivered at the
// voltage v (V): q·v.
func ChargeEnergy(q, v float64) float64 { return q * v }

// Years returns the duration t (s) in Julian years.
func Years(t float64) float64 { return t / Year }

// Days returns the duration t (s) in days.
func Days(t float64) float64 { return t / Day }
