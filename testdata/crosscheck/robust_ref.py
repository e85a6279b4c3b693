"""Robust-stability reference for analysis (ringside's vary): numpy only,
plus scipy's bounded scalar minimiser.

Reads on stdin a JSON list of cases {"names": [...], "lo": [...], "hi": [...],
"char": "<python expression>"}, where the expression gives the closed-loop
characteristic polynomial (numpy.poly1d or coefficient list, highest power
first) from the gains named in "names" (numpy is `np`). Prints per case:

  corners   the largest root modulus at each corner of the box
  edge_max  the largest root modulus over the box's edges: 2001 samples per
            edge, the best refined by scipy's bounded Brent minimiser
  point     where edge_max is attained
  inner_max the largest root modulus on a 81^n grid over the whole box
  stable    whether every point examined has all roots strictly inside
"""
import itertools
import json
import sys

import numpy as np
from scipy.optimize import minimize_scalar


def radius(f, x):
    c = np.atleast_1d(np.asarray(f(*x), dtype=float))
    c = np.trim_zeros(c, "f")
    if len(c) <= 1:
        return 0.0
    return float(np.max(np.abs(np.roots(c))))


def case(c):
    names, lo, hi = c["names"], np.array(c["lo"], float), np.array(c["hi"], float)
    f = eval("lambda " + ", ".join(names) + ": " + c["char"])
    n = len(names)
    corners = [list(p) for p in itertools.product(*zip(lo, hi))]
    best, at = -1.0, None
    for d in range(n):
        for base in itertools.product(*[(lo[j], hi[j]) for j in range(n) if j != d]):
            def point(t, base=base, d=d):
                x = list(base)
                x.insert(d, lo[d] + t * (hi[d] - lo[d]))
                return x
            ts = np.linspace(0, 1, 2001)
            rs = [radius(f, point(t)) for t in ts]
            i = int(np.argmax(rs))
            r, t = rs[i], ts[i]
            a, b = ts[max(i - 1, 0)], ts[min(i + 1, len(ts) - 1)]
            m = minimize_scalar(lambda t: -radius(f, point(t)), bounds=(a, b), method="bounded",
                                options={"xatol": 1e-12})
            if -m.fun > r:
                r, t = -m.fun, m.x
            if r > best:
                best, at = r, point(t)
    inner = max(radius(f, x) for x in itertools.product(*[np.linspace(lo[j], hi[j], 81) for j in range(n)]))
    return {"corners": [radius(f, x) for x in corners], "edge_max": best, "point": [float(v) for v in at],
            "inner_max": inner, "stable": bool(max(best, inner) < 1)}


json.dump([case(c) for c in json.load(sys.stdin)], sys.stdout)
