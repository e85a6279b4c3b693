#!/usr/bin/python3
"""Reference check of a perf corpus with numpy/scipy (Debian python3-scipy).

  scipy_check.py run CORPUS_DIR OUT.json
      For every loop of CORPUS_DIR/loops.json: L = C·P·F (numerators and
      denominators multiplied, nothing cancelled), closed-loop poles =
      numpy.roots(den_L + num_L), stable when every |pole| < 1 − 1e-6 (the
      README's on-circle tolerance), gain and phase margins from
      scipy.signal.freqz of L on a dense grid of GRID points over [0, π]
      with every sign change refined by scipy.optimize.brentq. Writes the
      figures and prints the analysis time in seconds (reading the JSON
      included, interpreter start-up and imports excluded), also written to
      OUT.json.time; compare.sh times the whole process as well.

  scipy_check.py agree SCIPY.json RINGSIDE.json
      Compares with `ringside check --format json` output: same stability
      verdict, same existence of each margin, gain margin within GM_TOL dB
      and phase margin within PM_TOL degrees. Prints a summary; exit 1 on any
      disagreement.

Margin rules (the README's): gain margin at the phase crossings of −180°
(Re L < 0, including ω = 0 and ω = π where L is real), the one closest to
0 dB with its sign; phase margin 180° + arg L wrapped to (−180°, 180°],
the smallest over the gain crossings |L| = 1. Points where L has a pole on
the circle (|D| ≤ 1e-9·(|N| + |D|)) are skipped.
"""
import json
import sys
import time

import numpy as np
from scipy.optimize import brentq
from scipy.signal import freqz

GRID = 4096          # grid points on [0, π]; crossings are then brentq-refined
XTOL = 1e-13         # brentq tolerance in rad/sample (ringside bisects to 1e-12)
CIRCLE_TOL = 1e-6    # |pole| within this of 1 counts as on the circle: not stable
SINGULAR = 1e-9      # |D| below this share of |N| + |D|: a pole of L on the circle
GM_TOL = 1e-6        # dB: both refine the crossing far below this
PM_TOL = 1e-6        # degrees


def loop_tf(lp):
    num = np.array([1.0])
    den = np.array([1.0])
    for part in ("controller", "plant", "feedback"):
        num = np.polymul(num, lp[part]["num"])
        den = np.polymul(den, lp[part]["den"])
    return num, den


def margins(num, den):
    def nd(w):
        z = np.exp(1j * w)
        return np.polyval(num, z), np.polyval(den, z)

    def g(w):
        n, d = nd(w)
        return (n * np.conj(d)).imag

    def h(w):
        n, d = nd(w)
        return abs(n) ** 2 - abs(d) ** 2

    w = np.linspace(0, np.pi, GRID)
    _, hn = freqz(num, 1, worN=w)
    _, hd = freqz(den, 1, worN=w)
    # freqz evaluates b0 + b1·z⁻¹ + …, i.e. N(z)/zⁿ: restore N and D themselves.
    hn = hn * np.exp(1j * w * (len(num) - 1))
    hd = hd * np.exp(1j * w * (len(den) - 1))
    gv = (hn * np.conj(hd)).imag
    hv = np.abs(hn) ** 2 - np.abs(hd) ** 2

    def crossings(f, v):
        out = []
        for i in range(len(w) - 1):
            if v[i] == 0:
                out.append(w[i])
            elif v[i] * v[i + 1] < 0:
                a, b = f(w[i]), f(w[i + 1])
                if a * b < 0:
                    out.append(brentq(f, w[i], w[i + 1], xtol=XTOL))
                else:  # freqz and polyval round differently at a crossing on the grid
                    out.append(w[i] if abs(a) <= abs(b) else w[i + 1])
        if v[-1] == 0:
            out.append(w[-1])
        return out

    phase_w = crossings(g, gv) + [0.0, np.pi]  # L is real at both ends
    gm = None
    for x in sorted(set(phase_w)):
        n, d = nd(x)
        if abs(d) <= SINGULAR * (abs(n) + abs(d)) or abs(n) <= SINGULAR * (abs(n) + abs(d)):
            continue
        L = n / d
        if L.real >= 0:
            continue
        v = -20 * np.log10(abs(L))
        if gm is None or abs(v) < abs(gm):
            gm = v
    pm = None
    for x in crossings(h, hv):
        n, d = nd(x)
        if abs(d) <= SINGULAR * (abs(n) + abs(d)):
            continue
        v = 180 + np.degrees(np.angle(n / d))
        if v > 180:
            v -= 360
        if pm is None or v < pm:
            pm = v
    return gm, pm


def run(corpus, out):
    t0 = time.perf_counter()
    with open(f"{corpus}/loops.json") as f:
        data = json.load(f)
    res = {}
    for lp in data["loops"]:
        num, den = loop_tf(lp)
        char = np.polyadd(den, num)
        poles = np.roots(char)
        rmax = float(max(abs(poles))) if len(poles) else 0.0
        gm, pm = margins(num, den)
        res[lp["name"]] = {"stable": rmax < 1 - CIRCLE_TOL, "max_radius": rmax,
                           "gain_margin_db": gm, "phase_margin_deg": pm}
    elapsed = time.perf_counter() - t0
    with open(out, "w") as f:
        json.dump(res, f)
    with open(out + ".time", "w") as f:
        f.write(f"{elapsed:.3f}\n")
    print(f"{elapsed:.3f}")


def agree(sp, rs):
    with open(sp) as f:
        ref = json.load(f)
    with open(rs) as f:
        doc = json.load(f)
    got = {lp["name"]: lp for fl in doc["files"] for lp in fl["loops"]}
    bad = []
    worst_gm = worst_pm = 0.0
    for name, r in ref.items():
        g = got.get(name)
        if g is None:
            bad.append(f"{name}: missing from ringside")
            continue
        if g["stable"] != r["stable"]:
            bad.append(f"{name}: stable ringside {g['stable']} scipy {r['stable']} (scipy radius {r['max_radius']!r})")
        for key, tol in (("gain_margin_db", GM_TOL), ("phase_margin_deg", PM_TOL)):
            a, b = g.get(key), r[key]
            if (a is None) != (b is None):
                bad.append(f"{name}: {key} ringside {a} scipy {b}")
            elif a is not None:
                d = abs(a - b)
                if key == "gain_margin_db":
                    worst_gm = max(worst_gm, d)
                else:
                    worst_pm = max(worst_pm, d)
                if d > tol:
                    bad.append(f"{name}: {key} ringside {a!r} scipy {b!r} (diff {d:.3g})")
    n = len(ref)
    print(f"{n - len({b.split(':')[0] for b in bad})}/{n} loops agree "
          f"(stability; GM within {GM_TOL} dB, worst {worst_gm:.2g}; PM within {PM_TOL}°, worst {worst_pm:.2g})")
    for b in bad[:20]:
        print("  " + b)
    return 1 if bad else 0


if __name__ == "__main__":
    if len(sys.argv) == 4 and sys.argv[1] == "run":
        run(sys.argv[2], sys.argv[3])
    elif len(sys.argv) == 4 and sys.argv[1] == "agree":
        sys.exit(agree(sys.argv[2], sys.argv[3]))
    else:
        sys.exit(__doc__)
