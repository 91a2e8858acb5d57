package ieee802154

// FrameAtoms and FramePaths export the structural counts to the tests.
func FrameAtoms(n Node, forCycle bool) float64 { return n.frameAtoms(forCycle) }
func FramePaths(n Node) float64                { return n.framePaths() }
