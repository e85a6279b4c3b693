#!/usr/bin/env python3
"""Reference for analysis/realize: rounds the ideal structure's coefficients
itself and finds the poles of the rounded structure with numpy.

Reads JSON on stdin: {"cases": [{"name", "sections": [{"b": [...], "a": [...]}],
"delta": 0 or the power of two Δ, "format": "float64" | "float32" | [M, N]}],
"issue": true}. Writes JSON on stdout: per case the rounded coefficients
and the poles (re, im); for "issue", the fourth-order example of the issue
built from its pole radii and angles alone.
"""
import json
import sys

import numpy as np


def round_fixed(x, n):
    """Nearest multiple of 2^-n, ties away from zero (not numpy's ties-to-even)."""
    s = np.ldexp(abs(x), n)
    r = np.floor(s + 0.5)
    return float(np.copysign(np.ldexp(r, -n), x))


def round_all(v, fmt):
    if fmt == "float64":
        return [float(x) for x in v]
    if fmt == "float32":
        return [float(np.float32(x)) for x in v]
    return [round_fixed(x, fmt[1]) for x in v]


def poles(a, delta):
    if len(a) < 2:
        return []
    r = np.roots(a)
    if delta:
        r = 1 + delta * r
    return [[float(z.real), float(z.imag)] for z in r]


def case(c):
    out = {"name": c["name"], "sections": [], "poles": []}
    for s in c["sections"]:
        b = round_all(s["b"], c["format"])
        a = [1.0] + round_all(s["a"][1:], c["format"])
        out["sections"].append({"b": b, "a": a})
        out["poles"] += poles(a, c["delta"])
    return out


def issue():
    """Pole pairs at radius 0.996 and 0.993, angles 0.015 and 0.04 rad."""
    pairs = [(0.996, 0.015), (0.993, 0.04)]
    ps = []
    for r, th in pairs:
        ps += [r * np.exp(1j * th), r * np.exp(-1j * th)]
    a = np.real(np.poly(ps))
    direct = [1.0] + [round_fixed(x, 12) for x in a[1:]]
    res = {"direct_q3_12": float(max(abs(np.roots(direct))))}
    worst = 0.0
    for r, th in pairs:
        sec = [1.0, round_fixed(-2 * r * np.cos(th), 14), round_fixed(r * r, 14)]
        worst = max(worst, float(max(abs(np.roots(sec)))))
    res["sections_q1_14"] = worst
    return res


def main():
    req = json.load(sys.stdin)
    out = {"numpy": np.__version__, "cases": [case(c) for c in req["cases"]]}
    if req.get("issue"):
        out["issue"] = issue()
    json.dump(out, sys.stdout)


if __name__ == "__main__":
    main()
