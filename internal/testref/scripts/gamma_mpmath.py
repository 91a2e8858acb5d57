# Reference values of the regularised incomplete gamma functions P(a, y) and
# Q(a, y) at large shapes a, computed with mpmath at 30 significant digits
# by direct quadrature of the defining integral (mpmath's own incomplete
# gamma series does not converge within its term budget at these shapes):
# with t = a(1+u) and φ(u) = a(u − log(1+u)),
#   Q(a, y) = √(a/2π)/Γ*(a) · ∫_{y/a−1}^{∞} exp(−φ(u))/(1+u) du,
#   P(a, y) = √(a/2π)/Γ*(a) · ∫_{−1}^{y/a−1} (same integrand) du,
# Γ*(a) = Γ(a)/(√(2π/a)·(a/e)^a) from mpmath's loggamma; the tail away from
# u = 0 is integrated in v = φ(u) − φ(y/a−1) (tanh-sinh on [0, ∞), u(v) by
# Newton's method), the other tail is 1 minus it at 30 digits. Values for a <= 1e4 agree with mpmath's gammainc
# (its series) to 1e-22 relative (checked with --check: 8e-23). Each y is a float64 (printed with repr, so it reads back exactly);
# each value is rounded once to float64, values below 1e-300 printed as 0.
# Output: the rows of internal/testref/gammaref.go
# (python3 gamma_mpmath.py > rows.txt).
import mpmath as mp

mp.mp.dps = 30


def tails(a, y):
    """P(a, y) and Q(a, y): the tail away from the peak u = 0 as
    e^{−φ(m)}·∫_0^∞ e^{−v}/(a·|u(v)|) dv with φ(u(v)) = φ(m) + v on that
    side (φ'(u) = a·u/(1+u), so du/(1+u) = dv/(a·u)), the other as 1 minus
    it (at 30 digits)."""
    A, Y = mp.mpf(a), mp.mpf(y)
    m = Y / A - 1
    lgs = mp.loggamma(A) - (A - mp.mpf(1)/2) * mp.log(A) + A - mp.log(2 * mp.pi) / 2
    c = mp.sqrt(A / (2 * mp.pi)) / mp.exp(lgs)
    if m <= -1:
        return mp.mpf(0), mp.mpf(1)
    phi = lambda u: A * (u - mp.log1p(u))
    pm = phi(m)
    side = 1 if m >= 0 else -1

    def u_of(v):
        # safeguarded Newton on φ(u) = φ(m) + v in w = log(1+u) (φ is
        # monotone in w on each side of 0), inside a bracket
        t = pm + v
        lo, hi = (mp.log1p(m), mp.mpf(1) + mp.log1p(t / A) * 2) if side > 0 else (-t / A - 2, mp.log1p(m))
        F = lambda w: A * (mp.expm1(w) - w) - t
        w = (lo + hi) / 2
        for _ in range(400):
            fw = F(w)
            if (fw > 0) == (side > 0):
                hi = w
            else:
                lo = w
            d = A * mp.expm1(w)
            nw = w - fw / d if d != 0 else (lo + hi) / 2
            if not (lo < nw < hi):
                nw = (lo + hi) / 2
            if abs(nw - w) < mp.mpf(10) ** (-35) * (1 + abs(w)):
                w = nw
                break
            w = nw
        return mp.expm1(w)

    g = lambda v: mp.exp(-v) / (A * abs(u_of(v)))
    small = c * mp.exp(-pm) * mp.quad(g, [0, 1, 4, 16, 64, mp.inf])
    if side > 0:
        return 1 - small, small
    return small, 1 - small


import sys
if "--check" in sys.argv:
    worst = 0
    for a in [1000.0, 1234.5, 1e4]:
        for y in [0.05*a, 0.3*a, 0.6*a, a - 6*a**0.5, a - 0.1*a**0.5, a, a + 3*a**0.5, 1.5*a, 4.9*a]:
            p, q = tails(a, y)
            P = mp.gammainc(a, 0, y, regularized=True)
            Q = mp.gammainc(a, y, mp.inf, regularized=True)
            for g, w in ((p, P), (q, Q)):
                if w > 0:
                    worst = max(worst, abs(g/w - 1))
    print("largest relative difference", mp.nstr(worst, 3))
    sys.exit(0)
shapes = [1000.0, 1234.5, 1e4, 1e6, 2e6, 1e9, 1e14]
zs = [-38, -20, -10, -6, -3, -1, -0.1, 0, 1e-3, 1, 3, 6, 10, 20, 38]
lams = [0.05, 0.6, 1.5, 4.9]
for a in shapes:
    ys = set()
    for z in zs:
        y = a + z * a ** 0.5
        if y > 0:
            ys.add(float(y))
    for l in lams:
        ys.add(float(l * a))
    for y in sorted(ys):
        p, q = tails(a, y)
        if p < mp.mpf('1e-300') and q < mp.mpf('1e-300'):
            continue
        fp = float(p) if p > mp.mpf('1e-300') else 0.0
        fq = float(q) if q > mp.mpf('1e-300') else 0.0
        print("\t{%r, %r, %r, %r}," % (a, y, fp, fq), flush=True)
