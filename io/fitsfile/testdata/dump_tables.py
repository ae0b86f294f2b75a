"""Print every binary table of a FITS file as JSON, read with astropy.

Usage: dump_tables.py FILE
Output: {"EXTNAME": {"COLUMN": [row values...], ...}, ...} plus "_units".
Strings are stripped of trailing blanks, logicals are JSON booleans.
"""
import json
import sys

import numpy as np
from astropy.io import fits


def plain(v):
    if isinstance(v, np.ndarray):
        return [plain(x) for x in v]
    if isinstance(v, (np.bool_, bool)):
        return bool(v)
    if isinstance(v, (np.integer,)):
        return int(v)
    if isinstance(v, (np.floating, float)):
        return float(v)
    if isinstance(v, (bytes, np.bytes_)):
        return v.decode("ascii").rstrip()
    if isinstance(v, str):
        return v.rstrip()
    return v


out = {}
with fits.open(sys.argv[1]) as hdus:
    for hdu in hdus[1:]:
        if not isinstance(hdu, fits.BinTableHDU):
            continue
        cols = {}
        units = {}
        for c in hdu.columns:
            cols[c.name] = [plain(x) for x in hdu.data[c.name]]
            units[c.name] = c.unit or ""
        cols["_units"] = units
        out[hdu.name] = cols
json.dump(out, sys.stdout)
