"""Read FITS images with astropy as a user would and print one line per file: its name, the
class astropy.nddata.CCDData gives (which needs a valid BUNIT), the number of celestial WCS
axes, and whether its CHECKSUM verifies. Usage: astropy_read.py FILE..."""
import sys
import warnings

from astropy.io import fits
from astropy.nddata import CCDData
from astropy.wcs import WCS

warnings.simplefilter("error")
for path in sys.argv[1:]:
    with fits.open(path, checksum=True) as hdul:
        hdr = hdul[0].header
        w = WCS(hdr, fobj=hdul)
        celestial = w.celestial.naxis
    unit = "none"
    if "BUNIT" in hdr:
        unit = str(CCDData.read(path, hdu=0).unit).replace(" ", "")
    print(path, unit, celestial, "checksum-ok")
