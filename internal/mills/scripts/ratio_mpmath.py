# Mills' ratio of the standard normal law, R(x) = Φ̄(x)/φ(x), on pieces:
# the table ratioPoly of internal/mills/ratiotable.go.
#
# For x in [0.65625, 64) the pieces are those of equal length within each
# octave [2^e, 2^(e+1)), sixteen to an octave (the float64's exponent and
# its four leading fraction bits index them). On each piece, with c its
# midpoint and t = x − c, R is its Chebyshev interpolant of degree DEG in t
# (mpmath's chebyfit: the polynomial through R at the DEG+1 Chebyshev
# points of the piece), computed at 50 significant digits from
# R(x) = erfc(x/√2)/2 · √(2π) · e^{x²/2} (mpmath's erfc), written out in
# powers of t, each coefficient rounded once to float64. The script prints
# the largest relative error of the unrounded polynomials against R on
# 200 points of each piece (stderr), and the table's rows (stdout):
# python3 ratio_mpmath.py > rows.txt
import sys

import mpmath as mp

mp.mp.dps = 50
DEG = 9


def ratio(x):
    x = mp.mpf(x)
    return mp.erfc(x / mp.sqrt(2)) / 2 * mp.sqrt(2 * mp.pi) * mp.exp(x * x / 2)


def pieces():
    lo = mp.mpf(0.65625)
    e = -1
    while e < 6:
        w = mp.mpf(2) ** e / 16
        a = mp.mpf(2) ** e
        for k in range(16):
            x0 = a + k * w
            if x0 >= lo:
                yield x0, x0 + w
        e += 1


worst = 0
for a, b in pieces():
    c, hw = (a + b) / 2, (b - a) / 2
    poly, _ = mp.chebyfit(lambda t: ratio(c + t), [-hw, hw], DEG + 1, error=True)
    for j in range(201):
        t = -hw + 2 * hw * j / 200
        worst = max(worst, abs(mp.polyval(poly, t) / ratio(c + t) - 1))
    row = ", ".join(repr(float(p)) for p in poly)
    print("\t{%s, %s}, // [%s, %s)" % (repr(float(c)), row, mp.nstr(a, 17), mp.nstr(b, 17)))
print("largest relative error of the unrounded polynomials: %s" % mp.nstr(worst, 3), file=sys.stderr)
