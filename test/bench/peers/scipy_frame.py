#!/usr/bin/python3
"""Whole-frame peer, run by test/bench/engine.ts with Debian's python3-scipy and python3-numpy.

Usage: scipy_frame.py DIR. DIR holds a.bin and b.bin (two bn maps, float64 little-endian, row-major,
x fastest) and frame.json {nx, ny, dx, dy, dtS, sigma, thresholdG}. The steps a practitioner would
write with numpy/scipy for one sample with inferred velocities:
  1. the differential affine velocity estimator (Schuck 2006, DAVE) at every pixel above the
     threshold: mid-time field and its rate, fourth-order central differences, the windowed
     moments of the channel products by separable Gaussian filters (scipy.ndimage.correlate1d with
     the taps w(d) d^p, zero outside the map, window cut at 3 sigma), then the 6x6 normal
     equations solved by numpy.linalg.solve for all pixels at once;
  2. G_theta of the mid-time field with that velocity by real FFTs (scipy.fft.rfft2/irfft2), the
     kernel spectra computed once per grid and cached (not timed).
Prints one JSON line: median wall and CPU time per pair (ms), the share of pixels with a velocity
and the total rate, so that a reader can see it did the work.
"""
import json
import os
import sys
import time

import numpy as np
import scipy
from scipy import fft as sfft
from scipy.ndimage import correlate1d

folder = sys.argv[1]
meta = json.load(open(os.path.join(folder, "frame.json")))
nx, ny, dx, dy, dt = meta["nx"], meta["ny"], meta["dx"], meta["dy"], meta["dtS"]
sigma, threshold = meta["sigma"], meta["thresholdG"]
a = np.fromfile(os.path.join(folder, "a.bin"), dtype="<f8").reshape(ny, nx)
b = np.fromfile(os.path.join(folder, "b.bin"), dtype="<f8").reshape(ny, nx)

radius = max(1, int(np.ceil(3 * sigma)))
d = np.arange(-radius, radius + 1, dtype=float)
w = np.exp(-d * d / (2 * sigma * sigma))
taps = [w * d ** p for p in range(5)]
deriv = np.array([1.0, -8.0, 0.0, 8.0, -1.0]) / 12.0

# Channels 0 Gx, 1 Gy, 2 Bz, 3 dBz/dt; model columns Ux, Vy, Uy, Vx, U0, V0 as (coef, channel, px, py).
COLUMNS = [[(1, 0, 1, 0), (1, 2, 0, 0)], [(1, 1, 0, 1), (1, 2, 0, 0)], [(1, 0, 0, 1)], [(1, 1, 1, 0)], [(1, 0, 0, 0)], [(1, 1, 0, 0)]]
TARGET = [(1, 3, 0, 0)]


def dave():
    mid = 0.5 * (a + b)
    rate = (b - a) / dt
    gx = correlate1d(mid, deriv, axis=1, mode="constant")
    gy = correlate1d(mid, deriv, axis=0, mode="constant")
    chans = [gx, gy, mid, rate]
    allcols = COLUMNS + [TARGET]
    cache = {}

    def moment(j, k, px, py):
        key = (min(j, k), max(j, k), px, py)
        if key not in cache:
            rows = correlate1d(chans[j] * chans[k], taps[px], axis=1, mode="constant")
            cache[key] = correlate1d(rows, taps[py], axis=0, mode="constant")
        return cache[key]

    def entry(p, q):
        return sum(c1 * c2 * moment(j1, j2, px1 + px2, py1 + py2)
                   for (c1, j1, px1, py1) in allcols[p] for (c2, j2, px2, py2) in allcols[q])

    strong = np.abs(mid) >= threshold
    strong[:2, :] = strong[-2:, :] = False
    strong[:, :2] = strong[:, -2:] = False
    m = np.empty((int(strong.sum()), 6, 6))
    rhs = np.empty((m.shape[0], 6))
    for p in range(6):
        for q in range(p, 6):
            v = entry(p, q)[strong]
            m[:, p, q] = v
            m[:, q, p] = v
        rhs[:, p] = -entry(p, 6)[strong]
    sol = np.linalg.solve(m, rhs[:, :, None])[:, :, 0]
    vx = np.full((ny, nx), np.nan)
    vy = np.full((ny, nx), np.nan)
    vx[strong] = sol[:, 4] * dx * 1e3  # pixels/s -> km/s (1 Mm = 1e3 km)
    vy[strong] = sol[:, 5] * dy * 1e3
    return mid, vx, vy


shape = (sfft.next_fast_len(2 * ny - 1, real=True), sfft.next_fast_len(2 * nx - 1, real=True))
xs = np.arange(-(nx - 1), nx) * dx
ys = np.arange(-(ny - 1), ny) * dy
X, Y = xs[None, :], ys[:, None]
r2 = X * X + Y * Y
r2[ny - 1, nx - 1] = np.inf
kxs = sfft.rfft2(X / r2 * dx * dy * 1e8, shape)
kys = sfft.rfft2(Y / r2 * dx * dy * 1e8, shape)
sl = (slice(ny - 1, 2 * ny - 1), slice(nx - 1, 2 * nx - 1))


def frame():
    mid, vx, vy = dave()
    ok = np.isfinite(vx) & np.isfinite(vy)
    bn = np.where(ok, mid, 0.0)
    fx = np.where(ok, mid * vx, 0.0)
    fy = np.where(ok, mid * vy, 0.0)
    s = sfft.rfft2(bn, shape)
    p = sfft.irfft2(s * kxs, shape)[sl]
    q = sfft.irfft2(s * kys, shape)[sl]
    r = sfft.irfft2(sfft.rfft2(fy, shape) * kxs - sfft.rfft2(fx, shape) * kys, shape)[sl]
    g = -(1e5 / (2 * np.pi)) * (fy * p - fx * q - bn * r)
    return ok.mean(), float(g.sum() * dx * dy * 1e16)


frame()
wall, cpu = [], []
for _ in range(int(meta.get("runs", 3))):
    c = time.process_time()
    t = time.perf_counter()
    valid, total = frame()
    wall.append((time.perf_counter() - t) * 1e3)
    cpu.append((time.process_time() - c) * 1e3)
wall.sort()
cpu.sort()
print(json.dumps({"scipy": scipy.__version__, "numpy": np.__version__, "wall_ms": wall[len(wall) // 2], "cpu_ms": cpu[len(cpu) // 2],
                  "valid_share": float(valid), "total": total,
                  "malloc": {k: v for k, v in os.environ.items() if k.startswith("MALLOC_")}}), flush=True)
