#!/usr/bin/python3
"""Write scipy_nnls.json: NNLS problems and SciPy's solutions for nnls tests.

Run from the repository root with Debian's SciPy (python3-scipy 1.10.1):

    /usr/bin/python3 nnls/testdata/gen_scipy.py

The Go test TestSciPyGolden reads the JSON; it never runs Python.
scipy.optimize.nnls is the Lawson-Hanson Fortran NNLS code. SciPy has no
free variables, so every problem here is all-constrained. Problems whose
solution is nearly degenerate (a passive coefficient or an active dual
within a margin of zero) are skipped, so that the passive set is
well-defined and comparable exactly.
"""
import json
import os
import sys

import numpy as np
import scipy
from scipy.optimize import nnls


def gaussian_problem(rng, m, n):
    a = rng.standard_normal((m, n))
    x = rng.standard_normal(n)
    b = a @ x + 0.3 * rng.standard_normal(m)
    return "gaussian", a, b


def spectro_problem(rng, m, n):
    # Derivative-of-Gaussian references on a 0.5 eV axis, centres within
    # +-3 eV, widths 1.5-3 eV, as in the Go tests' spectroProblem.
    e = 0.5 * np.arange(m)
    e0 = 0.5 * m / 2
    a = np.empty((m, n))
    for j in range(n):
        c = e0 + 6 * (rng.random() - 0.5)
        s = 1.5 + 1.5 * rng.random()
        u = (e - c) / s
        a[:, j] = -u * np.exp(-u * u / 2)
    coef = np.where(rng.random(n) < 0.6, rng.random(n), -0.2 * rng.random(n))
    b = a @ coef + 0.02 * rng.standard_normal(m)
    return "spectro", a, b


def scaled_cond(a):
    s = a / np.linalg.norm(a, axis=0)
    return np.linalg.cond(s)


def margin_ok(a, b, x):
    w = a.T @ (b - a @ x)
    norms = np.linalg.norm(a, axis=0)
    scale = np.linalg.norm(b) * norms
    pas = x > 0
    if pas.any() and (x[pas] * norms[pas]).min() < 1e-6 * np.linalg.norm(b):
        return False
    act = ~pas
    if act.any() and (w[act] / scale[act]).max() > -1e-6:
        return False
    return True


def main():
    rng = np.random.default_rng(20261201)
    probs = []
    sizes = [(m, n) for n in (1, 2, 3, 4, 6, 8, 12) for m in (n, n + 3, 2 * n + 10, 60)]
    sizes += [(200, 3), (200, 6), (400, 6), (400, 12)]
    tries = 0
    while len(probs) < 120 and tries < 5000:
        tries += 1
        m, n = sizes[len(probs) % len(sizes)]
        kind = len(probs) % 3
        if kind == 2 and m >= 40 and n <= 8:
            name, a, b = spectro_problem(rng, m, n)
        else:
            name, a, b = gaussian_problem(rng, m, n)
        if scaled_cond(a) > 1e5:
            continue
        x, rnorm = nnls(a, b)
        if not margin_ok(a, b, x):
            continue
        probs.append({
            "kind": name,
            "m": m,
            "n": n,
            "a": [float(v) for v in a.ravel()],  # row-major
            "b": [float(v) for v in b],
            "x": [float(v) for v in x],
            "rnorm": float(rnorm),
            "passive": [int(j) for j in np.flatnonzero(x > 0)],
        })
    nspec = 0
    while nspec < 24 and tries < 10000:
        tries += 1
        m, n = (200, 300)[nspec % 2], 2 + nspec % 7
        name, a, b = spectro_problem(rng, m, n)
        if scaled_cond(a) > 1e5:
            continue
        x, rnorm = nnls(a, b)
        if not margin_ok(a, b, x):
            continue
        nspec += 1
        probs.append({
            "kind": name,
            "m": m,
            "n": n,
            "a": [float(v) for v in a.ravel()],  # row-major
            "b": [float(v) for v in b],
            "x": [float(v) for v in x],
            "rnorm": float(rnorm),
            "passive": [int(j) for j in np.flatnonzero(x > 0)],
        })
    out = {
        "source": "scipy.optimize.nnls, SciPy %s (Debian python3-scipy), NumPy %s" % (scipy.__version__, np.__version__),
        "generator": "nnls/testdata/gen_scipy.py",
        "problems": probs,
    }
    path = os.path.join(os.path.dirname(os.path.abspath(__file__)), "scipy_nnls.json")
    with open(path, "w") as f:
        json.dump(out, f, separators=(",", ":"))
        f.write("\n")
    print("wrote %d problems (%d tries) to %s" % (len(probs), tries, path), file=sys.stderr)


if __name__ == "__main__":
    main()
