"""Print DATE-OBS of a FITS image and the ISO time astropy.time gives for its MJD-OBS
(UTC, truncated to whole seconds), one per line."""
import sys

from astropy.io import fits
from astropy.time import Time

h = fits.getheader(sys.argv[1])
print(h["DATE-OBS"])
print(Time(h["MJD-OBS"], format="mjd", scale="utc").isot[:19])
