#!/usr/bin/python3
"""Generate a speed-comparison corpus for ringside and the scipy reference.

Each loop is a P or PI controller around a second-order plant discretized by
zero-order hold with scipy.signal.cont2discrete, with a one-sample
measurement delay in the feedback path. The .loop files write the plant in
z with the coefficients scipy produced (repr, so the exact doubles), and
loops.json holds the same discrete numerators and denominators, so both
tools analyse identical z transfer functions.

Usage: gen_corpus.py N OUTDIR [--literal] [--pi] [--per-file K] [--seed S]

--literal writes the controller gains as numbers inside the blocks (no
`gain` lines), which skips ringside's per-gain stable-interval and safe-value
search. --pi makes every controller PI (every loop third order around the
delay: the PI pole and the second-order plant); otherwise 30 % are P.
Files hold at most K loops each (default 1000; ringside reads files up to
1 MiB, which holds about 2,500 loops).
"""
import argparse
import json
import os

import numpy as np
from scipy.signal import cont2discrete

T = 1e-3  # sample period, s (1 kHz controller board)
PER_FILE = 1000


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("n", type=int)
    ap.add_argument("outdir")
    ap.add_argument("--literal", action="store_true")
    ap.add_argument("--pi", action="store_true")
    ap.add_argument("--per-file", type=int, default=PER_FILE)
    ap.add_argument("--seed", type=int, default=1)
    a = ap.parse_args()
    rng = np.random.default_rng(a.seed)
    os.makedirs(a.outdir, exist_ok=True)
    loops, files = [], {}
    for i in range(a.n):
        wn = 5 + 60 * rng.random()        # rad/s
        zeta = 0.15 + 0.9 * rng.random()
        kdc = 0.5 + 2 * rng.random()
        num_s = [kdc * wn * wn]
        den_s = [1, 2 * zeta * wn, wn * wn]
        bz, az, _ = cont2discrete((num_s, den_s), T, method="zoh")
        bz = np.trim_zeros(np.atleast_1d(np.squeeze(bz)), "f")
        az = np.atleast_1d(np.squeeze(az))
        pi = rng.random() < 0.7 or a.pi
        kp = 0.05 + 4 * rng.random()
        ki = (1 + 60 * rng.random()) if pi else 0.0
        # Controller C(z) = kp + ki*T*z/(z-1) (backward-Euler integrator), or kp.
        if pi:
            cn = np.polyadd(np.polymul([kp], [1, -1]), [ki * T, 0])
            cd = np.array([1.0, -1.0])
        else:
            cn, cd = np.array([kp]), np.array([1.0])
        name = f"l{i}"
        loops.append({
            "name": name,
            "file": f"part_{i // a.per_file:03d}.loop",
            "controller": {"num": list(map(float, cn)), "den": list(map(float, cd))},
            "plant": {"num": list(map(float, bz)), "den": list(map(float, az))},
            "feedback": {"num": [1.0], "den": [1.0, 0.0]},
        })
        text = []
        if pi:
            if a.literal:
                text.append(f"block c{i} = {kp!r} + {ki!r} * 0.001 * z / (z - 1)")
            else:
                text.append(f"gain kp{i} = {kp!r}")
                text.append(f"gain ki{i} = {ki!r}")
                text.append(f"block c{i} = kp{i} + ki{i} * 0.001 * z / (z - 1)")
        else:
            if a.literal:
                text.append(f"block c{i} = {kp!r}")
            else:
                text.append(f"gain kp{i} = {kp!r}")
                text.append(f"block c{i} = kp{i}")
        text.append(f"block p{i} = ({poly_text(bz)}) / ({poly_text(az)})")
        text.append(f"loop {name} {{\n  forward c{i} p{i}\n  feedback d\n}}")
        files.setdefault(loops[-1]["file"], []).append("\n".join(text))
    for fname, parts in files.items():
        with open(os.path.join(a.outdir, fname), "w") as f:
            f.write("# generated speed-comparison corpus (testdata/perf/gen_corpus.py)\n")
            f.write("sample 1 ms\nblock d = z^-1\n\n")
            f.write("\n\n".join(parts) + "\n")
    with open(os.path.join(a.outdir, "loops.json"), "w") as f:
        json.dump({"sample_s": T, "loops": loops}, f)


def poly_text(c):
    """c in z, highest power first, as .loop text with exact doubles."""
    n = len(c) - 1
    terms = []
    for k, v in enumerate(c):
        p = n - k
        v = float(v)
        mono = "" if p == 0 else ("z" if p == 1 else f"z^{p}")
        coef = repr(abs(v))
        t = coef if p == 0 else f"{coef}*{mono}"
        terms.append(("- " if v < 0 else "+ ") + t)
    s = " ".join(terms)
    return s[2:] if s.startswith("+ ") else "-" + s[1:]


if __name__ == "__main__":
    main()
