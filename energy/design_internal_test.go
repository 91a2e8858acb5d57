package energy

import (
	"fmt"
	"math"
	"sync"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/internal/quad"
)

// The design search's month tables, shared through monthCache, give the
// same lifetime laws to the bit as newNode computing them afresh (the
// oracle: NewNodeLifetime without a table), for the invented site of
// tabTestSpec (three groups: deployment months 0, 3 and 9, a seasonal
// climate) at several batch factors and temperature offsets; eight
// goroutines filling one cache give the same tables as one (run with
// -race), and the cache holds one table per Thermal, month and shifted
// climate.
func TestMonthCacheAsFresh(t *testing.T) {
	spec := tabTestSpec(t)
	conds := []Conditions{{BatchFactor: 1}, {BatchFactor: 0.95, TemperatureOffset: -6}, {BatchFactor: 1.04, TemperatureOffset: 5}, {BatchFactor: 0.97, TemperatureOffset: 5}}
	cache := &monthCache{}
	var wg sync.WaitGroup
	for range 8 {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for _, g := range spec.Groups {
				for _, c := range conds {
					_, err := cache.get("test", g.Node, Environment{Climate: spec.Climate, Conditions: c})
					assert.NoError(t, err)
				}
			}
		}()
	}
	wg.Wait()
	// Three deployment months × three offsets (two conditions share +5 °C).
	assert.Len(t, cache.entries, 9)
	for _, g := range spec.Groups {
		for _, c := range conds {
			t.Run(fmt.Sprintf("%s b=%g dT=%+g", g.Name, c.BatchFactor, c.TemperatureOffset), func(t *testing.T) {
				env := Environment{Climate: spec.Climate, Conditions: c}
				want, err := NewNodeLifetime(g.Node, env)
				require.NoError(t, err)
				env.months, err = cache.get("test", g.Node, env)
				require.NoError(t, err)
				require.NotNil(t, env.months)
				got, err := NewNodeLifetime(g.Node, env)
				require.NoError(t, err)
				assert.Equal(t, want.Warnings(), got.Warnings())
				lo, hi := want.Quantile(1e-6), want.Quantile(1-1e-6)
				for i := 0; i <= 200; i++ {
					x := lo + (hi-lo)*float64(i)/200
					assert.Equal(t, want.CDF(x), got.CDF(x), "t = %g", x)
					assert.Equal(t, want.Survival(x), got.Survival(x), "t = %g", x)
				}
			})
		}
	}
	// No Thermal: no table, and a nil cache computes one afresh.
	noTh := spec.Groups[0].Node
	noTh.Thermal = nil
	mt, err := cache.get("test", noTh, Environment{Conditions: conds[0]})
	require.NoError(t, err)
	assert.Nil(t, mt)
	var none *monthCache
	env := Environment{Climate: spec.Climate, Conditions: conds[1]}
	fresh, err := none.get("test", spec.Groups[0].Node, env)
	require.NoError(t, err)
	cached, err := cache.get("test", spec.Groups[0].Node, env)
	require.NoError(t, err)
	assert.Equal(t, *cached, *fresh)
}

// The search's figure with a Site's rule (Site.SharedRule) is the Site's
// own node law at the date (the oracle: Site.NodeLifetime, whose
// conditional laws are tables of the same NewNodeLifetime laws), within
// the Site law's stated CDF error, for the three groups of tabTestSpec at
// the dates where their laws reach 1 %, 10 % and 50 %. The fixed 7 × 3
// Gauss–Hermite rule's figure differs from the Site's by the rules'
// difference, logged here (the site's rule meets its target of 0.01;
// measured: see the log).
func TestSearchFigureAsSite(t *testing.T) {
	spec := tabTestSpec(t)
	site, err := NewSite(spec)
	require.NoError(t, err)
	rule := site.SharedRule()
	require.Positive(t, rule.Len())
	conds, w := rule.Nodes()
	sum := 0.0
	for _, x := range w {
		sum += x
	}
	assert.InDelta(t, 1, sum, 1e-12)
	assert.Len(t, conds, rule.Len())
	fixed, err := FixedSharedRule(spec.Shared)
	require.NoError(t, err)
	assert.Equal(t, 21, fixed.Len())
	worst := 0.0
	for g, sg := range spec.Groups {
		law, err := site.NodeLifetime(g)
		require.NoError(t, err)
		stated := law.(dist.Estimated).Accuracy().CDFAbs
		for _, q := range []float64{0.01, 0.1, 0.5} {
			T := law.Quantile(q)
			target := Target{Kind: NodeFlat, Date: T, Level: 0.5}
			tl, err := newTargetLaws("test", sg.Node, spec.Climate, rule, &monthCache{}, T)
			require.NoError(t, err)
			p, err := tl.prob(target, 1)
			require.NoError(t, err)
			assert.InDelta(t, law.CDF(T), p, stated, "group %s at its %g point", sg.Name, q)
			tf, err := newTargetLaws("test", sg.Node, spec.Climate, fixed, &monthCache{}, T)
			require.NoError(t, err)
			pf, err := tf.prob(target, 1)
			require.NoError(t, err)
			worst = math.Max(worst, math.Abs(pf-p))
		}
	}
	t.Logf("the fixed 7 × 3 rule against the site's rule of %d nodes: largest difference in p %.2g", rule.Len(), worst)
}

// decide gives the full p's answer (the oracle: figure with every law
// built) at dates from where p is far below the level to far above it,
// for a node and a group target, with the site's rule and the fixed rule;
// far from the level it builds fewer laws than the rule has nodes. The
// fact it rests on is checked too: at each temperature offset the
// conditional CDF at the date does not rise with the batch factor.
func TestDecideAsFull(t *testing.T) {
	spec := tabTestSpec(t)
	site, err := NewSite(spec)
	require.NoError(t, err)
	fixed, err := FixedSharedRule(spec.Shared)
	require.NoError(t, err)
	for _, rule := range []SharedRule{site.SharedRule(), fixed} {
		for g, sg := range spec.Groups {
			law, err := site.NodeLifetime(g)
			require.NoError(t, err)
			saved := 0
			for _, q := range []float64{1e-4, 0.003, 0.009, 0.0105, 0.03, 0.3, 0.9} {
				T := law.Quantile(q)
				for _, target := range []Target{{Kind: NodeFlat, Date: T, Level: 0.01}, {Kind: GroupFlat, Date: T, Level: 0.3}} {
					count := int64(30)
					full, err := newTargetLaws("test", sg.Node, spec.Climate, rule, nil, T)
					require.NoError(t, err)
					p, err := full.prob(target, count)
					require.NoError(t, err)
					lazy, err := newTargetLaws("test", sg.Node, spec.Climate, rule, nil, T)
					require.NoError(t, err)
					meets, err := lazy.decide(target, count)
					require.NoError(t, err)
					assert.Equal(t, p <= target.Level, meets, "%s, %v at the law's %g point: p = %g", rule, target.Kind, q, p)
					built := 0
					for _, l := range lazy.laws {
						if l.n != nil {
							built++
						}
					}
					saved += rule.Len() - built
					// Monotone in the batch factor at each temperature offset.
					for e := range full.cdf {
						if h := full.higher[e]; h >= 0 {
							assert.LessOrEqual(t, full.cdf[h], full.cdf[e], "%s: node %d against %d", rule, h, e)
						}
					}
				}
			}
			assert.Positive(t, saved, "%s, group %s: the bounds decide some dates with fewer laws", rule, sg.Name)
		}
	}
}

// decide with the laws of the same choice at longer and shorter intervals
// as bounds (what the search passes it) gives the full p's answer (the
// oracle: the figure with every law built) for group A of tabTestSpec at
// intervals of 0.7 to 1.4 times its own, at dates where the middle
// interval's p is far below the level to far above it, for a node and a
// group target, with neighbours fully built and neighbours decided (some
// laws built); over the dates it builds fewer laws than without them. The
// fact it rests on is checked too: no node's CDF at the date rises with
// the interval.
func TestDecideWithNeighboursAsFull(t *testing.T) {
	spec := tabTestSpec(t)
	site, err := NewSite(spec)
	require.NoError(t, err)
	rule := site.SharedRule()
	law, err := site.NodeLifetime(0)
	require.NoError(t, err)
	node := spec.Groups[0].Node
	at := func(f float64) NodeSpec {
		n := node
		n.Settings = []NodeSetting{{Weight: 1, Cycle: tabTestCycle(24*Hour*f, 8*MicroAmp, 4)}}
		return n
	}
	factors := []float64{0.7, 0.85, 1, 1.2, 1.4}
	const mid = 2
	built := func(tl *targetLaws) int {
		n := 0
		for _, l := range tl.laws {
			if l.n != nil {
				n++
			}
		}
		return n
	}
	with, without := 0, 0
	for _, q := range []float64{1e-4, 0.003, 0.009, 0.0105, 0.03, 0.3, 0.9} {
		T := law.Quantile(q)
		for _, target := range []Target{{Kind: NodeFlat, Date: T, Level: 0.01}, {Kind: GroupFlat, Date: T, Level: 0.3}} {
			const count = 30
			// The laws at every factor, each finished by fill: every law
			// built (prob), or as decide leaves them.
			lawsAt := func(fill func(*targetLaws) error) []*targetLaws {
				out := make([]*targetLaws, len(factors))
				for i, f := range factors {
					out[i], err = newTargetLaws("test", at(f), spec.Climate, rule, nil, T)
					require.NoError(t, err)
					require.NoError(t, fill(out[i]))
				}
				return out
			}
			full := lawsAt(func(tl *targetLaws) error { _, err := tl.prob(target, count); return err })
			decided := lawsAt(func(tl *targetLaws) error { _, err := tl.decide(target, count); return err })
			for i := 1; i < len(full); i++ {
				for e := range full[i].cdf {
					assert.LessOrEqual(t, full[i].cdf[e], full[i-1].cdf[e], "node %d at %g against %g of the interval", e, factors[i], factors[i-1])
				}
			}
			p, err := full[mid].prob(target, count)
			require.NoError(t, err)
			without += built(decided[mid])
			for name, nb := range map[string][]*targetLaws{"full": full, "decided": decided} {
				lazy, err := newTargetLaws("test", at(factors[mid]), spec.Climate, rule, nil, T)
				require.NoError(t, err)
				lazy.shorter, lazy.longer = nb[:mid], nb[mid+1:]
				meets, err := lazy.decide(target, count)
				require.NoError(t, err)
				assert.Equal(t, p <= target.Level, meets, "neighbours %s, %v at the law's %g point: p = %g", name, target.Kind, q, p)
				if name == "decided" {
					with += built(lazy)
				}
			}
		}
	}
	t.Logf("laws built to decide: %d with decided neighbours, %d without", with, without)
	assert.Less(t, with, without)
}

// The shared rule's stated error for a candidate's figure (a rule from
// Site.GroupRule: the Site's probe on the candidate's own probits) against
// the rule's true error, measured from a reference integral over the
// shared factors (the oracle: 15 Gauss–Hermite nodes in the batch factor,
// whose conditional laws are smooth in it, and internal/quad's adaptive
// Gauss–Kronrod over the temperature offset on ±8 standard deviations to
// 1e-8, which bisects around the lifetime's kinks in it), for two groups
// of tabTestSpec at the dates where their laws reach 1 % and 10 %, for a
// node and for the first failure of the group's nodes: the reference lies
// within the rule's and the node laws' stated errors (and the reference's
// own, 1e-8) of the search's figure.
func TestRuleErrorAgainstReference(t *testing.T) {
	if testing.Short() {
		t.Skip("a reference integral over the shared factors: some thousands of node laws")
	}
	spec := tabTestSpec(t)
	site, err := NewSite(spec)
	require.NoError(t, err)
	bz, bw := hermiteNodes(spec.Shared.Batch, 15)
	for _, g := range []int{0, 1} {
		sg := spec.Groups[g]
		rule, err := site.GroupRule(g)
		require.NoError(t, err)
		law, err := site.NodeLifetime(g)
		require.NoError(t, err)
		for _, q := range []float64{0.01, 0.1} {
			T := law.Quantile(q)
			// F(T | batch, temperature) at each batch node, for the offset z·σ_T.
			conds := func(z float64) []float64 {
				out := make([]float64, len(bz))
				for i, b := range bz {
					l, err := NewNodeLifetime(sg.Node, Environment{Climate: spec.Climate, Conditions: Conditions{BatchFactor: 1 + b*spec.Shared.Batch, TemperatureOffset: z * spec.Shared.Temperature}})
					require.NoError(t, err)
					out[i] = l.CDF(T)
				}
				return out
			}
			for _, target := range []Target{{Kind: NodeFlat, Date: T, Level: 0.5}, {Kind: GroupFlat, Date: T, Level: 0.5}} {
				count := sg.Count
				ref, err := quad.Adaptive(func(z float64) float64 {
					s := 0.0
					for i, f := range conds(z) {
						s += bw[i] * nodeFigure(target, count, f)
					}
					return normPDF(z) * s
				}, -8, 8, quad.Options{AbsTol: 1e-8})
				require.NoError(t, err)
				tl, err := newTargetLaws("test", sg.Node, spec.Climate, rule, nil, T)
				require.NoError(t, err)
				p, err := tl.prob(target, count)
				require.NoError(t, err)
				ruleE, nodeE := tl.ruleError(target), tl.nodeError(target, count)
				assert.Positive(t, ruleE)
				assert.InDelta(t, ref.Value, p, ruleE+nodeE+ref.Error+1e-8, "group %s, %v at the %g point", sg.Name, target.Kind, q)
				t.Logf("group %s, %v at the node law's %g point: |p − reference| %.2g, stated rule error %.2g (node laws %.2g)", sg.Name, target.Kind, q, math.Abs(p-ref.Value), ruleE, nodeE)
			}
		}
	}
}

// nodeError's laws' errors, given their settings' own probits
// (settingProbits, so that accuracyAtZ passes over settings), are those of
// accuracyAt measuring every setting (the oracle), for the groups of
// tabTestSpec and the seven-setting node of tabManySpec at the dates of
// their laws' 1e-4 to 0.9 points, at several shared conditions.
func TestSettingProbitsAsFull(t *testing.T) {
	spec := tabTestSpec(t)
	many, manyClim := tabManySpec(t)
	nodes := []NodeSpec{many}
	clims := []*Climate{manyClim}
	for _, g := range spec.Groups {
		nodes, clims = append(nodes, g.Node), append(clims, spec.Climate)
	}
	passed := 0
	for i, node := range nodes {
		for _, c := range []Conditions{{BatchFactor: 1}, {BatchFactor: 0.95, TemperatureOffset: -3}, {BatchFactor: 1.05, TemperatureOffset: 4}} {
			l, err := NewNodeLifetime(node, Environment{Climate: clims[i], Conditions: c})
			require.NoError(t, err)
			for _, q := range []float64{1e-4, 0.01, 0.3, 0.9} {
				T := l.Quantile(q)
				full := l.accuracyAt([]float64{T})
				got, n := l.accuracyAtZPruned([]float64{T}, settingProbits(l, T), true)
				passed += n
				assert.Equal(t, full.CDFAbs, got.CDFAbs, "node %d at %+v, the %g point", i, c, q)
			}
		}
	}
	assert.Positive(t, passed, "some settings passed over")
	t.Logf("settings passed over: %d", passed)
}
