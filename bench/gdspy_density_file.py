#!/usr/bin/python3
"""Side-by-side reference for `cli density FILE --layer L/D --window-um W --step-um S`: the same job written with
the general-purpose libraries python3-gdspy and numpy. Read and flatten the GDSII file (gdspy), bucket the layer's
polygons per cell of gcd(W, S) µm, exact union of each bucket clipped to its cell (gdspy.boolean 'and'), then the
windows from a summed-area table over the cell areas (numpy). Window origin: lower-left of the layout bbox; only
full windows (Trenchant's default edge policy). Prints one JSON line with the timings and the window statistics.

Usage: /usr/bin/python3 bench/gdspy_density_file.py FILE [--layer 1/0] [--window-um 100] [--step-um 50]
"""
import argparse
import json
import math
import time
import warnings

import gdspy
import numpy as np

warnings.simplefilter("ignore")


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("file")
    ap.add_argument("--layer", default="1/0")
    ap.add_argument("--window-um", type=float, default=100.0)
    ap.add_argument("--step-um", type=float, default=50.0)
    a = ap.parse_args()
    layer, datatype = (int(v) for v in a.layer.split("/"))
    W, S = a.window_um, a.step_um
    cell = float(math.gcd(int(round(W * 1000)), int(round(S * 1000)))) / 1000.0

    t0 = time.perf_counter()
    lib = gdspy.GdsLibrary(infile=a.file, units="convert")  # coordinates in µm (user unit 1 µm)
    top = lib.top_level()[0]
    by_spec = top.get_polygons(by_spec=True)
    polys = by_spec.get((layer, datatype), [])
    bb = top.get_bounding_box()
    t_read = time.perf_counter() - t0

    t0 = time.perf_counter()
    x0, y0 = bb[0]
    nx = int(math.ceil((bb[1][0] - x0) / cell - 1e-9))
    ny = int(math.ceil((bb[1][1] - y0) / cell - 1e-9))
    buckets = {}
    for k, p in enumerate(polys):
        i0 = max(0, int((p[:, 0].min() - x0) // cell)); i1 = min(nx - 1, int(math.ceil((p[:, 0].max() - x0) / cell)) - 1)
        j0 = max(0, int((p[:, 1].min() - y0) // cell)); j1 = min(ny - 1, int(math.ceil((p[:, 1].max() - y0) / cell)) - 1)
        for j in range(j0, j1 + 1):
            for i in range(i0, i1 + 1):
                buckets.setdefault((i, j), []).append(k)
    area = np.zeros((ny, nx))
    for (i, j), ks in buckets.items():
        box = gdspy.Rectangle((x0 + i * cell, y0 + j * cell), (x0 + (i + 1) * cell, y0 + (j + 1) * cell))
        inter = gdspy.boolean([polys[k] for k in ks], box, "and", precision=1e-3)
        if inter is not None:
            area[j, i] = inter.area()
    t_union = time.perf_counter() - t0

    t0 = time.perf_counter()
    sat = np.zeros((ny + 1, nx + 1))
    sat[1:, 1:] = area.cumsum(0).cumsum(1)
    w, s = int(round(W / cell)), int(round(S / cell))
    # Only full windows inside the bbox, as `cli density --edge full` (the default).
    ext_x, ext_y = bb[1][0] - x0, bb[1][1] - y0
    mx = int(math.floor((ext_x - W) / S + 1e-9)) + 1 if ext_x >= W else 0
    my = int(math.floor((ext_y - W) / S + 1e-9)) + 1 if ext_y >= W else 0
    ix, iy = np.arange(mx) * s, np.arange(my) * s
    vals = (sat[np.ix_(iy + w, ix + w)] - sat[np.ix_(iy, ix + w)] - sat[np.ix_(iy + w, ix)] + sat[np.ix_(iy, ix)]) / (W * W)
    t_win = time.perf_counter() - t0
    print(json.dumps({"polygons": len(polys), "read_s": t_read, "union_s": t_union, "windows_s": t_win,
                      "total_s": t_read + t_union + t_win, "nx": mx, "ny": my,
                      "min": float(vals.min()) if vals.size else None, "max": float(vals.max()) if vals.size else None,
                      "mean": float(vals.mean()) if vals.size else None}))


if __name__ == "__main__":
    main()
