#!/usr/bin/python3
"""Reference closed-loop poles and margins for ringside's structure-preserving
loop numerics (analysis/lti), on the families that break a method based on
one expanded characteristic polynomial.

Usage: structure_ref.py IN.json OUT.json

IN holds cases written by the Go test (analysis/structure_crosscheck_test.go):
each a sample period T, the feedback sign, named blocks and the forward and
feedback paths. A block is either {"num": [...], "den": [...]} in z (lowest
power first, the exact float64 values the .loop file writes), or a
continuous plant discretized by zero-order hold: {"lags": [tau, ...]} (a
cascade of 1/(tau s + 1)) or {"modes": [[wn, zeta], ...]} (a cascade of
wn^2/(s^2 + 2 zeta wn s + wn^2)), times "gain".

For every case the largest closed-loop pole radius is computed two
independent ways:
  * mp: the characteristic polynomial  prod(den) + sign * prod(num)  is
    formed exactly in 50-digit arithmetic (mpmath) from the blocks' own
    coefficients (zero-order holds computed in 50 digits with mpmath.expm),
    and its roots polished in 50 digits from the numpy eigenvalues below,
    each by Newton's method (then, if the check below fails, all at once by
    the Weierstrass/Durand-Kerner iteration);
    the roots are accepted when the monic polynomial rebuilt from them
    matches the input to 1e-40 relative (then they are its roots to within
    their conditioning times 1e-40); otherwise mpmath.polyroots decides;
  * ss: numpy.linalg.eigvals of a state-space model built here with
    scipy.signal.tf2ss / cont2discrete per block, in series, closed by
    feedback (LAPACK dgeev, which balances first).
Cases built with known roots give "exact_radius" and skip the mp step.
Cases with "margins_of" also get the gain margin and its frequency of the
given (cancelled) open loop, by a dense grid on the unit circle refined with
scipy.optimize.brentq on Im L; cases with "gm_blocks" the same for the
loop's own L, evaluated block by block (each block's 50-digit coefficients
rounded to float64, L the product of the blocks' values).
"""
import json
import sys


import mpmath as mp
import numpy as np
import scipy.optimize as opt
import scipy.signal as signal

mp.mp.dps = 50


def mp_poly_mul(a, b):
    r = [mp.mpf(0)] * (len(a) + len(b) - 1)
    for i, x in enumerate(a):
        for j, y in enumerate(b):
            r[i + j] += x * y
    return r


def mp_zoh(A, B, C, T):
    """Zero-order hold of (A, B, C) in mp: returns num, den lowest first."""
    n = A.rows
    M = mp.zeros(n + 1, n + 1)
    for i in range(n):
        for j in range(n):
            M[i, j] = A[i, j] * T
        M[i, n] = B[i] * T
    E = mp.expm(M)
    Ad = E[0:n, 0:n]
    Bd = E[0:n, n]
    # Transfer C (zI - Ad)^-1 Bd via Leverrier-Faddeev in mp.
    den = [mp.mpf(1)]
    N = mp.eye(n)
    coeffs = [mp.mpf(1)]
    Ns = [N]
    for k in range(1, n + 1):
        AN = Ad * Ns[-1]
        c = -sum(AN[i, i] for i in range(n)) / k
        coeffs.append(c)
        Ns.append(AN + c * mp.eye(n))
    # det(zI - Ad) = z^n + c1 z^(n-1) + ... ; adj(zI - Ad) = sum N_k z^(n-1-k)
    den = list(reversed(coeffs))  # lowest first
    num = [mp.mpf(0)] * n
    for k in range(n):
        v = (C * Ns[k] * Bd)[0]
        num[n - 1 - k] += v
    return num, den


def lag_ss(tau):
    return mp.matrix([[-1 / tau]]), mp.matrix([[1 / tau]]), mp.matrix([[1]])


def mode_ss(wn, zeta):
    A = mp.matrix([[0, 1], [-wn * wn, -2 * zeta * wn]])
    return A, mp.matrix([[0], [wn * wn]]), mp.matrix([[1, 0]])


def block_mp(b, T):
    """The block's num, den (lowest first) in 50 digits."""
    if "num" in b:
        return [mp.mpf(x) for x in b["num"]], [mp.mpf(x) for x in b["den"]]
    num, den = [mp.mpf(b.get("gain", 1))], [mp.mpf(1)]
    for tau in b.get("lags", []):
        n, d = mp_zoh(*lag_ss(mp.mpf(tau)), mp.mpf(T))
        num, den = mp_poly_mul(num, n), mp_poly_mul(den, d)
    for wn, zeta in b.get("modes", []):
        n, d = mp_zoh(*mode_ss(mp.mpf(wn), mp.mpf(zeta)), mp.mpf(T))
        num, den = mp_poly_mul(num, n), mp_poly_mul(den, d)
    return num, den


def block_ss(b, T):
    """The block as a numpy state-space (A, B, C, D), built independently."""
    if "num" in b:
        num = np.array(b["num"][::-1], dtype=float)
        den = np.array(b["den"][::-1], dtype=float)
        num = np.concatenate([np.zeros(len(den) - len(num)), num])
        if len(den) == 1:
            return np.zeros((0, 0)), np.zeros((0, 1)), np.zeros((1, 0)), np.array([[num[0] / den[0]]])
        return signal.tf2ss(num, den)
    parts = []
    for tau in b.get("lags", []):
        parts.append((np.array([[-1 / tau]]), np.array([[1 / tau]]), np.array([[1.0]]), np.zeros((1, 1))))
    for wn, zeta in b.get("modes", []):
        parts.append((np.array([[0, 1], [-wn * wn, -2 * zeta * wn]]), np.array([[0], [wn * wn]]), np.array([[1.0, 0]]), np.zeros((1, 1))))
    sys_ = None
    for A, B, C, D in parts:
        Ad, Bd, Cd, Dd, _ = signal.cont2discrete((A, B, C, D), T, method="zoh")
        sys_ = (Ad, Bd, Cd, Dd) if sys_ is None else series(sys_, (Ad, Bd, Cd, Dd))
    A, B, C, D = sys_
    return A, B, C * b.get("gain", 1), D * b.get("gain", 1)


def series(g1, g2):
    A1, B1, C1, D1 = g1
    A2, B2, C2, D2 = g2
    n1, n2 = A1.shape[0], A2.shape[0]
    A = np.block([[A1, np.zeros((n1, n2))], [B2 @ C1, A2]])
    B = np.vstack([B1, B2 @ D1])
    C = np.hstack([D2 @ C1, C2])
    return A, B, C, D2 @ D1


def path_ss(blocks, names, T):
    s = (np.zeros((0, 0)), np.zeros((0, 1)), np.zeros((1, 0)), np.eye(1))
    for n in names:
        s = series(s, block_ss(blocks[n], T))
    return s


def closed_ss(case):
    T, sign = case["T"], (-1.0 if case.get("positive") else 1.0)
    A, B, C, D = path_ss(case["blocks"], case["forward"] + (case.get("feedback") or []), T)
    q = 1.0 / (1.0 + sign * D[0, 0])
    return A - sign * q * (B @ C)


def char_mp(case):
    T, sign = case["T"], (-1 if case.get("positive") else 1)
    num, den = [mp.mpf(sign)], [mp.mpf(1)]
    for n in case["forward"] + (case.get("feedback") or []):
        bn, bd = block_mp(case["blocks"][n], T)
        num, den = mp_poly_mul(num, bn), mp_poly_mul(den, bd)
    num = num + [mp.mpf(0)] * (len(den) - len(num))
    return [d + n for d, n in zip(den, num)]


def rebuild_err(monic, z):
    rebuilt = [mp.mpc(1)]
    for r in z:
        rebuilt = [a - r * b for a, b in zip([mp.mpc(0)] + rebuilt, rebuilt + [mp.mpc(0)])]
    return max(abs(a - b) for a, b in zip(rebuilt, monic)) / max(abs(a) for a in monic)


def newton(monic, z, steps=30):
    """Each start polished alone by Newton's method (cheap, O(n) a step)."""
    out = []
    for x in z:
        for _ in range(steps):
            v, d = mp.mpc(0), mp.mpc(0)
            for a in reversed(monic):
                d = d * x + v
                v = v * x + a
            if d == 0:
                break
            step = v / d
            x -= step
            if abs(step) < mp.mpf(10) ** -40 * max(1, abs(x)):
                break
        out.append(x)
    return out


def weierstrass(monic, z, steps):
    """All roots of the monic polynomial at once, from the start values z."""
    n = len(monic) - 1

    def p(x):
        v = mp.mpc(0)
        for a in reversed(monic):
            v = v * x + a
        return v
    done = [False] * n
    for _ in range(steps):
        big = mp.mpf(0)
        for i in range(n):
            if done[i]:
                continue
            d = mp.mpc(1)
            for j in range(n):
                if j != i:
                    d *= z[i] - z[j]
            if d == 0:
                z[i] += mp.mpf(10) ** -20
                continue
            step = p(z[i]) / d
            z[i] -= step
            big = max(big, abs(step))
            done[i] = abs(step) < mp.mpf(10) ** -45 * max(1, abs(z[i]))
        if big < mp.mpf(10) ** -45:
            break
    return z, rebuild_err(monic, z)


# ACCEPT: the rebuilt polynomial must match to this relative accuracy.
ACCEPT = mp.mpf(10) ** -30


def radius_mp(char, start):
    c = list(char)
    while c and c[-1] == 0:
        c.pop()
    while c and c[0] == 0:
        c.pop(0)
    n = len(c) - 1
    if n < 1:
        return 0.0, 0.0
    monic = [x / c[-1] for x in c]
    z = [mp.mpc(complex(x)) for x in start if x != 0][:n]
    z += [mp.mpc(0.4, 0.9) ** (k + 1) for k in range(n - len(z))]
    z = newton(monic, z)
    err = rebuild_err(monic, z)
    if not err <= ACCEPT:
        z, err = weierstrass(monic, z, 600)
    if not err <= ACCEPT:
        # Start again from points spread on the circle of the roots' mean modulus.
        rho = abs(monic[0]) ** (mp.mpf(1) / n)
        z = [rho * mp.expj(2 * mp.pi * (k + 0.25) / n) for k in range(n)]
        z, err = weierstrass(monic, z, 3000)
    if not err <= ACCEPT:
        roots, e = mp.polyroots(c[::-1], maxsteps=2000, extraprec=300, error=True)
        return float(max(abs(r) for r in roots)), float(e)
    return float(max(abs(r) for r in z)), float(err)


def gain_margin(num, den, T):
    """Smallest |GM| over the phase crossings of L = num/den (lowest first)."""
    n, d = np.array(num[::-1]), np.array(den[::-1])
    return gain_margin_of(lambda th: np.polyval(n, np.exp(1j * th)) / np.polyval(d, np.exp(1j * th)), T)


def gain_margin_blocks(case):
    """Smallest |GM| of the loop's L, block by block."""
    sign = -1.0 if case.get("positive") else 1.0
    parts = []
    for name in case["forward"] + (case.get("feedback") or []):
        bn, bd = block_mp(case["blocks"][name], case["T"])
        parts.append((np.array([float(x) for x in bn[::-1]]), np.array([float(x) for x in bd[::-1]])))

    def L(th):
        z = np.exp(1j * th)
        v = sign
        for n, d in parts:
            v = v * np.polyval(n, z) / np.polyval(d, z)
        return v
    return gain_margin_of(L, case["T"])


def gain_margin_of(L, T):
    th = np.linspace(0, np.pi, 200001)
    with np.errstate(all="ignore"):
        im = np.imag(L(th))
    best = None
    for i in range(len(th)):
        if not np.isfinite(im[i]):
            continue
        x = None
        at_end = i in (0, len(th) - 1)  # L is real at z = ±1 (up to e^{jπ}'s rounding)
        if im[i] == 0 or at_end and abs(im[i]) <= 1e-12 * abs(L(th[i])):
            x = th[i]
        elif i + 1 < len(th) and np.isfinite(im[i + 1]) and im[i] * im[i + 1] < 0:
            x = opt.brentq(lambda t: np.imag(L(t)), th[i], th[i + 1], xtol=1e-15)
        if x is None:
            continue
        v = L(x)
        if np.real(v) < 0:
            gm = -20 * np.log10(abs(v))
            if best is None or abs(gm) < abs(best[0]):
                best = (gm, x / (2 * np.pi * T))
    return best


def main():
    cases = json.load(open(sys.argv[1]))
    out = []
    for case in cases:
        ev = np.linalg.eigvals(closed_ss(case))
        if "exact_radius" in case:
            r, err = case["exact_radius"], 0.0  # known by construction
        else:
            r, err = radius_mp(char_mp(case), ev)
        res = {"name": case["name"], "radius_mp": r, "radius_mp_err": err,
               "radius_ss": float(max(abs(ev))) if len(ev) else 0.0}
        gm = None
        if "margins_of" in case:
            m = case["margins_of"]
            gm = gain_margin(m["num"], m["den"], case["T"])
        elif case.get("gm_blocks"):
            gm = gain_margin_blocks(case)
        if gm:
            res["gm_db"], res["gm_hz"] = gm
        out.append(res)
    json.dump({"numpy": np.__version__, "mpmath": mp.__version__, "cases": out}, open(sys.argv[2], "w"), indent=1)


main()
