#!/usr/bin/env python3
"""Reference margins for ringside's frequency-response code, computed
independently with numpy/scipy (Debian python3-scipy).

Usage: margins_ref.py OUT.json [COUNT]

Generates COUNT (default 240) random discrete loops L(z) = N(z)/D(z) from a
fixed seed: orders 1..6, proper, some with an integrator (pole at z = 1),
some with a zero at z = -1, stable and unstable closed loops. For each it
writes, with coefficients lowest power first:
  closed-loop poles (numpy.roots of D + N), their largest radius;
  phase crossings (L real and negative) and gain crossings (|L| = 1) located
  on a dense scipy.signal.freqz grid and refined with scipy.optimize.brentq;
  gain margin (crossing of smallest |GM|), phase margin (smallest PM),
  delay margin (smallest PM_rad/omega, 0 when PM <= 0);
  peak sensitivity max |1/(1+L)| on the grid, refined by bounded
  scipy.optimize.minimize_scalar.
Flags mark cases a grid method cannot settle (near-tangential touches,
crossings closer than a few grid cells, closed-loop poles almost on the
circle); the Go test skips those items only.
"""
import json
import math
import sys

import numpy as np
from scipy import optimize, signal

SEED = 20250117
GRID = 100001          # freqz points on [0, pi], Nyquist included
NEAR_TANGENT = 1e-4    # relative closeness of a grid minimum to zero
MIN_SEPARATION = 20    # grid cells between two crossings to trust the count


def rand_roots(rng, n, rmin, rmax, avoid=None):
    roots = []
    while len(roots) < n:
        r = rng.uniform(rmin, rmax)
        if avoid and avoid[0] < r < avoid[1]:
            continue
        if len(roots) + 2 <= n and rng.random() < 0.5:
            ang = rng.uniform(0.05, math.pi - 0.05)
            z = r * complex(math.cos(ang), math.sin(ang))
            roots += [z, z.conjugate()]
        else:
            roots.append(complex(r * rng.choice([-1.0, 1.0]), 0))
    return roots


def make_loop(rng):
    n = int(rng.integers(1, 7))
    den_roots = []
    if rng.random() < 0.25:
        den_roots.append(1 + 0j)
    den_roots += rand_roots(rng, n - len(den_roots), 0.05, 1.3, avoid=(0.97, 1.03))
    m = int(rng.integers(0, n + 1))
    num_roots = []
    if m > 0 and rng.random() < 0.15:
        num_roots.append(-1 + 0j)
    num_roots += rand_roots(rng, m - len(num_roots), 0.1, 1.5, avoid=(0.97, 1.03))
    Dh = np.real(np.poly(den_roots)) if den_roots else np.array([1.0])
    Nh = np.real(np.poly(num_roots)) if num_roots else np.array([1.0])
    # Gain: |L| at a random angle set to 10^U(-1.5, 0.5), random sign.
    th0 = rng.uniform(0.05, 3.0)
    z0 = complex(math.cos(th0), math.sin(th0))
    mag0 = abs(np.polyval(Nh, z0) / np.polyval(Dh, z0))
    K = 10 ** rng.uniform(-1.5, 0.5) / mag0 * rng.choice([-1.0, 1.0], p=[0.2, 0.8])
    T = float(rng.choice([1e-3, 0.01, 0.05, 1.0]))
    return Nh * K, Dh, T


def analyse(Nh, Dh, T):
    n = len(Dh) - 1
    b = np.concatenate([np.zeros(len(Dh) - len(Nh)), Nh])  # powers of z^-1
    with np.errstate(divide="ignore", invalid="ignore"):
        w, H = signal.freqz(b, Dh, worN=GRID, include_nyquist=True)

    def Lf(th):
        z = complex(math.cos(th), math.sin(th))
        return np.polyval(Nh, z) / np.polyval(Dh, z)

    finite = np.isfinite(H)
    to_hz = 1 / (2 * math.pi * T)
    out = {}

    # Phase crossings: Im L = 0 with Re L < 0.
    pc = []
    amb_phase = False
    im = np.where(finite, H.imag / np.maximum(np.abs(H), 1e-300), np.nan)
    for th in (0.0, math.pi):
        z = 1.0 if th == 0 else -1.0
        d, nn = np.polyval(Dh, z), np.polyval(Nh, z)
        if abs(d) > 1e-12 and abs(nn) > 1e-12 and nn / d < 0:
            pc.append(th)
    s = np.sign(im[1:-1])
    idx = np.where(np.isfinite(s[:-1]) & np.isfinite(s[1:]) & (s[:-1] * s[1:] < 0))[0] + 1
    for i in idx:
        th = optimize.brentq(lambda x: Lf(x).imag, w[i], w[i + 1], xtol=1e-15, rtol=4 * np.finfo(float).eps)
        if Lf(th).real < 0:
            pc.append(th)
    a = np.abs(im)
    interior = np.arange(2, GRID - 2)
    mins = interior[(a[interior] <= a[interior - 1]) & (a[interior] <= a[interior + 1])]
    if np.any(a[mins] < NEAR_TANGENT):
        # a near-zero minimum without a sign change, or two crossings within a cell
        for i in mins[a[mins] < NEAR_TANGENT]:
            if not (np.sign(im[i - 1]) * np.sign(im[i + 1]) < 0):
                amb_phase = True
    pc.sort()
    if any(y - x < MIN_SEPARATION * math.pi / (GRID - 1) for x, y in zip(pc, pc[1:])):
        amb_phase = True
    out["phase_crossings"] = [[th * to_hz, -20 * math.log10(abs(Lf(th)))] for th in pc]

    # Gain crossings: |L| = 1.
    gc = []
    amb_gain = False
    g = np.where(finite, np.log(np.abs(H)), np.nan)
    s = np.sign(g)
    idx = np.where(np.isfinite(s[:-1]) & np.isfinite(s[1:]) & (s[:-1] * s[1:] < 0))[0]
    for i in idx:
        gc.append(optimize.brentq(lambda x: abs(Lf(x)) - 1, w[i], w[i + 1], xtol=1e-15, rtol=4 * np.finfo(float).eps))
    a = np.abs(g)
    interior = np.arange(1, GRID - 1)
    mins = interior[(a[interior] <= a[interior - 1]) & (a[interior] <= a[interior + 1])]
    for i in mins[a[mins] < NEAR_TANGENT]:
        if not (np.sign(g[i - 1]) * np.sign(g[i + 1]) < 0):
            amb_gain = True
    if np.isfinite(a[0]) and a[0] < NEAR_TANGENT or np.isfinite(a[-1]) and a[-1] < NEAR_TANGENT:
        amb_gain = True
    gc.sort()
    if any(y - x < MIN_SEPARATION * math.pi / (GRID - 1) for x, y in zip(gc, gc[1:])):
        amb_gain = True

    def pm_of(th):
        pm = 180 + math.degrees(np.angle(Lf(th)))
        return pm - 360 if pm > 180 else pm

    out["gain_crossings"] = [[th * to_hz, pm_of(th)] for th in gc]

    pcs = out["phase_crossings"]
    best = min(pcs, key=lambda c: abs(c[1])) if pcs else None
    out["gm_db"] = best[1] if best else None
    out["pc_hz"] = best[0] if best else None
    gcs = out["gain_crossings"]
    best = min(gcs, key=lambda c: c[1]) if gcs else None
    out["pm_deg"] = best[1] if best else None
    out["gc_hz"] = best[0] if best else None
    dms = [0.0 if pm <= 0 else math.radians(pm) / (2 * math.pi * hz) for hz, pm in gcs]
    out["dm_s"] = min(dms) if dms else None

    # Closed loop and peak sensitivity.
    cl = np.polyadd(Dh, Nh)
    poles = np.roots(cl)
    rmax = float(np.max(np.abs(poles))) if len(poles) else 0.0
    out["poles"] = [[float(p.real), float(p.imag)] for p in poles]
    out["max_pole_radius"] = rmax
    out["stable"] = bool(rmax < 1)
    near_circle = len(poles) > 0 and float(np.min(np.abs(np.abs(poles) - 1))) < 1e-3
    with np.errstate(divide="ignore", invalid="ignore"):
        S = np.where(finite, 1 / np.abs(1 + H), 0.0)
    S[~np.isfinite(S)] = 0.0
    i = int(np.argmax(S))
    lo, hi = w[max(i - 1, 0)], w[min(i + 1, GRID - 1)]
    res = optimize.minimize_scalar(lambda x: -1 / abs(1 + Lf(x)) if np.isfinite(Lf(x)) else 0.0,
                                   bounds=(lo, hi), method="bounded", options={"xatol": 1e-13})
    th, sv = (res.x, -res.fun) if -res.fun > S[i] else (w[i], S[i])
    out["peak_s_db"] = 20 * math.log10(sv)
    out["peak_s_hz"] = th * to_hz
    out["ambiguous_phase"] = amb_phase
    out["ambiguous_gain"] = amb_gain
    out["ambiguous_peak"] = bool(near_circle)
    return out


def main():
    path = sys.argv[1]
    count = int(sys.argv[2]) if len(sys.argv) > 2 else 240
    rng = np.random.default_rng(SEED)
    loops = []
    for _ in range(count):
        Nh, Dh, T = make_loop(rng)
        rec = {"T": T, "num": [float(c) for c in Nh[::-1]], "den": [float(c) for c in Dh[::-1]]}
        rec.update(analyse(Nh, Dh, T))
        loops.append(rec)
    with open(path, "w") as f:
        json.dump({"seed": SEED, "grid": GRID, "loops": loops}, f)


if __name__ == "__main__":
    main()
