"""Independent checks of vcz FITS images with astropy (Debian python3-astropy).

  astropy_image.py check FILE PIX...   read FILE; print JSON with the data
        (flattened in file order), BUNIT, the pixel scales from astropy.wcs
        and the world coordinates of the 0-based pixels PIX ("ix,iy" each)
  astropy_image.py write-cd OUT        write a 2-D image whose scale is a CD
        matrix in degrees, east left; print JSON of what was written
  astropy_image.py write-arcsec OUT    write a 2-D image with CDELT in arcsec,
        east to the right (CDELT1 > 0) and BITPIX = 32 with BSCALE/BZERO
"""
import json
import sys

import numpy as np
from astropy.io import fits
from astropy.wcs import WCS
from astropy.wcs.utils import proj_plane_pixel_scales


def check(path, pixels):
    with fits.open(path) as hdus:
        h = hdus[0]
        data = h.data.astype(np.float64)
        w = WCS(h.header).celestial
        scales = proj_plane_pixel_scales(w)  # deg per pixel
        world = []
        for p in pixels:
            ix, iy = (float(v) for v in p.split(","))
            ra, dec = w.wcs_pix2world([[ix, iy]], 0)[0]
            world.append([float(ra), float(dec)])
        out = {
            "shape": list(data.shape),
            "data": [None if np.isnan(v) else float(v) for v in data.ravel()],
            "bunit": h.header.get("BUNIT", ""),
            "scales_deg": [float(s) for s in scales],
            "cdelt1_sign": float(np.sign(w.wcs.get_cdelt()[0] * w.wcs.get_pc()[0, 0])),
            "world": world,
            "history": [str(x) for x in h.header.get("HISTORY", [])],
        }
    json.dump(out, sys.stdout)


def write_cd(path):
    ny, nx = 5, 6
    data = np.arange(nx * ny, dtype=np.float64).reshape(ny, nx) / 10.0
    h = fits.PrimaryHDU(data)
    pix = 2.5e-6  # deg
    h.header["CTYPE1"] = "RA---SIN"
    h.header["CTYPE2"] = "DEC--SIN"
    h.header["CRPIX1"] = nx // 2 + 1
    h.header["CRPIX2"] = ny // 2 + 1
    h.header["CRVAL1"] = 45.0
    h.header["CRVAL2"] = 20.0
    h.header["CD1_1"] = -pix
    h.header["CD1_2"] = 0.0
    h.header["CD2_1"] = 0.0
    h.header["CD2_2"] = pix
    h.header["BUNIT"] = "Jy/pixel"
    h.header["HISTORY"] = "astropy CD matrix image"
    h.writeto(path, overwrite=True)
    json.dump({"nx": nx, "ny": ny, "pixel_deg": pix, "ra": 45.0, "dec": 20.0,
               "data": [float(v) for v in data.ravel()]}, sys.stdout)


def write_arcsec(path):
    ny, nx = 4, 3
    ints = np.arange(nx * ny, dtype=np.int32).reshape(ny, nx) - 5
    h = fits.PrimaryHDU(ints)
    h.header["BSCALE"] = 0.5
    h.header["BZERO"] = 10.0
    pix = 0.004  # arcsec
    h.header["CTYPE1"] = "RA---SIN"
    h.header["CTYPE2"] = "DEC--SIN"
    h.header["CUNIT1"] = "arcsec"
    h.header["CUNIT2"] = "arcsec"
    h.header["CDELT1"] = pix  # east to the right
    h.header["CDELT2"] = pix
    h.header["CRPIX1"] = 2
    h.header["CRPIX2"] = 3
    h.writeto(path, overwrite=True)
    with fits.open(path, do_not_scale_image_data=False) as hdus:
        phys = hdus[0].data.astype(np.float64)
    json.dump({"nx": nx, "ny": ny, "pixel_arcsec": pix,
               "data": [float(v) for v in phys.ravel()]}, sys.stdout)


if __name__ == "__main__":
    cmd = sys.argv[1]
    if cmd == "check":
        check(sys.argv[2], sys.argv[3:])
    elif cmd == "write-cd":
        write_cd(sys.argv[2])
    elif cmd == "write-arcsec":
        write_arcsec(sys.argv[2])
    else:
        sys.exit(__doc__)
