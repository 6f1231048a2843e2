#!/usr/bin/python3
"""Time scipy.optimize.nnls (SciPy 1.10.1, Debian python3-scipy) per call.

Usage, from the repository root:

    /usr/bin/python3 nnls/testdata/time_scipy.py [-count 10] [-suffix -2] > scipy.txt
    go test -run XXX -bench Solver -count 10 ./nnls > go.txt
    benchstat scipy.txt go.txt

It solves the same deterministic problems as the Go BenchmarkSolver
(benchProblem in bench_test.go: m channels, n derivative-of-Gaussian
references, all constrained) in a Python loop, and prints the mean time
per call in Go benchmark format under the Go benchmark's names, so that
benchstat compares the two directly: wall time as ns/op and the CPU time
of the calling thread (time.thread_time) as cpu-ns/op, which the Go
benchmarks report too and which a loaded machine distorts much less. The
suffix (default -2) must match GOMAXPROCS of the Go run.
"""
import argparse
import time

import numpy as np
from scipy.optimize import nnls


def bench_problem(m, n):
    # Keep in step with benchProblem in bench_test.go.
    e = 0.5 * np.arange(m)
    e0 = 0.25 * m
    a = np.empty((m, n))
    for j in range(n):
        c = e0 + 1.2 * (j - (n - 1) / 2)
        s = 2 + 0.25 * j
        u = (e - c) / s
        a[:, j] = -u * np.exp(-u * u / 2)
    coef = np.array([1 + 0.1 * j if j % 2 == 0 else -0.2 for j in range(n)])
    b = a @ coef
    state = 12345
    for i in range(m):
        state = (1103515245 * state + 12345) % (1 << 31)
        b[i] += 0.04 * (state / float(1 << 31) - 0.5)
    return a, b


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("-count", type=int, default=10)
    ap.add_argument("-suffix", default="-2")
    ap.add_argument("-seconds", type=float, default=0.5)
    args = ap.parse_args()
    cpu = ""
    try:
        with open("/proc/cpuinfo") as f:
            for line in f:
                if line.startswith("model name"):
                    cpu = line.split(":", 1)[1].strip()
                    break
    except OSError:
        pass
    print("goos: linux\ngoarch: amd64\npkg: statemix/nnls\ncpu: %s" % cpu)
    for m in (200, 400):
        for n in (3, 6, 12):
            a, b = bench_problem(m, n)
            nnls(a, b)
            # Calibrate the loop length to about args.seconds.
            reps = 100
            while True:
                t0 = time.perf_counter()
                for _ in range(reps):
                    nnls(a, b)
                dt = time.perf_counter() - t0
                if dt > 0.1:
                    break
                reps *= 4
            reps = max(1, int(reps * args.seconds / dt))
            for _ in range(args.count):
                t0 = time.perf_counter()
                c0 = time.thread_time()
                for _ in range(reps):
                    nnls(a, b)
                dc = time.thread_time() - c0
                dt = time.perf_counter() - t0
                print("BenchmarkSolver/m=%d/n=%d%s %d %.1f ns/op %.1f cpu-ns/op"
                      % (m, n, args.suffix, reps, dt / reps * 1e9, dc / reps * 1e9), flush=True)


if __name__ == "__main__":
    main()
