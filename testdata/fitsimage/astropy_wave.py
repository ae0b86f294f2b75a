"""Print, as JSON, the wavelength (m) of every plane of a FITS cube as astropy.wcs
computes it from the header (and, for a -TAB axis, the table it names), for the tests of
vcz/io/fitsimage. Usage: astropy_wave.py FILE"""
import json
import sys

from astropy.io import fits
from astropy.wcs import WCS

with fits.open(sys.argv[1]) as hdul:
    hdr = hdul[0].header
    w = WCS(hdr, fobj=hdul)
    n = hdr["NAXIS3"]
    out = [float(w.pixel_to_world_values(0, 0, k)[2]) for k in range(n)]
    unit = str(w.wcs.cunit[2])
print(json.dumps({"wave": out, "unit": unit, "ctype": w.wcs.ctype[2]}))
