#!/usr/bin/python3
"""Read a Starveil sky mask back with healpy (and astropy), print JSON for the API tests.

    /usr/bin/python3 tests/reference/read_mask.py map MASK.fits
        healpy.read_map(path, field=None, nest=True, h=True): NSIDE, ORDERING, COORDSYS, the
        header cards and every column's pixel values.

    /usr/bin/python3 tests/reference/read_mask.py moc GALACTIC_MASK.fits ORDER
        The equatorial (ICRS) NESTED pixels at ORDER whose centres fall in a flagged pixel of a
        Galactic mask, computed with healpy (pixels) and astropy (ICRS -> Galactic), as an
        independent check of the MOC; plus the pixels whose answer changes when the centre moves
        by 2e-5 deg (closer to a cell edge than the ~7e-6 deg between astropy's Galactic frame,
        which goes through FK5, and the Hipparcos rotation Starveil applies to ICRS directly).

Exit status 3 when healpy or astropy cannot be imported (the tests then skip or, under CI, fail).
"""

import json
import sys

try:
    import numpy as np
    import healpy as hp
    import astropy
    import astropy.units as u
    from astropy.coordinates import SkyCoord
except ImportError as e:  # pragma: no cover - depends on the machine
    print(json.dumps({"error": f"cannot import: {e}"}))
    sys.exit(3)


def header_dict(h):
    out = {}
    for key, value in h:
        if key in ("COMMENT", "HISTORY", ""):
            continue
        out[key] = value if isinstance(value, (bool, int, float, str)) else str(value)
    return out


def read(path):
    maps, h = hp.read_map(path, field=None, nest=True, h=True)
    return maps, h, header_dict(h)


def cmd_map(path):
    maps, h, hd = read(path)
    names = [hd[f"TTYPE{i + 1}"] for i in range(int(hd["TFIELDS"]))]
    print(json.dumps({
        "healpy": hp.__version__,
        "unseen": float(hp.UNSEEN),
        "nside": int(hd["NSIDE"]),
        "npix": int(maps[0].size),
        "ordering": hd["ORDERING"],
        "coordsys": hd["COORDSYS"],
        "header": hd,
        "comments": [str(v) for k, v in h if k == "COMMENT"],
        "columns": names,
        "values": {name: [float(x) for x in maps[i]] for i, name in enumerate(names)},
    }))


def cmd_moc(path, order):
    maps, _h, hd = read(path)
    if hd["COORDSYS"] != "G":
        sys.exit("the moc check expects a Galactic mask")
    nside_mask = int(hd["NSIDE"])
    mask = maps[0]
    nside_moc = 2 ** order
    ipix = np.arange(hp.nside2npix(nside_moc))
    ra, dec = hp.pix2ang(nside_moc, ipix, nest=True, lonlat=True)
    gal = SkyCoord(ra=ra * u.deg, dec=dec * u.deg, frame="icrs").galactic
    l, b = gal.l.deg, gal.b.deg

    def flagged(lon, lat):
        return mask[hp.ang2pix(nside_mask, lon, np.clip(lat, -90.0, 90.0), nest=True, lonlat=True)] == 1

    inside = flagged(l, b)
    eps = 2e-5
    ambiguous = np.zeros(inside.shape, dtype=bool)
    for dl, db in ((eps, 0.0), (-eps, 0.0), (0.0, eps), (0.0, -eps)):
        ambiguous |= flagged(l + dl / np.maximum(np.cos(np.radians(b)), 1e-6), b + db) != inside
    print(json.dumps({
        "healpy": hp.__version__,
        "astropy": astropy.__version__,
        "order": order,
        "inside": [int(p) for p in ipix[inside]],
        "ambiguous": [int(p) for p in ipix[ambiguous]],
    }))


if __name__ == "__main__":
    if len(sys.argv) >= 3 and sys.argv[1] == "map":
        cmd_map(sys.argv[2])
    elif len(sys.argv) >= 4 and sys.argv[1] == "moc":
        cmd_moc(sys.argv[2], int(sys.argv[3]))
    else:
        sys.exit(__doc__)
