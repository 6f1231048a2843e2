#!/usr/bin/python3
"""Generate scipy_nnls.json: fixed-shift fits solved by SciPy's NNLS.

Run with Debian's /usr/bin/python3 (SciPy 1.10.1):
    /usr/bin/python3 lineshape/fit/testdata/gen_scipy.py

Each case holds references sampled on a uniform grid, an unknown, and the
solution of min ||A x - y|| with x >= 0 for the references and a free-sign
Legendre background P_0..P_deg of t = 2(E - lo)/(hi - lo) - 1 over the grid.
SciPy's nnls has no free variables, so each background column enters twice,
as +P_j and -P_j, both nonnegative; the background coefficient is the
difference (the minimiser is unique because A has full column rank).
"""
import json

import numpy as np
import scipy
from numpy.polynomial import legendre
from scipy.optimize import nnls


def dgauss(e, e0, s):
    # Derivative of a Gaussian of height 1 (a derivative-mode lineshape).
    return -(e - e0) / s**2 * np.exp(-0.5 * ((e - e0) / s) ** 2)


def case(name, rng, n, start, step, peaks, mix, deg, noise):
    e = start + step * np.arange(n)
    refs = [sum(a * dgauss(e, e0, s) for (a, e0, s) in p) for p in peaks]
    t = 2 * (e - e[0]) / (e[-1] - e[0]) - 1
    basis = [legendre.legval(t, np.eye(deg + 1)[j]) for j in range(deg + 1)]
    y = sum(c * r for c, r in zip(mix, refs)) + 0.05 * basis[0] - 0.02 * (basis[1] if deg >= 1 else 0)
    y = y + noise * rng.standard_normal(n)
    a = np.column_stack(refs + basis + [-b for b in basis])
    x, rnorm = nnls(a, y, maxiter=50 * a.shape[1])
    k = len(refs)
    q = deg + 1
    return {
        "name": name,
        "start_ev": start,
        "step_ev": step,
        "refs": [r.tolist() for r in refs],
        "y": y.tolist(),
        "background_degree": deg,
        "coef": x[:k].tolist(),
        "background": (x[k:k + q] - x[k + q:]).tolist(),
        "residual_norm": rnorm,
    }


def main():
    rng = np.random.default_rng(20261201)
    cases = [
        case("three-refs-all-positive", rng, 120, 370.0, 0.5,
             [[(1.0, 400.0, 2.0), (0.3, 385.0, 3.0)],
              [(0.8, 394.0, 2.5), (0.4, 381.0, 2.0)],
              [(0.9, 397.5, 1.8), (0.3, 410.0, 2.5)]],
             [0.5, 0.3, 0.2], 1, 0.01),
        case("three-refs-one-at-zero", rng, 120, 370.0, 0.5,
             [[(1.0, 400.0, 2.0), (0.3, 385.0, 3.0)],
              [(0.8, 394.0, 2.5), (0.4, 381.0, 2.0)],
              [(0.9, 397.5, 1.8), (0.3, 410.0, 2.5)]],
             [0.7, -0.1, 0.4], 1, 0.01),
        case("two-refs-quadratic-background", rng, 90, 60.0, 0.25,
             [[(1.0, 72.0, 1.5)], [(0.7, 68.0, 2.0), (0.2, 62.0, 1.0)]],
             [0.4, 0.6], 2, 0.02),
    ]
    out = {"source": "SciPy %s scipy.optimize.nnls, NumPy %s" % (scipy.__version__, np.__version__),
           "cases": cases}
    with open(__file__.replace("gen_scipy.py", "scipy_nnls.json"), "w") as f:
        json.dump(out, f, indent=1)
        f.write("\n")


if __name__ == "__main__":
    main()
