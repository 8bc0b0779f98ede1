#!/usr/bin/python3
"""Comparison for bench/read-flatten.bench.ts: read a GDSII file with gdspy (Debian python3-gdspy) and flatten it
to numpy polygon arrays per layer/datatype, the same job as Trenchant's readLayoutFile. Prints one JSON line.
Usage: /usr/bin/python3 bench/gdspy_read.py FILE
"""
import json
import sys
import time
import warnings

import gdspy
import numpy

warnings.simplefilter("ignore")
t0 = time.perf_counter()
lib = gdspy.GdsLibrary(infile=sys.argv[1], units="import")
t1 = time.perf_counter()
top = lib.top_level()[0]
polys = top.get_polygons(by_spec=True)
flat = {k: numpy.concatenate(v) for k, v in polys.items()}  # one coordinate array per layer, like Trenchant's sets
t2 = time.perf_counter()
print(json.dumps({"read_s": t1 - t0, "flatten_s": t2 - t1, "total_s": t2 - t0,
                  "polygons": sum(len(v) for v in polys.values()), "points": sum(len(a) for a in flat.values())}))
