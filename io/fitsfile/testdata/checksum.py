"""Verify the CHECKSUM and DATASUM of every HDU of a FITS file with astropy.

astropy.io.fits computes both sums itself (FITS checksum convention) when a file is
opened with checksum=True and warns on a mismatch; warnings are turned into errors here.
Prints one line per HDU: its index, DATASUM and CHECKSUM.
"""
import sys
import warnings

from astropy.io import fits

warnings.simplefilter("error")
with fits.open(sys.argv[1], checksum=True) as hdul:
    for i, h in enumerate(hdul):
        print(i, h.header.get("DATASUM"), h.header.get("CHECKSUM"))
