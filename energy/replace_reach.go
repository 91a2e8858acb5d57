package energy

import (
	"fmt"
	"math"
	"sync"
)

// Serviced is the part of a Site that a replacement plan serves: every
// node of every group, or, when some of a group's settings are left out
// (Site.Serviced), every node with the node law conditioned on the other
// settings. The practitioner's case is the out-of-reach share: a node that
// no gateway hears is found at commissioning (no uplink arrives) and is
// moved, given a better antenna or a gateway, not visited on a replacement
// schedule; left in, a share of a tenth of a per mille of short-lived
// unheard nodes sets a group's replacement every year. The plan then
// serves each group's nodes as if all were in reach, and the report says
// how many were expected out of reach.
//
// Serviced is an immutable value, safe for concurrent use. Its methods are
// Site's (Replacement, ComparePolicies, Schedule) for the nodes it serves.
type Serviced struct {
	envs   []servicedEnv
	counts []int64
	names  []string
	left   []float64 // per group, the share of nodes left out
	errs   *errMemo  // the served laws' stated CDF errors
	survs  *errMemo  // the served laws' survivals
	site   *Site     // the Site served (its rule's error estimate)
}

// errMemo keeps a figure of the served node laws at the times asked for
// (their stated CDF errors, or their survivals, at the block lengths of
// Replacement's and Schedule's policies, which repeat from call to call:
// Schedule's per-group search tries the periods its whole-site search
// tried, and the policies it finds are then evaluated at them), by shared
// node, group and time: at most maxErrMemo entries, beyond which a figure
// is computed without being kept. An entry is a function of its key alone,
// so the memo never changes an answer, whatever the order of calls or
// goroutines. Safe for concurrent use.
type errMemo struct {
	mu sync.Mutex
	m  map[errKey]float64
}

type errKey struct {
	e, g int
	t    float64
}

// maxErrMemo caps the entries of a Serviced's errMemo (about 40 bytes
// each).
const maxErrMemo = 1 << 16

// errAt returns the stated CDF error of the served law of group g given
// shared node e at t (s), at t alone. (A NodeLifetime's stated error over
// several times is the largest of its errors at each, so the largest of
// errAt over the times is that error; for a law with settings left out,
// reachLife, the error at each time bounds that time's.)
func (s Serviced) errAt(e, g int, t float64) float64 {
	return s.errs.get(errKey{e, g, t}, func() float64 { return s.envs[e].exact[g].cdfErr([]float64{t}) })
}

// survivalAt returns the survival at t (s) of the served law of group g
// given shared node e (the law's own, kept in s.survs).
func (s Serviced) survivalAt(e, g int, t float64) float64 {
	return s.survs.get(errKey{e, g, t}, func() float64 { return s.envs[e].exact[g].Survival(t) })
}

// get returns the figure of k, computing it with f when it is not kept
// (a nil memo keeps none).
func (m *errMemo) get(k errKey, f func() float64) float64 {
	if m != nil {
		m.mu.Lock()
		v, ok := m.m[k]
		m.mu.Unlock()
		if ok {
			return v
		}
	}
	v := f()
	if m != nil {
		m.mu.Lock()
		if len(m.m) < maxErrMemo {
			m.m[k] = v
		}
		m.mu.Unlock()
	}
	return v
}

type servicedEnv struct {
	w     float64
	exact []lifeAt    // per group, the exact conditional law served
	tab   []renewalAt // per group, the tabulated one, for renewal counts
}

// lifeAt is a conditional node law as the replacement arithmetic uses it:
// survivals, CDF and the stated CDF error at given times.
type lifeAt interface {
	CDF(t float64) float64
	Survival(t float64) float64
	cdfErr(ts []float64) float64
}

// exactLife is a NodeLifetime as a lifeAt.
type exactLife struct{ NodeLifetime }

func (l exactLife) cdfErr(ts []float64) float64 { return l.accuracyAt(ts).CDFAbs }

// reachLife is the law of a node given that it is not in the left-out
// settings: F = (F_all − u·F_out)/(1 − u), u the left-out share, F_out
// their law; its error (ε_all + u·ε_out)/(1 − u).
type reachLife struct {
	all, out lifeAt
	u        float64
}

func (l reachLife) CDF(t float64) float64 {
	return min(1, max(0, (l.all.CDF(t)-l.u*l.out.CDF(t))/(1-l.u)))
}

func (l reachLife) Survival(t float64) float64 {
	return min(1, max(0, (l.all.Survival(t)-l.u*l.out.Survival(t))/(1-l.u)))
}

func (l reachLife) cdfErr(ts []float64) float64 {
	return (l.all.cdfErr(ts) + l.u*l.out.cdfErr(ts)) / (1 - l.u)
}

// renewalAt is what the renewal counts of a served node take: its CDF (the
// tabulated law, conditioned as reachLife when settings are left out), its
// atom at the calendar limit and its stated CDF error.
type renewalAt struct {
	cdf      func(float64) float64
	name     string
	atom, at float64
	cdfAbs   float64
}

func (r renewalAt) renewals(fn string, horizon float64) (Renewals, error) {
	atom := r.atom
	if r.at > horizon {
		atom = 0
	}
	return latticeRenewals(fn, r.cdf, r.name, atom, r.at, horizon, replacementRenewalPoints)
}

// replacementRenewalPoints is the lattice of the renewal counts in
// Replacement: 1024 points, a stated lattice error of about 1e-5 on the
// demo's node laws, far below the error the tabulated node laws bring (n
// times their CDF error, about 1e-3), at a quarter of the default's cost.
const replacementRenewalPoints = 1024

// Serviced returns the nodes a replacement plan serves: left[g] lists the
// settings of group g (indices into its NodeSpec.Settings) whose nodes the
// plan leaves out (nil or empty: none; nil left: every node of every
// group). A group whose every setting is left out has no node served.
// Errors (wrapping ErrParam): a zero Site, a left of the wrong length, an
// index out of range or repeated.
func (s Site) Serviced(left [][]int) (Serviced, error) {
	const fn = "Site.Serviced"
	if len(s.envs) == 0 {
		return Serviced{}, paramErr(fn, "s", "zero Site", "must be built by NewSite")
	}
	G := len(s.names)
	if left != nil && len(left) != G {
		return Serviced{}, paramErr(fn, "left", len(left), fmt.Sprintf("must be nil or hold one list per group (%d)", G))
	}
	site := s
	v := Serviced{counts: make([]int64, G), names: s.names, left: make([]float64, G), errs: &errMemo{m: map[errKey]float64{}},
		survs: &errMemo{m: map[errKey]float64{}}, site: &site}
	outSpec := make([]*NodeSpec, G)
	for g := range G {
		v.counts[g] = s.spec.Groups[g].Count
		if left == nil || len(left[g]) == 0 {
			continue
		}
		spec := s.spec.Groups[g].Node
		seen := map[int]bool{}
		out := spec
		out.Settings = nil
		for _, i := range left[g] {
			if i < 0 || i >= len(spec.Settings) || seen[i] {
				return Serviced{}, paramErr(fn, fmt.Sprintf("left[%d]", g), i, fmt.Sprintf("must list distinct settings in [0, %d)", len(spec.Settings)))
			}
			seen[i] = true
			v.left[g] += spec.Settings[i].Weight
			out.Settings = append(out.Settings, spec.Settings[i])
		}
		if len(seen) == len(spec.Settings) || v.left[g] >= 1-1e-12 {
			v.left[g], v.counts[g] = 1, 0
			continue
		}
		for i := range out.Settings {
			out.Settings[i].Weight /= v.left[g]
		}
		outSpec[g] = &out
	}
	for _, e := range s.envs {
		se := servicedEnv{w: e.w, exact: make([]lifeAt, G), tab: make([]renewalAt, G)}
		for g := range G {
			all := exactLife{e.exact[g]}
			tb := e.laws[g]
			atom, at := 0.0, math.Inf(1)
			if as := tb.Atoms(); len(as) == 1 {
				atom, at = as[0].Mass, as[0].Value
			}
			r := renewalAt{cdf: tb.CDF, name: s.names[g], atom: atom, at: at, cdfAbs: tb.Accuracy().CDFAbs}
			se.exact[g] = all
			if outSpec[g] != nil {
				ol, err := NewNodeLifetime(*outSpec[g], Environment{Climate: s.spec.Climate, Conditions: e.cond})
				if err != nil {
					return Serviced{}, causeErr(fn, fmt.Sprintf("left[%d]", g), s.names[g], "the left-out settings' law", err)
				}
				u := v.left[g]
				out := exactLife{ol}
				se.exact[g] = reachLife{all: all, out: out, u: u}
				// The left-out law on the renewal lattice: 0 below its
				// 1e-15 point and 1 from its upper 1e-15 point (each
				// at most 1e-15 off), evaluated only between them.
				lo, hi := ol.Quantile(1e-15), ol.UpperQuantile(1e-15)
				outCDF := func(t float64) float64 {
					switch {
					case t < lo:
						return 0
					case t >= hi:
						return 1
					}
					return ol.CDF(t)
				}
				outAtom := 0.0
				for _, a := range ol.Atoms() {
					if a.Value == at {
						outAtom = a.Mass
					}
				}
				tcdf := tb.CDF
				r.cdf = func(t float64) float64 {
					return min(1, max(0, (tcdf(t)-u*outCDF(t))/(1-u)))
				}
				r.atom = max(0, (atom-u*outAtom)/(1-u))
				r.cdfAbs = (r.cdfAbs + u*(ol.Accuracy().CDFAbs+1e-15)) / (1 - u)
			}
			se.tab[g] = r
		}
		v.envs = append(v.envs, se)
	}
	return v, nil
}

// ruleError returns the Site's estimated error of its rule for kind's
// mixture (kindFleet, or kindFirst of group g) of the served laws whose
// probits at the rule's nodes are Z (a group left out wholly: −probitClamp,
// no flat node): see Site.ruleErrorOf. The Site's counts are the served
// ones but for such groups. 0 for a zero Site.
func (s Serviced) ruleError(Z []float64, kind lawKind, g int) float64 {
	if s.site == nil || len(s.site.envs) == 0 {
		return 0
	}
	return s.site.ruleErrorOf(Z, kind, g)
}

// Left returns the share of group g's nodes the plan leaves out (0 to 1;
// NaN for a group index out of range).
func (s Serviced) Left(g int) float64 {
	if g < 0 || g >= len(s.left) {
		return math.NaN()
	}
	return s.left[g]
}
