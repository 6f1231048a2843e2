#!/usr/bin/python3
"""Write the reference .npy files the npy package tests read.

Run from this folder with Debian's NumPy (/usr/bin/python3, NumPy 1.24):

    /usr/bin/python3 gen.py

The values are a formula the Go test recomputes: element i of each array
(C order) is (i - 7) * 0.37 + 1 / (i + 3), so a wrong offset, dtype or
axis order shows as a wrong value.
"""
import numpy as np
from numpy.lib import format as npformat


def values(n):
    i = np.arange(n, dtype=np.float64)
    return (i - 7) * 0.37 + 1.0 / (i + 3)


def main():
    # Version 1.0, float32, a small (height, width, channels) cube.
    a = values(2 * 3 * 5).reshape(2, 3, 5).astype("<f4")
    np.save("cube-v1-f4.npy", a)

    # Version 2.0, float64, a 2-D array.
    b = values(4 * 6).reshape(4, 6).astype("<f8")
    with open("map-v2-f8.npy", "wb") as f:
        npformat.write_array(f, b, version=(2, 0))

    # Version 3.0 (UTF-8 header), float64, 1-D.
    c = values(7).astype("<f8")
    with open("vec-v3-f8.npy", "wb") as f:
        npformat.write_array(f, c, version=(3, 0))

    # Version 1.0, float64, 0-dimensional.
    np.save("scalar-v1-f8.npy", np.float64(2.5))

    # Refused: Fortran order, big-endian, integers.
    np.save("fortran.npy", np.asfortranarray(values(6).reshape(2, 3)))
    np.save("bigendian.npy", values(4).astype(">f8"))
    np.save("int64.npy", np.arange(4, dtype="<i8"))

    # numpy.save's exact bytes for arrays the Go writer must reproduce.
    np.save("write-2x3-f8.npy", values(6).reshape(2, 3))
    np.save("write-5-f4.npy", values(5).astype("<f4"))


if __name__ == "__main__":
    main()
