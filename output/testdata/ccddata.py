# Reads a FITS image as astropy's CCDData does (which parses BUNIT as a FITS unit string and
# fails on one it does not know) and prints its unit and the sum of its pixels.
import sys
import warnings

from astropy.nddata import CCDData

warnings.simplefilter("ignore")
c = CCDData.read(sys.argv[1])
print(c.unit.to_string("fits"), float(c.data.sum()))
