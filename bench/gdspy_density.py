#!/usr/bin/python3
"""Reference timing for the geometry benchmark: the same seeded layout as bench/geometry-layout.ts (1000 × 1000
sites of 10 µm, one polygon each, 1 nm dbu), window density 100/50 µm and 700/70 µm computed with the
general-purpose libraries python3-gdspy (exact polygon boolean per 10 µm cell: union of the polygons touching the
cell, intersected with the cell) and numpy (summed-area table over the cell areas).

Run with the system interpreter:  /usr/bin/python3 bench/gdspy_density.py [--sites N]
(--sites < 1000 runs a corner of the layout, e.g. 200 → 2 mm × 2 mm, for a quicker estimate.)
"""
import argparse
import math
import time

import gdspy
import numpy as np

M32 = 0xFFFFFFFF


def mulberry32(seed):
    a = seed & M32

    def imul(x, y):
        return (x * y) & M32

    def rnd():
        nonlocal a
        a = (a + 0x6D2B79F5) & M32
        t = a
        t = imul(t ^ (t >> 15), t | 1)
        t ^= (t + imul(t ^ (t >> 7), t | 61)) & M32
        return ((t ^ (t >> 14)) & M32) / 4294967296

    return rnd


def bench_layout(sites, seed=4242, full_sites=1000):
    """Mirror of benchLayout() in bench/geometry-layout.ts (same PRNG call order)."""
    rnd = mulberry32(seed)
    F = math.floor
    polys = []
    lim = full_sites * 10000
    for sj in range(full_sites):
        for si in range(full_sites):
            bx, by = si * 10000, sj * 10000
            u = rnd()
            if u < 0.55:
                s = 1000 + F(rnd() * 3000)
                x0 = bx + 500 + F(rnd() * (9000 - s)); y0 = by + 500 + F(rnd() * (9000 - s))
                p = [(x0, y0), (x0 + s, y0), (x0 + s, y0 + s), (x0, y0 + s)]
            elif u < 0.97:
                long_ = u >= 0.85
                w = 800 + F(rnd() * 1200)
                ln = 12000 + F(rnd() * 18000) if long_ else 5000 + F(rnd() * 4000)
                horizontal = rnd() < 0.5
                a = 500 + F(rnd() * (9000 - w))
                b = 500 + F(rnd() * max(1, 9000 - ln))
                if horizontal:
                    x0, y0, x1, y1 = bx + b, by + a, min(bx + b + ln, lim), by + a + w
                else:
                    x0, y0, x1, y1 = bx + a, by + b, bx + a + w, min(by + b + ln, lim)
                p = [(x0, y0), (x1, y0), (x1, y1), (x0, y1)]
            elif u < 0.99998:
                r = 1000 + F(rnd() * 1500)
                cx, cy = bx + 5000, by + 5000
                p = [(cx + F(r * math.cos(2 * math.pi * k / 24) + 0.5), cy + F(r * math.sin(2 * math.pi * k / 24) + 0.5)) for k in range(24)]
            else:
                s = 100000 + F(rnd() * 200000)
                p = [(bx, by), (min(bx + s, lim), by), (min(bx + s, lim), min(by + s, lim)), (bx, min(by + s, lim))]
            if si < sites and sj < sites:
                polys.append(p)
    return polys


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument('--sites', type=int, default=1000)
    args = ap.parse_args()
    n = args.sites
    t0 = time.perf_counter()
    polys = bench_layout(n)
    t_gen = time.perf_counter() - t0

    t0 = time.perf_counter()
    cell = 10000  # 10 µm in nm
    ncell = n
    buckets = {}
    for k, p in enumerate(polys):
        xs = [q[0] for q in p]; ys = [q[1] for q in p]
        i0, i1 = max(0, min(xs) // cell), min(ncell - 1, (max(xs) - 1) // cell)
        j0, j1 = max(0, min(ys) // cell), min(ncell - 1, (max(ys) - 1) // cell)
        for j in range(j0, j1 + 1):
            for i in range(i0, i1 + 1):
                buckets.setdefault((i, j), []).append(k)
    shapes = [gdspy.Polygon([(x / 1000.0, y / 1000.0) for (x, y) in p]) for p in polys]
    area = np.zeros((ncell, ncell))
    for (i, j), ks in buckets.items():
        box = gdspy.Rectangle((i * 10.0, j * 10.0), ((i + 1) * 10.0, (j + 1) * 10.0))
        inter = gdspy.boolean([shapes[k] for k in ks], box, 'and', precision=1e-3)
        if inter is not None:
            area[j, i] = inter.area()
    t_area = time.perf_counter() - t0

    t0 = time.perf_counter()
    sat = np.zeros((ncell + 1, ncell + 1))
    sat[1:, 1:] = area.cumsum(0).cumsum(1)
    out = []
    for (W, S) in [(100, 50), (700, 70)]:
        w, s = W // 10, S // 10
        nw = (ncell - w) // s + 1
        idx = np.arange(nw) * s
        vals = (sat[np.ix_(idx + w, idx + w)] - sat[np.ix_(idx, idx + w)] - sat[np.ix_(idx + w, idx)] + sat[np.ix_(idx, idx)]) / (W * W)
        out.append((W, S, nw, vals.min(), vals.max(), vals.mean()))
    t_win = time.perf_counter() - t0
    print(f'gdspy+numpy density: {len(polys)} polygons over {n * 10} µm square')
    print(f'  generate {t_gen:.2f} s (not counted)  cell areas (gdspy boolean) {t_area:.2f} s  windows (numpy) {t_win:.3f} s  total {t_area + t_win:.2f} s')
    for (W, S, nw, mn, mx, mean) in out:
        print(f'  {W}/{S}: {nw}x{nw} min {mn:.6f} max {mx:.6f} mean {mean:.6f}')
    print(f'  global {area.sum() / (n * 10.0) ** 2:.6f}')


if __name__ == '__main__':
    main()
