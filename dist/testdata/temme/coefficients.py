from fractions import Fraction as F
from sympy import bernoulli, Rational
N = 40  # series length in eta

def mul(a, b, n=N):
    r = [F(0)]*n
    for i, x in enumerate(a[:n]):
        if x == 0: continue
        for j, y in enumerate(b[:n-i]):
            r[i+j] += x*y
    return r

def inv(a, n=N):  # 1/a, a[0] != 0
    r = [F(0)]*n
    r[0] = 1/a[0]
    for k in range(1, n):
        s = sum(a[j]*r[k-j] for j in range(1, min(k, len(a)-1)+1))
        r[k] = -s/a[0]
    return r

def sqrt1(a, n=N):  # sqrt of series with a[0] == 1
    r = [F(0)]*n
    r[0] = F(1)
    for k in range(1, n):
        s = sum(r[j]*r[k-j] for j in range(1, k))
        r[k] = (a[k] - s)/2
    return r

def compose(a, b, n=N):  # a(b(x)), b[0]==0
    r = [F(0)]*n
    p = [F(1)] + [F(0)]*(n-1)
    for i in range(n):
        if i > 0: p = mul(p, b, n)
        if i < len(a) and a[i] != 0:
            r = [r[j] + a[i]*p[j] for j in range(n)]
    return r

# g(mu) = sqrt(2(mu - ln(1+mu))/mu^2) = sqrt(1 - 2mu/3 + 2mu^2/4 - ...)
h = [F(0)]*N
for j in range(N):  # 2*(mu - ln(1+mu))/mu^2 = sum_{j>=0} 2(-1)^j mu^j/(j+2)
    h[j] = F(2*(-1)**j, j+2)
g = sqrt1(h)
# eta = mu*g(mu); revert: mu = eta/g(mu) iterate
mu = [F(0), F(1)] + [F(0)]*(N-2)
ig = inv(g)
for it in range(N):
    mu = [F(0)] + compose(ig, mu)[:N-1]  # mu = eta * (1/g)(mu)
# q = eta/mu as a series (q[0]=1) so that 1/mu = q/eta
q = inv(mu[1:] + [F(0)])
# Stirling coefficients gamma_k of Gamma*(a) = exp(sum B_2j/(2j(2j-1) a^(2j-1)))
K = 10
lg = [F(0)]*(K+1)
for j in range(1, K//2+2):
    if 2*j-1 <= K:
        b = bernoulli(2*j)
        lg[2*j-1] = F(int(b.p), int(b.q))/(2*j*(2*j-1))
# exp of series in 1/a
gam = [F(1)] + [F(0)]*K
for n in range(1, K+1):
    gam[n] = sum(k*lg[k]*gam[n-k] for k in range(1, n+1))/n
print("stirling", gam[:6])
import sys
sign = int(sys.argv[1]) if len(sys.argv) > 1 else 1
# A_k polynomial in s (coeff list), B_k = b_k * eta^-(2k+1)
A = [[F(0), F(1)]]  # A0 = s
Bc = [F(-1)]
for k in range(1, K):
    prev = A[-1]
    d = [i*prev[i] for i in range(1, len(prev))]  # dA/ds coefficients of s^(i-1)
    # -(s+1) s^2 dA/ds
    new = [F(0)]*(len(prev)+2)
    for i, c in enumerate(d):  # c*s^i
        new[i+3] -= c
        new[i+2] -= c
    new[1] += (sign*(-1))**k * gam[k] if sign in (1,-1) else 0
    A.append(new)
    Bc.append(Bc[-1]*(-(2*k-1)))
# Taylor: A_k(s) with s = q/eta: s^j = eta^-j q^j ; B_k = Bc*eta^-(2k+1)
rows = []
for k in range(K):
    M = 2*k+1
    tot = [F(0)]*(N)  # coefficients of eta^(n - M), n=0..N-1
    qp = [F(1)] + [F(0)]*(N-1)
    for j in range(len(A[k])):
        if j > 0: qp = mul(qp, q)
        c = A[k][j]
        if c != 0:
            # c * eta^-j q^j -> shift to eta^(n-M): index n = m - j + M
            for m in range(N):
                idx = m - j + M
                if 0 <= idx < N: tot[idx] += c*qp[m]
    tot[0] += Bc[k]  # eta^-M
    neg = tot[:M]
    assert all(x == 0 for x in neg), (k, [float(x) for x in neg])
    rows.append(tot[M:])
for k in range(K):
    print(k, [str(x) for x in rows[k][:3]], float(rows[k][0]))
import pickle
pickle.dump((rows, gam, A, Bc), open('/tmp/e2/rows.pkl','wb'))

# ---- emit Go tables ----
KR, ND = 5, 23
def g(x):
    v = float(x)
    return repr(v) if v != 0 else "0"
out = []
out.append("var temmeTaylor = [%d][%d]float64{" % (KR, ND))
for k in range(KR):
    out.append("\t{" + ", ".join(g(x) for x in rows[k][:ND]) + "},")
out.append("}")
out.append("var temmeS = [%d][%d]float64{" % (KR, 2*KR))
for k in range(KR):
    co = [A[k][j] if j < len(A[k]) else 0 for j in range(2*KR)]
    out.append("\t{" + ", ".join(g(x) for x in co) + "},")
out.append("}")
out.append("var temmeEta = [%d]float64{" % KR + ", ".join(g(x) for x in Bc[:KR]) + "}")
open('/tmp/e2/tables.go.txt','w').write("\n".join(out)+"\n")
