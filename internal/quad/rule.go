package quad

// The Gauss–Kronrod 7–15 rule on [−1, 1] (QUADPACK's DQK15, Piessens et
// al. 1983): the Kronrod nodes of the positive half, largest first, ending
// with the centre 0; the Kronrod weights of those nodes; and the Gauss
// weights of the 7-point Gauss–Legendre nodes, which are the Kronrod nodes
// at odd indices (1, 3, 5 and the centre 7). The tests check the values
// against the Gauss–Legendre nodes and weights of gonum, and check that
// the Kronrod rule integrates x^0 … x^22 and the Gauss rule x^0 … x^13
// exactly. A function, not package variables: nothing at package level
// can be changed.
func gk15() (gkNodes, gkKronrod [8]float64, gkGauss [4]float64) {
	gkNodes = [8]float64{
		0.991455371120812639206854697526329,
		0.949107912342758524526189684047851,
		0.864864423359769072789712788640926,
		0.741531185599394439863864773280788,
		0.586087235467691130294144845693013,
		0.405845151377397166906606412076961,
		0.207784955007898467600689403773245,
		0,
	}
	gkKronrod = [8]float64{
		0.022935322010529224963732008058970,
		0.063092092629978553290700663189204,
		0.104790010322250183839876322541518,
		0.140653259715525918745189590510238,
		0.169004726639267902826583426598550,
		0.190350578064785409913256402421014,
		0.204432940075298892414161999234649,
		0.209482141084727828012999174891714,
	}
	gkGauss = [4]float64{
		0.129484966168869693270611432679082,
		0.279705391489276667901467771423780,
		0.381830050505118944950369775488975,
		0.417959183673469387755102040816327,
	}
	return gkNodes, gkKronrod, gkGauss
}

// gk7 returns the Gauss–Kronrod 3–7 rule on [−1, 1] in gk15's layout: the
// Kronrod nodes of the positive half, largest first, ending with the
// centre; their Kronrod weights; and the weights of the 3-point
// Gauss–Legendre nodes √(3/5) and 0 (5/9 and 8/9), the Kronrod nodes at
// odd indices. The two added nodes are the roots of the Stieltjes
// polynomial x⁴ − (10/9)·x² + 1085/6237 (orthogonal to P₃(x)·x^k, k < 4:
// Kronrod 1964; Monegato, SIAM Review 24 (1982) 137–158), x² = (10/9 ±
// √(100/81 − 4340/6237))/2, and the weights make the rule exact for x^0 …
// x^6; both were computed to 36 digits with math/big, and the tests check
// the roots and that the rule integrates x^0 … x^11 exactly (the Gauss
// rule x^0 … x^5).
func gk7() (gkNodes, gkKronrod [4]float64, gkGauss [2]float64) {
	gkNodes = [4]float64{
		0.960491268708020283423507092629080,
		0.774596669241483377035853079956480,
		0.434243749346802558002071502844628,
		0,
	}
	gkKronrod = [4]float64{
		0.104656226026467265193823857192073,
		0.268488089868333440728569280666710,
		0.401397414775962222905051818618432,
		0.450916538658474142345110087045571,
	}
	gkGauss = [2]float64{
		0.555555555555555555555555555555556,
		0.888888888888888888888888888888889,
	}
	return gkNodes, gkKronrod, gkGauss
}

// ruleOf returns rule r in gk15's layout, in arrays of gk15's size, with
// the number m of its positive half's nodes (the centre included): 8 for
// GK15, 4 for GK7, whose Gauss weights are then the first m/2.
func ruleOf(r Rule) (nodes, wk [8]float64, wg [4]float64, m int) {
	if r == GK7 {
		a, b, c := gk7()
		copy(nodes[:], a[:])
		copy(wk[:], b[:])
		copy(wg[:], c[:])
		return nodes, wk, wg, 4
	}
	nodes, wk, wg = gk15()
	return nodes, wk, wg, 8
}
