#!/usr/bin/python3
"""Peer timings for the G_theta map, run by test/bench/engine.ts with Debian's python3-scipy.

Usage: scipy_gtheta.py [--workers W] N [N ...]. Prints one JSON line per size: the median time of
the same sums (the three kernel convolutions P = Kx*Bn, Q = Ky*Bn, R = Kx*Fy - Ky*Fx and the map) by
  - scipy.signal.fftconvolve (four convolutions, kernels transformed every call), and
  - scipy.fft real transforms (rfft2/irfft2, `workers` threads) with the kernel spectra computed
    once and cached, the way a user timing many frames of one grid would write it.
It also prints the process's CPU time per call (user + system) beside the wall time, and the
glibc allocator settings it ran with (engine.ts sets MALLOC_MMAP_THRESHOLD_ / MALLOC_TRIM_THRESHOLD_
so that large arrays are not mapped and unmapped anew on every call).
"""
import json
import os
import resource
import sys
import time

import numpy as np
import scipy
from scipy import fft as sfft
from scipy.signal import fftconvolve


def median_ms(fn, runs=5, warmup=1):
    for _ in range(warmup):
        fn()
    ts, cpu = [], []
    for _ in range(runs):
        c = time.process_time()
        t = time.perf_counter()
        fn()
        ts.append((time.perf_counter() - t) * 1e3)
        cpu.append((time.process_time() - c) * 1e3)
    ts.sort()
    cpu.sort()
    return ts[len(ts) // 2], cpu[len(cpu) // 2]


def kernels(n, d):
    x = np.arange(-(n - 1), n) * d
    X, Y = x[None, :], x[:, None]
    r2 = X * X + Y * Y
    r2[n - 1, n - 1] = np.inf
    return X / r2, Y / r2


args = sys.argv[1:]
workers = 1
if args[:1] == ["--workers"]:
    workers = int(args[1])
    args = args[2:]
for n in [int(a) for a in args] or [256, 512, 1024]:
    rng = np.random.default_rng(1)
    bn = rng.normal(0, 500, (n, n))
    fx = bn * rng.normal(0, 1, (n, n))
    fy = bn * rng.normal(0, 1, (n, n))
    kx, ky = kernels(n, 0.36)

    def with_fftconvolve():
        c = lambda a, k: fftconvolve(a, k, mode="full")[n - 1:2 * n - 1, n - 1:2 * n - 1]
        p, q = c(bn, kx), c(bn, ky)
        r = c(fy, kx) - c(fx, ky)
        return -(fy * p - fx * q - bn * r) / (2 * np.pi)

    shape = (sfft.next_fast_len(2 * n - 1, real=True),) * 2
    kxs = sfft.rfft2(kx, shape)
    kys = sfft.rfft2(ky, shape)

    def with_cached_rfft():
        w = workers
        b = sfft.rfft2(bn, shape, workers=w)
        p = sfft.irfft2(b * kxs, shape, workers=w)[n - 1:2 * n - 1, n - 1:2 * n - 1]
        q = sfft.irfft2(b * kys, shape, workers=w)[n - 1:2 * n - 1, n - 1:2 * n - 1]
        r = sfft.irfft2(sfft.rfft2(fy, shape, workers=w) * kxs - sfft.rfft2(fx, shape, workers=w) * kys, shape, workers=w)[n - 1:2 * n - 1, n - 1:2 * n - 1]
        return -(fy * p - fx * q - bn * r) / (2 * np.pi)

    runs = 3 if n >= 1024 else 5
    fc, _ = median_ms(with_fftconvolve, runs) if workers == 1 else (None, 0)
    rf, rf_cpu = median_ms(with_cached_rfft, 9 if n < 1024 else 5)
    print(json.dumps({"n": n, "scipy": scipy.__version__, "numpy": np.__version__, "workers": workers,
                      "fftconvolve_ms": fc, "rfft_cached_ms": rf, "rfft_cached_cpu_ms": rf_cpu,
                      "malloc": {k: v for k, v in os.environ.items() if k.startswith("MALLOC_")},
                      "max_rss_mib": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024}), flush=True)
