"""Independent OIFITS writer and reader for the tests of vcz/io/oifits.

Uses only astropy.io.fits and numpy (Debian python3-astropy).

  astropy_oifits.py write v1|v2 OUT   write an OIFITS file of an invented
                                      scenario, then print its dump
  astropy_oifits.py dump FILE         print the dump of FILE

The dump is JSON: a list with one object per binary table HDU,
{"hdu": n (1-based), "extname": ..., "keywords": {...}, "units": {...},
"columns": {"NAME": [row values]}} plus a first object for the primary
header keywords. Vector cells are lists, logicals are booleans, strings are
stripped of trailing blanks; NaN and infinities are the strings "NaN",
"Inf" and "-Inf" because JSON has no such numbers.
"""
import json
import math
import sys

import numpy as np
from astropy.io import fits

KEYWORDS = ["OI_REVN", "DATE-OBS", "ARRNAME", "INSNAME", "CORRNAME", "AMPTYP",
            "PHITYP", "FRAME", "ARRAYX", "ARRAYY", "ARRAYZ", "CALSTAT", "FOV",
            "FOVTYPE"]
PRIMARY = ["ORIGIN", "DATE", "DATE-OBS", "CONTENT", "TELESCOP", "INSTRUME",
           "OBSERVER", "OBJECT", "INSMODE", "REFERENC", "PROG_ID", "PROCSOFT",
           "OBSTECH"]


def plain(v):
    if isinstance(v, np.ndarray):
        return [plain(x) for x in v.ravel()]
    if isinstance(v, (np.bool_, bool)):
        return bool(v)
    if isinstance(v, np.integer):
        return int(v)
    if isinstance(v, (np.floating, float)):
        f = float(v)
        if math.isnan(f):
            return "NaN"
        if math.isinf(f):
            return "Inf" if f > 0 else "-Inf"
        return f
    if isinstance(v, (bytes, np.bytes_)):
        return v.decode("ascii").rstrip()
    if isinstance(v, str):
        return v.rstrip()
    return v


def dump(path):
    out = []
    with fits.open(path) as hdus:
        prim = {k: plain(hdus[0].header[k]) for k in PRIMARY if k in hdus[0].header}
        out.append({"hdu": 1, "extname": "", "keywords": prim,
                    "history": [str(h) for h in hdus[0].header.get("HISTORY", [])]})
        for i, hdu in enumerate(hdus[1:], start=2):
            if not isinstance(hdu, fits.BinTableHDU):
                out.append({"hdu": i, "extname": hdu.name, "image": True})
                continue
            kw = {k: plain(hdu.header[k]) for k in KEYWORDS if k in hdu.header}
            cols, units = {}, {}
            for c in hdu.columns:
                cols[c.name] = [plain(x) for x in hdu.data[c.name]]
                units[c.name] = c.unit or ""
            out.append({"hdu": i, "extname": hdu.name, "keywords": kw,
                        "units": units, "columns": cols})
    json.dump(out, sys.stdout)


def col(name, fmt, array, unit=None, dim=None):
    return fits.Column(name=name, format=fmt, array=array, unit=unit, dim=dim)


def table(extname, cols, keywords):
    hdu = fits.BinTableHDU.from_columns(cols)
    hdu.header["EXTNAME"] = extname
    for k, v in keywords:
        hdu.header[k] = v
    return hdu


def write(version, path):
    v2 = version == "v2"
    revn = 2 if v2 else 1
    prim = fits.PrimaryHDU()
    if v2:
        for k, v in [("ORIGIN", "astropy test"), ("DATE", "2026-02-01"),
                     ("DATE-OBS", "2025-10-01"), ("CONTENT", "OIFITS2"),
                     ("TELESCOP", "HERON"), ("INSTRUME", "QUAD4"),
                     ("OBSERVER", "Nobody"), ("OBJECT", "Nimbus-7"),
                     ("INSMODE", "LOW"), ("REFERENC", "none"),
                     ("PROG_ID", "X-9"), ("PROCSOFT", "astropy script"),
                     ("OBSTECH", "SCAN")]:
            prim.header[k] = v
    prim.header["HISTORY"] = "written by astropy_oifits.py"
    hdus = [prim]
    tcols = [
        col("TARGET_ID", "1I", np.array([2, 4], dtype=np.int16)),
        col("TARGET", "16A", np.array(["Nimbus-7", "Cirrus-2"])),
        col("RAEP0", "1D", np.array([120.25, 10.5]), "deg"),
        col("DECEP0", "1D", np.array([-33.5, 61.125]), "deg"),
        col("EQUINOX", "1E", np.array([2000.0, 2000.0], dtype=np.float32), "yr"),
        col("RA_ERR", "1D", np.array([1e-6, 0.0]), "deg"),
        col("DEC_ERR", "1D", np.array([2e-6, 0.0]), "deg"),
        col("SYSVEL", "1D", np.array([-2500.0, 0.0]), "m/s"),
        col("VELTYP", "8A", np.array(["LSR", "UNKNOWN"])),
        col("VELDEF", "8A", np.array(["OPTICAL", "OPTICAL"])),
        col("PMRA", "1D", np.array([1e-7, 0.0]), "deg/yr"),
        col("PMDEC", "1D", np.array([-3e-7, 0.0]), "deg/yr"),
        col("PMRA_ERR", "1D", np.array([1e-9, 0.0]), "deg/yr"),
        col("PMDEC_ERR", "1D", np.array([1e-9, 0.0]), "deg/yr"),
        col("PARALLAX", "1E", np.array([1e-6, 0.0], dtype=np.float32), "deg"),
        col("PARA_ERR", "1E", np.array([1e-8, 0.0], dtype=np.float32), "deg"),
        col("SPECTYP", "16A", np.array(["M2III", "G2V"])),
    ]
    if v2:
        tcols.append(col("CATEGORY", "3A", np.array(["SCI", "CAL"])))
    hdus.append(table("OI_TARGET", tcols, [("OI_REVN", revn)]))
    acols = [
        col("TEL_NAME", "16A", np.array(["H1", "H2", "H3", "H4"])),
        col("STA_NAME", "16A", np.array(["S1", "S2", "S3", "S4"])),
        col("STA_INDEX", "1I", np.array([1, 2, 3, 4], dtype=np.int16)),
        col("DIAMETER", "1E", np.array([1.0, 1.0, 1.8, 1.8], dtype=np.float32), "m"),
        col("STAXYZ", "3D", np.array([[0, 0, 0], [10.0, 20.0, 0.5], [-30.0, 5.0, 0.0], [15.0, -40.0, 1.0]]), "m"),
    ]
    if v2:
        acols += [col("FOV", "1D", np.array([0.4, 0.4, 0.3, 0.3]), "arcsec"),
                  col("FOVTYPE", "6A", np.array(["FWHM"] * 4))]
    hdus.append(table("OI_ARRAY", acols, [("OI_REVN", revn), ("ARRNAME", "HERON"),
                                           ("FRAME", "GEOCENTRIC"), ("ARRAYX", 1.0e6),
                                           ("ARRAYY", -5.0e6), ("ARRAYZ", 3.5e6)]))
    waves4 = np.array([1.5e-6, 1.6e-6, 1.7e-6, 1.8e-6], dtype=np.float32)
    hdus.append(table("OI_WAVELENGTH", [col("EFF_WAVE", "1E", waves4, "m"),
                                        col("EFF_BAND", "1E", np.full(4, 1e-7, dtype=np.float32), "m")],
                      [("OI_REVN", revn), ("INSNAME", "QUAD4")]))
    hdus.append(table("OI_WAVELENGTH", [col("EFF_WAVE", "1E", np.array([2.2e-6], dtype=np.float32), "m"),
                                        col("EFF_BAND", "1E", np.array([4e-7], dtype=np.float32), "m")],
                      [("OI_REVN", revn), ("INSNAME", "MONO")]))
    # A non-OI extension the reader must skip with a notice.
    hdus.append(fits.ImageHDU(np.zeros((2, 3)), name="EXTRA_IMAGE"))

    n = 3
    rng = np.random.default_rng(7)
    vis2 = rng.uniform(0.1, 0.9, (n, 4))
    vis2[1, 2] = np.nan
    err = np.full((n, 4), 0.02)
    err[2, 3] = -1.0  # flagged below, so allowed
    flag = np.zeros((n, 4), dtype=bool)
    flag[0, 1] = True
    flag[2, 3] = True
    common = lambda nsta: [
        col("TARGET_ID", "1I", np.array([2, 4, 2], dtype=np.int16)),
        col("TIME", "1D", np.zeros(n), "s"),
        col("MJD", "1D", np.array([60950.1, 60950.2, 60950.3]), "day"),
        col("INT_TIME", "1D", np.array([5.0, 5.0, 7.5]), "s"),
    ]
    sta2 = np.array([[1, 2], [2, 3], [3, 4]], dtype=np.int16)
    kw = [("OI_REVN", revn), ("DATE-OBS", "2025-10-01"), ("INSNAME", "QUAD4")]
    if v2:
        kw.append(("ARRNAME", "HERON"))
    hdus.append(table("OI_VIS2", common(2) + [
        col("VIS2DATA", "4D", vis2, dim="(4)"),
        col("VIS2ERR", "4D", err, dim="(4)"),
        col("UCOORD", "1D", np.array([10.0, -40.0, 45.0]), "m"),
        col("VCOORD", "1D", np.array([20.0, -15.0, -45.0]), "m"),
        col("STA_INDEX", "2I", sta2),
        col("FLAG", "4L", flag, dim="(4)"),
    ], kw))
    # The one-channel table uses the scalar forms D and L (NWAVE = 1).
    kw1 = [("OI_REVN", revn), ("DATE-OBS", "2025-10-01"), ("INSNAME", "MONO"), ("ARRNAME", "HERON")]
    hdus.append(table("OI_VIS2", common(2) + [
        col("VIS2DATA", "D", np.array([0.5, 0.25, 0.125])),
        col("VIS2ERR", "D", np.array([0.01, 0.02, 0.03])),
        col("UCOORD", "D", np.array([1.0, 2.0, 3.0]), "m"),
        col("VCOORD", "D", np.array([-1.0, -2.0, -3.0]), "m"),
        col("STA_INDEX", "2I", sta2),
        col("FLAG", "L", np.array([False, True, False])),
    ], kw1))
    sta3 = np.array([[1, 2, 3], [2, 3, 4], [1, 3, 4]], dtype=np.int16)
    hdus.append(table("OI_T3", common(3) + [
        col("T3AMP", "4D", rng.uniform(0.1, 0.5, (n, 4))),
        col("T3AMPERR", "4D", np.full((n, 4), 0.05)),
        col("T3PHI", "4D", rng.uniform(-180, 180, (n, 4)), "deg"),
        col("T3PHIERR", "4D", np.full((n, 4), 2.5), "deg"),
        col("U1COORD", "1D", np.array([10.0, -40.0, 5.0]), "m"),
        col("V1COORD", "1D", np.array([20.0, -15.0, 6.0]), "m"),
        col("U2COORD", "1D", np.array([-40.0, 45.0, 7.0]), "m"),
        col("V2COORD", "1D", np.array([-15.0, -45.0, 8.0]), "m"),
        col("STA_INDEX", "3I", sta3),
        col("FLAG", "4L", np.zeros((n, 4), dtype=bool)),
    ], [("OI_REVN", revn), ("DATE-OBS", "2025-10-01"), ("INSNAME", "QUAD4")] + ([("ARRNAME", "HERON")] if v2 else [])))
    vkw = [("OI_REVN", revn), ("DATE-OBS", "2025-10-01"), ("INSNAME", "QUAD4"), ("ARRNAME", "HERON")]
    if v2:
        vkw += [("AMPTYP", "differential"), ("PHITYP", "differential")]
    hdus.append(table("OI_VIS", common(2) + [
        col("VISAMP", "4D", rng.uniform(0.8, 1.2, (n, 4))),
        col("VISAMPERR", "4D", np.full((n, 4), 0.01)),
        col("VISPHI", "4D", rng.uniform(-10, 10, (n, 4)), "deg"),
        col("VISPHIERR", "4D", np.full((n, 4), 0.5), "deg"),
        col("UCOORD", "1D", np.array([10.0, -40.0, 45.0]), "m"),
        col("VCOORD", "1D", np.array([20.0, -15.0, -45.0]), "m"),
        col("STA_INDEX", "2I", sta2),
        col("FLAG", "4L", flag),
    ], vkw))
    if v2:
        hdus.append(table("OI_FLUX", [
            col("TARGET_ID", "1I", np.array([2, 4], dtype=np.int16)),
            col("MJD", "1D", np.array([60950.1, 60950.2]), "day"),
            col("INT_TIME", "1D", np.array([5.0, 5.0]), "s"),
            col("FLUXDATA", "4D", np.array([[1.0, 1.1, 1.2, 1.3], [2.0, 2.1, 2.2, 2.3]]), "Jy"),
            col("FLUXERR", "4D", np.full((2, 4), 0.1), "Jy"),
            col("FLAG", "4L", np.zeros((2, 4), dtype=bool)),
        ], [("OI_REVN", 1), ("DATE-OBS", "2025-10-01"), ("INSNAME", "QUAD4"), ("CALSTAT", "C")]))
    fits.HDUList(hdus).writeto(path, overwrite=True)
    dump(path)


if __name__ == "__main__":
    if sys.argv[1] == "write":
        write(sys.argv[2], sys.argv[3])
    elif sys.argv[1] == "dump":
        dump(sys.argv[2])
    else:
        sys.exit("usage: astropy_oifits.py write v1|v2 OUT | dump FILE")
