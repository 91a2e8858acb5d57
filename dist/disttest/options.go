package disttest

import (
	"fmt"
	"math"
)

// Option adjusts a Check: its random seed and sample size, and the
// tolerances a numerically computed law needs. Tolerances only loosen the
// checks; none of them switches a check off.
type Option func(*config)

// reference is one table of reference values given with WithReference or
// WithCDFReference.
type reference struct {
	survival bool                  // Survival (true) or CDF (false)
	f        func(float64) float64 // the reference function
	xs       []float64             // where to compare
	relTol   float64               // allowed relative error
}

// config holds the settings of one Check.
type config struct {
	seed        uint64
	samples     int
	level       float64
	cdfAbs      float64
	survivalRel float64
	tailFloor   float64
	quantileRel float64
	densityRel  float64
	momentRel   float64
	cfAbs       float64
	refs        []reference
	bad         []string // option errors
}

// Defaults of the options.
const (
	// DefaultSeed is the seed of the random source used by the sampling
	// checks unless WithSeed says otherwise.
	DefaultSeed = 20240601

	// DefaultSamples is the number of draws the sampling checks make.
	DefaultSamples = 20000

	// DefaultLevel is the family-wise false-alarm level of each sampling
	// check (binned counts, Kolmogorov–Smirnov): a correct law fails it with
	// probability at most 1e-6, whatever the seed.
	DefaultLevel = 1e-6

	// DefaultQuantileTolerance is the relative slack, in x, of the quantile
	// round trips: x = Quantile(p) may be off by 1e-12·(|x| + spread).
	DefaultQuantileTolerance = 1e-12

	// DefaultDensityTolerance is the relative tolerance with which the
	// integral of Density over a piece must match the CDF's increase.
	DefaultDensityTolerance = 1e-9

	// DefaultMomentTolerance is the relative tolerance of Mean and Variance
	// against their integrals of CDF and Survival.
	DefaultMomentTolerance = 1e-9

	// DefaultCFTolerance is the absolute tolerance of CF values.
	DefaultCFTolerance = 1e-12
)

func defaultConfig() config {
	return config{
		seed:        DefaultSeed,
		samples:     DefaultSamples,
		level:       DefaultLevel,
		quantileRel: DefaultQuantileTolerance,
		densityRel:  DefaultDensityTolerance,
		momentRel:   DefaultMomentTolerance,
		cfAbs:       DefaultCFTolerance,
	}
}

func (c *config) badOption(format string, args ...any) {
	c.bad = append(c.bad, fmt.Sprintf(format, args...))
}

func validTol(x float64) bool { return x >= 0 && !math.IsInf(x, 0) }

// WithSeed sets the seed of the random sources the sampling checks use
// (default DefaultSeed). Results are reproducible for a given seed.
func WithSeed(seed uint64) Option { return func(c *config) { c.seed = seed } }

// WithSamples sets the number of draws of the sampling checks (default
// DefaultSamples). It must be at least 1000: the sampling checks cannot be
// switched off.
func WithSamples(n int) Option {
	return func(c *config) {
		if n < 1000 {
			c.badOption("WithSamples(%d): must be >= 1000", n)
			return
		}
		c.samples = n
	}
}

// WithLevel sets the false-alarm level of each sampling check (default
// DefaultLevel); it must lie in (0, 0.01].
func WithLevel(level float64) Option {
	return func(c *config) {
		if !(level > 0 && level <= 0.01) {
			c.badOption("WithLevel(%v): must be in (0, 0.01]", level)
			return
		}
		c.level = level
	}
}

// WithTolerance sets the absolute error allowed in CDF and Survival values
// (default 0: exact laws are held to rounding error). Every check that
// compares probabilities widens by it: monotonicity, CDF + Survival = 1,
// quantile round trips, atom jumps, density integrals, moments (by
// cdfAbs times the range integrated) and sample bins. A law implementing
// dist.Estimated gets at least its Accuracy().CDFAbs.
func WithTolerance(cdfAbs float64) Option {
	return tolOption("WithTolerance", cdfAbs, 0.01, func(c *config) { c.cdfAbs = cdfAbs })
}

// WithSurvivalTolerance sets the relative error allowed in Survival where
// its value is at least floor (default 0, and for a dist.Estimated law at
// least its Accuracy().SurvivalRel and TailFloor). It widens the upper
// quantile round trips and the density integrals in the upper tail.
func WithSurvivalTolerance(rel, floor float64) Option {
	return func(c *config) {
		if !validTol(rel) || rel > 0.5 || !validTol(floor) || floor > 1 {
			c.badOption("WithSurvivalTolerance(%v, %v): rel must be in [0, 0.5], floor in [0, 1]", rel, floor)
			return
		}
		c.survivalRel, c.tailFloor = rel, floor
	}
}

// WithQuantileTolerance sets the relative slack in x of the quantile round
// trips (default DefaultQuantileTolerance): CDF(x + ε) >= p and
// CDF(x - ε) < p with ε = rel·(|x| + spread), spread being the interquartile
// range. Atoms are never crossed by the slack.
func WithQuantileTolerance(rel float64) Option {
	return tolOption("WithQuantileTolerance", rel, 1e-3, func(c *config) { c.quantileRel = rel })
}

// WithDensityTolerance sets the relative tolerance of the density checks
// (default DefaultDensityTolerance; the finite-difference check uses at
// least 1e-6).
func WithDensityTolerance(rel float64) Option {
	return tolOption("WithDensityTolerance", rel, 0.1, func(c *config) { c.densityRel = rel })
}

// WithMomentTolerance sets the relative tolerance of Mean and Variance
// against their integrals (default DefaultMomentTolerance).
func WithMomentTolerance(rel float64) Option {
	return tolOption("WithMomentTolerance", rel, 0.1, func(c *config) { c.momentRel = rel })
}

// WithCFTolerance sets the absolute tolerance of CF values (default
// DefaultCFTolerance), for laws whose characteristic function is computed
// numerically.
func WithCFTolerance(abs float64) Option {
	return tolOption("WithCFTolerance", abs, 0.01, func(c *config) { c.cfAbs = abs })
}

// tolOption returns an option that applies set when 0 <= x <= max and
// records a bad option otherwise.
func tolOption(name string, x, max float64, set func(*config)) Option {
	return func(c *config) {
		if !validTol(x) || x > max {
			c.badOption("%s(%v): must be in [0, %v]", name, x, max)
			return
		}
		set(c)
	}
}

// WithReference adds reference values of the survival function: at every x
// in xs, |Survival(x) - survival(x)| <= relTol·survival(x) is required (so
// where the reference is 0, Survival must be 0). Use it with values from a
// published table or an independent library, down into the far tail, to
// check that Survival is computed directly rather than as 1 - CDF. When the
// law implements dist.Estimated, the check also requires that its reported
// SurvivalRel bounds the error wherever the reference is >= TailFloor.
// xs is copied.
func WithReference(survival func(x float64) float64, xs []float64, relTol float64) Option {
	return withRef(true, "WithReference", survival, xs, relTol)
}

// WithCDFReference is WithReference for the CDF: at every x in xs,
// |CDF(x) - cdf(x)| <= relTol·cdf(x), which checks the lower tail.
func WithCDFReference(cdf func(x float64) float64, xs []float64, relTol float64) Option {
	return withRef(false, "WithCDFReference", cdf, xs, relTol)
}

func withRef(survival bool, name string, f func(float64) float64, xs []float64, relTol float64) Option {
	return func(c *config) {
		if f == nil || len(xs) == 0 || !validTol(relTol) {
			c.badOption("%s: needs a function, at least one x and a finite relTol >= 0", name)
			return
		}
		c.refs = append(c.refs, reference{survival: survival, f: f, xs: append([]float64(nil), xs...), relTol: relTol})
	}
}
