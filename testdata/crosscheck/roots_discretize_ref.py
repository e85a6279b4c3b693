#!/usr/bin/python3
"""Reference data for ringside's roots and discretize packages.

Usage: roots_discretize_ref.py OUT.json

With a fixed seed it draws random polynomials (degree 1..20, some with
repeated roots) and random continuous transfer functions (denominator
degree 1..8, stable and unstable, random sample period), and writes the
inputs with numpy/scipy results: numpy.roots, and
scipy.signal.cont2discrete with 'zoh', 'foh' and 'bilinear'. Coefficients are
written lowest power first, as ringside stores them.
"""
import json
import sys

import numpy as np
import scipy
import scipy.signal as signal

SEED = 20260611
N_ROOTS = 220
N_SYSTEMS = 220


def random_roots(rng, degree, repeated):
    """Roots closed under conjugation; with repeated, one root repeats."""
    roots = []
    while len(roots) < degree:
        left = degree - len(roots)
        r = rng.uniform(0.2, 2.0) * (10.0 ** rng.integers(-1, 2) if rng.random() < 0.2 else 1.0)
        if left >= 2 and rng.random() < 0.6:
            ang = rng.uniform(0.1, np.pi - 0.1)
            z = r * np.exp(1j * ang)
            mult = 1
            if repeated and left >= 4 and rng.random() < 0.5:
                mult = 2
            for _ in range(mult):
                roots += [z, np.conj(z)]
        else:
            x = r * (1 if rng.random() < 0.5 else -1)
            mult = 1
            if repeated and rng.random() < 0.5:
                mult = int(min(left, rng.integers(2, 5)))
            roots += [x] * mult
    return roots  # pairs only when two places are left, so len == degree


def poly_low_first(roots, lead):
    c = np.real(np.poly(roots)) * lead
    return c[::-1]


def pairs(zs):
    return [[float(np.real(z)), float(np.imag(z))] for z in zs]


def roots_cases(rng):
    cases = []
    for i in range(N_ROOTS):
        degree = int(rng.integers(1, 21))
        kind = "random_coeffs"
        if i % 3 == 0:
            coeffs = rng.standard_normal(degree + 1)
            if coeffs[-1] == 0:
                coeffs[-1] = 1.0
        else:
            repeated = i % 3 == 2
            kind = "repeated_roots" if repeated else "from_roots"
            rts = random_roots(rng, degree, repeated)
            degree = len(rts)
            coeffs = poly_low_first(rts, rng.uniform(0.5, 3.0))
        ref = np.roots(coeffs[::-1])
        cases.append({"kind": kind, "coeffs": [float(c) for c in coeffs], "roots": pairs(ref)})
    return cases


def random_poles(rng, n, stable):
    poles = []
    while len(poles) < n:
        w = 10.0 ** rng.uniform(-0.5, 1.5)
        if n - len(poles) >= 2 and rng.random() < 0.5:
            zeta = rng.uniform(0.05, 0.95) * (1 if stable else (-1 if rng.random() < 0.5 else 1))
            re = -zeta * w
            im = w * np.sqrt(1 - zeta * zeta)
            poles += [complex(re, im), complex(re, -im)]
        else:
            sign = -1 if stable or rng.random() < 0.5 else 1
            poles.append(sign * w)
    return poles


def system_cases(rng):
    cases = []
    for i in range(N_SYSTEMS):
        n = int(rng.integers(1, 9))
        stable = i % 4 != 3
        poles = random_poles(rng, n, stable)
        m = int(rng.integers(0, n + 1))  # numerator degree, biproper when m == n
        zeros = random_poles(rng, m, True) if m > 0 else []
        zeros = [z * (1 if rng.random() < 0.7 else -1) for z in zeros]
        gain = rng.uniform(0.5, 5.0) * np.prod(np.abs(poles)) / max(np.prod(np.abs(zeros)), 1e-300)
        den = np.real(np.poly(poles))
        num = np.real(np.poly(zeros)) * gain if m > 0 else np.array([gain])
        fastest = max(abs(p) for p in poles)
        T = float(10.0 ** rng.uniform(-2, 0.3) / fastest)
        case = {"num": [float(c) for c in num[::-1]], "den": [float(c) for c in den[::-1]], "T": T}
        for method in ("zoh", "foh", "bilinear"):
            numd, dend, _ = signal.cont2discrete((num, den), T, method=method)
            numd = np.atleast_2d(numd)[0]
            case[method] = {"num": [float(c) for c in numd[::-1]], "den": [float(c) for c in dend[::-1]]}
        cases.append(case)
    return cases


def main():
    rng = np.random.default_rng(SEED)
    out = {
        "numpy": np.__version__,
        "scipy": scipy.__version__,
        "seed": SEED,
        "roots": roots_cases(rng),
        "systems": system_cases(rng),
    }
    with open(sys.argv[1], "w") as f:
        json.dump(out, f)


if __name__ == "__main__":
    main()
