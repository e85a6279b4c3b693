"""Disk margin reference for analysis/diskmargin (numpy/scipy only).

Reads JSON loops {"num": [...], "den": [...]} (coefficients in z, highest
power first) on stdin and prints, per loop, max over [0, pi] of |S - 1/2|
with S = 1/(1 + L): evaluated with numpy on a uniform grid of 400001
angles, then refined by scipy's bounded scalar minimiser between the best
point's neighbours. Independent of the Go code: polyval, not Horner in Go;
a different grid; Brent's method, not golden section.
"""
import json
import sys

import numpy as np
from scipy.optimize import minimize_scalar


def dist(num, den, th):
    # |1 - L| / (2|1 + L|) with L = n/d, written as |d - n| / (2|d + n|) so
    # that a pole of L on the circle (an integrator at theta = 0) gives 1/2.
    z = np.exp(1j * np.asarray(th))
    n, d = np.polyval(num, z), np.polyval(den, z)
    return np.abs(d - n) / (2 * np.abs(d + n))


def peak(num, den):
    th = np.linspace(0, np.pi, 400001)
    d = dist(num, den, th)
    i = int(np.argmax(d))
    best, at = float(d[i]), float(th[i])
    lo, hi = th[max(i - 1, 0)], th[min(i + 1, len(th) - 1)]
    if hi > lo:
        r = minimize_scalar(lambda t: -float(dist(num, den, t)), bounds=(lo, hi),
                            method="bounded", options={"xatol": 1e-13})
        if -r.fun > best:
            best, at = float(-r.fun), float(r.x)
    return {"peak": best, "theta": at}


loops = json.load(sys.stdin)
json.dump([peak(np.array(l["num"]), np.array(l["den"])) for l in loops], sys.stdout)
