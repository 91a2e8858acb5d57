// Package disttest checks that an implementation of dist.Law keeps the
// law's contract, in the manner of testing/fstest.TestFS: Check runs every
// check and returns one error that joins every failure (nil when the law
// passes). Each failure is a *Failure saying which check failed, where, what
// was expected and what the law gave.
//
// Check works only through dist.Law and the optional interfaces
// dist.Atomic, dist.Densitied, dist.CharFunc and dist.Estimated; no law type
// is treated specially, and no option switches a check off. Options only
// set the seed and the sample size, add reference values, or loosen
// tolerances for numerically computed laws (an Estimated law's reported
// Accuracy is used as a floor automatically).
//
// The checks, by the name they report (Failure.Check):
//
//   - support: Support is an interval (lo <= hi, not NaN); the mean lies in
//     it; the variance is >= 0, 0 for a one-point support and at most
//     (hi-lo)²/4 on a bounded one.
//   - special: the special values documented on dist.Law: NaN in gives NaN
//     out (CDF, Survival, Quantile, UpperQuantile, Density, CF); CDF(-Inf) =
//     0, CDF(+Inf) = 1, Survival(-Inf) = 1, Survival(+Inf) = 0; Quantile and
//     UpperQuantile are NaN outside [0, 1]; Quantile(0) = UpperQuantile(1) =
//     lo and Quantile(1) = UpperQuantile(0) = hi; Density(±Inf) = 0.
//   - range: on a grid spanning the law — quantiles from both ends at levels
//     from 1e-300 to 1/2 and the midpoints between them, the support's ends,
//     points beyond them, every atom and the floats next to it — CDF and
//     Survival lie in [0, 1], and are 0 and 1 below the support, 1 and 0 at
//     and above its upper end.
//   - monotone: along that grid CDF never decreases and Survival never
//     increases.
//   - complement: CDF + Survival = 1 within 1e-12 (absolute) on the grid.
//   - reference: Survival (WithReference) or CDF (WithCDFReference) against
//     given values, relative to them: the check of far-tail accuracy. For an
//     Estimated law, also that its reported SurvivalRel bounds the error
//     wherever the reference is at least its TailFloor.
//   - quantile, upper-quantile: at levels from 1e-300 to 1 - 1e-16 and at
//     the cumulative masses on both sides of every atom, x = Quantile(p) is
//     in the support, monotone in p and inverts the CDF: CDF(x + ε) >= p and
//     CDF(x - ε) < p, with ε = 1e-12·(|x| + interquartile range) but never
//     stepping over an atom; likewise UpperQuantile with Survival.
//   - atoms: Atoms are sorted, finite, in the support, farther apart than
//     dist.AtomMergeTolerance, with masses in (0, 1] summing to at most 1,
//     returned as a fresh slice; each is a jump of CDF and Survival by its
//     mass; and the quantiles land on it exactly:
//     Quantile(CDF(v⁻) + m/2) = v and UpperQuantile(Survival(v) + m/2) = v,
//     while Quantile(CDF(v)) and UpperQuantile(Survival(v)) are v (to ε), not
//     the next atom.
//   - mass: the atoms' masses plus the integral of Density sum to 1. The
//     integral is the library's adaptive Gauss–Kronrod quadrature (internal/quad) over
//     pieces cut at quantiles from 1e-12 to 1/2 from both ends and at the
//     atoms (re-integrated on other splits before a mismatch is reported);
//     the continuous mass beyond the outer pieces is read from CDF and
//     Survival.
//   - density: Density is >= 0 and 0 outside the support; on every piece its
//     integral plus the atoms in the piece equals P(a < X <= b) (from CDF
//     below the median and Survival above it, so that tail pieces are
//     compared relative to their own size: a Survival computed as 1 - CDF
//     fails here); and at interior quantiles away from atoms it matches a
//     central difference of the CDF (Richardson-extrapolated, skipped where
//     the CDF is not smooth at the step's scale).
//   - moments: a finite Mean equals c + ∫_c^∞ S - ∫_{-∞}^c F, and a finite
//     Variance 2∫_c^∞ (x-c)S + 2∫_{-∞}^c (c-x)F - (mean-c)², with c the
//     median, integrated to probability 1e-30 in unbounded tails. For a law
//     on [0, ∞) with c = 0 these are E[X] = ∫S dx and Var = 2∫x·S dx - E[X]².
//   - cf: CF(0) = 1, |CF(t)| <= 1, CF(-t) = conj(CF(t)); mean and variance
//     from central differences of CF at 0 (loose tolerances); and, where
//     atoms and density account for all the mass, CF(t) against
//     Σ m·exp(itv) + ∫exp(itx)·Density(x) dx at two values of t.
//   - rand: with a source seeded by WithSeed (default DefaultSeed), samples
//     (WithSamples, default 20,000) are finite and in the support; the same
//     seed gives the same samples; counts in about 30 bins cut at quantiles
//     (every 0.05, and 1e-3, 0.01, 0.025 in the tails; each atom above 1 %
//     a bin of its own) lie within exact binomial
//     bounds — tail probabilities from gonum's regularised incomplete beta
//     function, not a normal approximation — at family-wise level 1e-6
//     (Bonferroni over the bins); and the Kolmogorov–Smirnov distance is
//     within the Dvoretzky–Kiefer–Wolfowitz bound at level 1e-6 (Massart
//     1990). The seed is fixed, so the result is reproducible; the level
//     makes a spurious failure for a correct law a one-in-a-million event
//     for any seed, while a sampler off by a few per cent is caught.
//   - concurrency: CDF, Survival, Quantile and Rand called from three
//     goroutines at once give the serial results.
//
// A method that panics is reported as a failure of the check that called
// it; the remaining checks still run.
//
// Levels. Quantiles are taken at levels down to 1e-300 from both ends,
// except below a tail floor (WithSurvivalTolerance, or an Estimated law's
// TailFloor), where a numerically computed law is not accurate.
//
// Tolerances. Exact laws are held to rounding error: monotonicity is
// strict, CDF + Survival = 1 to 1e-12, quantile round trips to a few units
// in the last place of p, densities to 1e-9 of each piece's mass (1e-6 for
// the finite difference), moments to 1e-9. WithTolerance(cdfAbs) widens
// every probability comparison by cdfAbs; WithSurvivalTolerance,
// WithQuantileTolerance, WithDensityTolerance, WithMomentTolerance and
// WithCFTolerance widen the others. A dist.Estimated law's Accuracy()
// CDFAbs, SurvivalRel and TailFloor are applied as floors.
package disttest
