package ieee802154

import (
	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/energy"
)

// FrameAtoms and FramePaths export the structural counts to the tests.
func FrameAtoms(n Node, forCycle bool) float64 { return n.frameAtoms(forCycle) }
func FramePaths(n Node) float64                { return n.framePaths() }

// PrunedPaths runs the pruned enumeration at tol, whatever the path
// count: the paths kept (with the worst-case path when mass was pruned)
// and the pruned mass; ok false when more than limit paths are kept.
func PrunedPaths(n Node, tol float64, limit int) (kept int, pruned float64, ok bool) {
	tl, err := n.Timeline()
	if err != nil {
		panic(err) // panic-ok: tests pass valid nodes
	}
	pp, ok := n.prunePaths(tl, tol, limit)
	return len(pp.kept), pp.pruned, ok
}

// PrunedFrameEnergy is Node.FrameEnergy built by the pruned enumeration
// at tol, whatever the path count, with the pruned mass.
func PrunedFrameEnergy(n Node, tol float64) (dist.Law, float64, error) {
	tl, err := n.Timeline()
	if err != nil {
		return nil, 0, err
	}
	pp, _ := n.prunePaths(tl, tol, 1<<30)
	st, err := n.prunedStage(tl, pp)
	if err != nil {
		return nil, 0, err
	}
	cy, err := energy.NewCycle(st, dist.MustPointMass(tl.MaxFrameTime), 0)
	if err != nil {
		return nil, 0, err
	}
	return withPathError(cy.Energy(), pp.pruned, true), pp.pruned, nil
}
