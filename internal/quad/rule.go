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
