#!/usr/bin/python3
"""Outside reference for tests/layout/gdsii-tile-source.test.ts: read a GDSII file with gdspy (Debian
python3-gdspy), flatten its top cell and print, per layer/datatype, the polygon count and the summed polygon area
(each polygon on its own, no union) in database units squared. Usage: /usr/bin/python3 gdspy_count_area.py FILE
"""
import json
import sys
import warnings

import gdspy
import numpy

warnings.simplefilter("ignore")
lib = gdspy.GdsLibrary(infile=sys.argv[1], units="import")
dbu = lib.precision / lib.unit  # one database unit in user units
top = lib.top_level()[0]
out = []
for (layer, datatype), polys in sorted(top.get_polygons(by_spec=True).items()):
    area = 0.0
    for p in polys:
        x, y = p[:, 0], p[:, 1]
        area += abs(float(numpy.dot(x, numpy.roll(y, -1)) - numpy.dot(y, numpy.roll(x, -1)))) / 2
    out.append({"layer": int(layer), "datatype": int(datatype), "polygons": len(polys), "area": area / dbu / dbu})
print(json.dumps(out))
