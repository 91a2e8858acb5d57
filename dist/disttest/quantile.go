package disttest

import (
	"fmt"
	"math"
	"slices"

	"github.com/joulelaw/joulelaw/dist"
)

// quantileLevels returns the probabilities at which Quantile and
// UpperQuantile are inverted: levels(), their complements, and for every
// examined atom the cumulative masses at both ends of its jump.
func (c *checker) quantileLevels(upper bool) []float64 {
	var ps []float64
	for _, p := range c.levels() {
		ps = append(ps, p)
		if p >= 1e-16 {
			ps = append(ps, 1-p)
		}
	}
	for _, a := range c.sampled {
		if upper {
			ps = append(ps, c.law.Survival(a.Value), c.law.Survival(down(a.Value)))
		} else {
			ps = append(ps, c.law.CDF(a.Value), c.law.CDF(down(a.Value)))
		}
	}
	out := ps[:0]
	for _, p := range ps {
		if p > 0 && p < 1 {
			out = append(out, p)
		}
	}
	slices.Sort(out)
	return slices.Compact(out)
}

// probes returns the points just below and just above x used for the
// round trips: x ∓ ε with ε = rel·(|x| + spread), except that the lower
// probe is never below the nearest atom under x and the upper probe never
// reaches the nearest atom above x, so the slack never steps over a point
// mass. The lower probe is always strictly below x.
func (c *checker) probes(x float64) (xl, xu float64) {
	e := c.cfg.quantileRel * (math.Abs(x) + c.spread)
	xl, xu = down(x-e), x+e
	below, above, _ := c.neighbourAtoms(x)
	if xl < below {
		xl = below
	}
	if xu >= above {
		xu = down(above)
	}
	if xu < x {
		xu = x
	}
	return xl, xu
}

// checkQuantile: for each level p, x = Quantile(p) lies in the support, is
// non-decreasing in p, and inverts the CDF: CDF(x + ε) >= p and
// CDF(x - ε) < p, within the probability slack (probes explains ε).
func (c *checker) checkQuantile() { c.checkInversion(false) }

// checkUpperQuantile: for each level q, x = UpperQuantile(q) lies in the
// support, is non-increasing in q, and inverts Survival:
// Survival(x + ε) <= q and Survival(x - ε) > q, within the survival slack.
func (c *checker) checkUpperQuantile() { c.checkInversion(true) }

// checkInversion is checkQuantile (upper false) or checkUpperQuantile.
func (c *checker) checkInversion(upper bool) {
	l := c.law
	check, name, sym, fname := CheckQuantile, "Quantile", "p", "CDF"
	inv, fn, slack := c.quantile, l.CDF, c.probSlack
	prev, dir := math.Inf(-1), "non-decreasing"
	if upper {
		check, name, sym, fname = CheckUpper, "UpperQuantile", "q", "Survival"
		inv, fn, slack = c.upperQuantile, l.Survival, c.survSlack
		prev, dir = math.Inf(1), "non-increasing"
	}
	for _, p := range c.quantileLevels(upper) {
		x := inv(p)
		at := fmt.Sprintf("%s = %s", sym, g(p))
		if math.IsNaN(x) || x < c.lo || x > c.hi {
			c.fail(check, at, fmt.Sprintf("%s in the support [%s, %s]", name, g(c.lo), g(c.hi)), g(x))
			continue
		}
		if (!upper && x < prev) || (upper && x > prev) {
			c.fail(check, at, fmt.Sprintf("%s %s in %s (after %s)", name, dir, sym, g(prev)), g(x))
		}
		prev = x
		if math.IsInf(x, 0) {
			c.fail(check, at, fmt.Sprintf("a finite value for 0 < %s < 1", sym), g(x))
			continue
		}
		xl, xu := c.probes(x)
		s := slack(p)
		at = fmt.Sprintf("%s, x = %s(%s) = %s", at, name, sym, g(x))
		hiVal, loVal := fn(xu), fn(xl)
		if !upper {
			if !(hiVal >= p-s) {
				c.fail(check, at, fmt.Sprintf("CDF(%s) >= p", g(xu)), g(hiVal))
			}
			if !(loVal < p+s) {
				c.fail(check, at, fmt.Sprintf("CDF(%s) < p (no smaller x reaches p)", g(xl)), g(loVal))
			}
			continue
		}
		if !(hiVal <= p+s) {
			c.fail(check, at, fmt.Sprintf("%s(%s) <= q", fname, g(xu)), g(hiVal))
		}
		if !(loVal > p-s) {
			c.fail(check, at, fmt.Sprintf("%s(%s) > q (no smaller x reaches q)", fname, g(xl)), g(loVal))
		}
	}
}

// checkAtoms, for an Atomic law: atoms are strictly increasing, finite, in
// the support, farther apart than dist.AtomMergeTolerance, with masses in
// (0, 1] summing to at most 1; Atoms returns a fresh slice; each atom is a
// jump of the CDF and of Survival by its mass; and the quantiles land on it
// exactly: Quantile(CDF(v⁻) + m/2) = v and UpperQuantile(Survival(v) + m/2)
// = v, while Quantile(CDF(v)) and UpperQuantile(Survival(v)) lie in
// [v, v + ε] (not at the next atom).
func (c *checker) checkAtoms() {
	if !c.atomic {
		return
	}
	l := c.law
	sum := 0.0
	for i, a := range c.atoms {
		at := fmt.Sprintf("Atoms()[%d] = {%s, %s}", i, g(a.Value), g(a.Mass))
		if !finite(a.Value) || a.Value < c.lo || a.Value > c.hi {
			c.fail(CheckAtoms, at, "a finite value in the support", g(a.Value))
		}
		if !(a.Mass > 0 && a.Mass <= 1) {
			c.fail(CheckAtoms, at, "a mass in (0, 1]", g(a.Mass))
		}
		if i > 0 {
			p := c.atoms[i-1].Value
			if !(a.Value > p) {
				c.fail(CheckAtoms, at, fmt.Sprintf("a value above the previous atom's %s", g(p)), g(a.Value))
			} else if a.Value-p <= 1e-12*max(math.Abs(a.Value), math.Abs(p)) {
				c.fail(CheckAtoms, at, fmt.Sprintf("atoms farther apart than AtomMergeTolerance (previous %s)", g(p)), g(a.Value))
			}
		}
		sum += a.Mass
	}
	if sum > 1+1e-12 {
		c.fail(CheckAtoms, "the sum of the atoms' masses", "<= 1", g(sum))
	}
	if al, ok := l.(dist.Atomic); ok && len(c.atoms) > 0 {
		want := c.atoms[0]
		first := al.Atoms()
		first[0] = dist.Atom{Value: math.NaN(), Mass: -1}
		if second := al.Atoms(); len(second) == 0 || second[0] != want {
			c.fail(CheckAtoms, "Atoms() after changing the slice it returned", "a fresh slice each call",
				"a slice shared with the law")
		}
		first[0] = want
		c.atoms[0] = want
	}
	for _, a := range c.sampled {
		v, m := a.Value, a.Mass
		at := "atom " + g(v)
		s := 2*c.cfg.cdfAbs + 8*eps
		if j := l.CDF(v) - l.CDF(down(v)); !(math.Abs(j-m) <= s) {
			c.fail(CheckAtoms, at, fmt.Sprintf("CDF(v) - CDF(v⁻) = mass %s", g(m)), g(j))
		}
		if j := l.Survival(down(v)) - l.Survival(v); !(math.Abs(j-m) <= s) {
			c.fail(CheckAtoms, at, fmt.Sprintf("Survival(v⁻) - Survival(v) = mass %s", g(m)), g(j))
		}
		if m <= 10*s {
			continue // too light to be told apart from the CDF's error
		}
		if p := l.CDF(down(v)) + m/2; p > 0 && p < 1 {
			if x := l.Quantile(p); x != v {
				c.fail(CheckAtoms, fmt.Sprintf("%s, Quantile(CDF(v⁻) + mass/2 = %s)", at, g(p)), g(v), g(x))
			}
		}
		if q := l.Survival(v) + m/2; q > 0 && q < 1 {
			if x := l.UpperQuantile(q); x != v {
				c.fail(CheckAtoms, fmt.Sprintf("%s, UpperQuantile(Survival(v) + mass/2 = %s)", at, g(q)), g(v), g(x))
			}
		}
		e := c.cfg.quantileRel * (math.Abs(v) + c.spread)
		if p := l.CDF(v); p > 0 && p < 1 {
			if x := l.Quantile(p); !(x >= v && x <= v+e) {
				c.fail(CheckAtoms, fmt.Sprintf("%s, Quantile(CDF(v) = %s)", at, g(p)), fmt.Sprintf("%s (+ at most %s)", g(v), g(e)), g(x))
			}
		}
		if q := l.Survival(v); q > 0 && q < 1 {
			if x := l.UpperQuantile(q); !(x >= v && x <= v+e) {
				c.fail(CheckAtoms, fmt.Sprintf("%s, UpperQuantile(Survival(v) = %s)", at, g(q)), fmt.Sprintf("%s (+ at most %s)", g(v), g(e)), g(x))
			}
		}
	}
}
