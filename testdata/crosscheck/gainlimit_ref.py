#!/usr/bin/env python3
"""Reference stable intervals of a gain for the D-decomposition cross-check.

Usage: gainlimit_ref.py IN.json OUT.json

Each case gives the characteristic polynomial as p(z, k) = sum_j k^j q_j(z)
(q_j ascending in z, written by hand in the Go test from the loop text), the
current value k0 and a sweep range [lo, hi]. The reference is independent of
ringside's method: a dense sweep (20001 points, the grid includes k = 0
exactly) of the largest root modulus from numpy.roots, the stable run
containing k0 (or the nearest one), each end then refined by bisection on
max|root| < STABLE to 1e-12 relative (an isolated unstable value on the grid,
such as k = 0, is converged to by the same bisection).
"""
import json
import sys

import numpy as np

# A root counts as inside when |root| < 1 − 1e-13: numpy.roots puts a root
# exactly on the circle (an integrator at k = 0) within rounding (~1e-15 for
# these well-separated low-order roots) of 1; an end next to such a value is
# then off by about sqrt(1e-13/c), below 1e-6 here.
STABLE = 1 - 1e-13


def radius(q, k):
    n = max(len(c) for c in q)
    p = np.zeros(n)
    for j, c in enumerate(q):
        p[: len(c)] += np.array(c) * k ** j
    p = np.trim_zeros(p[::-1], "f")  # descending, leading zeros dropped
    if len(p) < n:
        return np.inf  # degree dropped: a root went to infinity
    if len(p) <= 1:
        return 0.0
    return max(abs(np.roots(p)))


def refine(q, a, b):
    """a stable, b not: bisect to the switch."""
    for _ in range(200):
        if abs(b - a) <= 1e-12 * max(1.0, abs(a)):
            break
        m = (a + b) / 2
        if radius(q, m) < STABLE:
            a = m
        else:
            b = m
    return (a + b) / 2


def interval(case):
    q, k0, lo, hi = case["Q"], case["K0"], case["Lo"], case["Hi"]
    ks = np.linspace(lo, hi, 20001)
    ks = np.union1d(ks, [0.0, k0]) if lo < 0 < hi else np.union1d(ks, [k0])
    st = np.array([radius(q, k) < STABLE for k in ks])
    runs, i = [], 0
    while i < len(ks):
        if st[i]:
            j = i
            while j + 1 < len(ks) and st[j + 1]:
                j += 1
            runs.append((i, j))
            i = j + 1
        else:
            i += 1

    def dist(r):
        a, b = ks[r[0]], ks[r[1]]
        return 0.0 if a <= k0 <= b else min(abs(k0 - a), abs(k0 - b))

    if not runs:
        return {"Name": case["Name"], "Found": False}
    r = min(runs, key=dist)
    out = {"Name": case["Name"], "Found": True, "Contains": dist(r) == 0}
    if r[0] > 0:
        out["Lo"] = refine(q, ks[r[0]], ks[r[0] - 1])
    if r[1] < len(ks) - 1:
        out["Hi"] = refine(q, ks[r[1]], ks[r[1] + 1])
    return out


def main():
    cases = json.load(open(sys.argv[1]))
    out = [interval(c) for c in cases]
    json.dump({"numpy": np.__version__, "cases": out}, open(sys.argv[2], "w"), indent=1)


if __name__ == "__main__":
    main()
