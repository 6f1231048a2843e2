#!/usr/bin/python3
"""Reference minima of the real derivative spectrum, for TestRealDerivativeSpectrum.

Reads ../shared/realdata/derivative-aes-metal-crystal.dat (relative to the
repository root; pass another path as the first argument), smooths it with a
9-point quadratic Savitzky-Golay filter over the samples as recorded
(scipy.signal.savgol_filter, default mode "interp"), and lists the minima
whose prominence is at least 5 % of the smoothed range
(scipy.signal.find_peaks on the negated values). Output:
realdata-minima.txt beside this script. Run with Debian's python3-scipy
(SciPy 1.10.1): /usr/bin/python3 lineshape/testdata/realdata_minima.py
"""
import os
import sys

import numpy as np
import scipy
from scipy.signal import find_peaks, savgol_filter

here = os.path.dirname(os.path.abspath(__file__))
path = sys.argv[1] if len(sys.argv) > 1 else os.path.join(
    here, "..", "..", "..", "shared", "realdata", "derivative-aes-metal-crystal.dat")
d = np.loadtxt(path)
e, y = d[:, 0], d[:, 1]
s = savgol_filter(y, 9, 2)
rng = s.max() - s.min()
peaks, props = find_peaks(-s, prominence=0.05 * rng)
with open(os.path.join(here, "realdata-minima.txt"), "w") as out:
    out.write("# SciPy %s savgol_filter(y, 9, 2), find_peaks(-y, prominence=0.05*range)\n" % scipy.__version__)
    out.write("# smoothed range %.6g\n" % rng)
    out.write("# energy_ev prominence_over_range smoothed_value\n")
    for i, p in zip(peaks, props["prominences"]):
        out.write("%.5f %.6f %.6g\n" % (e[i], p / rng, s[i]))
