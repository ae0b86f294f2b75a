"""Print the keywords and values of the primary header of a FITS file as JSON,
read with astropy (which joins long strings continued on CONTINUE cards).

Usage: dump_header.py FILE
Output: {"KEY": value, ...} for every keyword with a value; strings as read,
without trailing blanks.
"""
import json
import sys

from astropy.io import fits

out = {}
with fits.open(sys.argv[1]) as hdus:
    for card in hdus[0].header.cards:
        if card.keyword in ("", "COMMENT", "HISTORY"):
            continue
        v = card.value
        if isinstance(v, str):
            v = v.rstrip()
        out[card.keyword] = v
json.dump(out, sys.stdout)
