#!/usr/bin/env python3
"""Reads the reference photos with exiftool and Pillow and writes tools_read.json.

The photos and photos.json are made by mock-patrols
(`cargo test -p mock-patrols photos::tests::regenerate -- --ignored`).
Needs: exiftool (Debian package libimage-exiftool-perl) and Pillow (pip).
Run from anywhere: python3 tests/reference/photo/read_with_tools.py
"""
import hashlib
import json
import subprocess
from pathlib import Path

import PIL
from PIL import Image

HERE = Path(__file__).resolve().parent
EXIF_IFD = 0x8769
GPS_IFD = 0x8825
# Tag numbers per CIPA DC-008 (Exif 2.3x).
DATE_TIME_ORIGINAL, OFFSET_TIME_ORIGINAL, SUBSEC_TIME_ORIGINAL = 0x9003, 0x9011, 0x9291
GPS_LAT_REF, GPS_LAT, GPS_LON_REF, GPS_LON = 1, 2, 3, 4
GPS_DIR_REF, GPS_DIR = 0x10, 0x11
EXIFTOOL_KEYS = [
    "DateTimeOriginal", "OffsetTimeOriginal", "SubSecTimeOriginal", "SubSecDateTimeOriginal",
    "GPSDateTime", "GPSLatitude", "GPSLongitude", "GPSLatitudeRef", "GPSLongitudeRef",
    "GPSImgDirection", "GPSImgDirectionRef", "ImageWidth", "ImageHeight", "YCbCrSubSampling",
]


def dms(values, ref):
    d, m, s = (float(v) for v in values)
    deg = d + m / 60.0 + s / 3600.0
    return -deg if ref in ("S", "W") else deg


def pillow_read(path):
    with Image.open(path) as im:
        exif = im.getexif()
        e = exif.get_ifd(EXIF_IFD)
        g = exif.get_ifd(GPS_IFD)
        return {
            "width": im.width,
            "height": im.height,
            "DateTimeOriginal": e.get(DATE_TIME_ORIGINAL),
            "OffsetTimeOriginal": e.get(OFFSET_TIME_ORIGINAL),
            "SubSecTimeOriginal": e.get(SUBSEC_TIME_ORIGINAL),
            "lat": dms(g[GPS_LAT], g[GPS_LAT_REF]),
            "lon": dms(g[GPS_LON], g[GPS_LON_REF]),
            "direction_deg": float(g[GPS_DIR]),
            "direction_ref": g.get(GPS_DIR_REF),
        }


def main():
    photos = json.loads((HERE / "photos.json").read_text())
    files = [str(HERE / p["file"]) for p in photos]
    raw = json.loads(subprocess.run(["exiftool", "-n", "-json", *files], check=True,
                                    capture_output=True, text=True).stdout)
    exiftool_version = subprocess.run(["exiftool", "-ver"], check=True, capture_output=True,
                                      text=True).stdout.strip()
    by_name = {Path(r["SourceFile"]).name: r for r in raw}
    out = {
        "generated_by": "tests/reference/photo/read_with_tools.py",
        "exiftool_version": exiftool_version,
        "exiftool_args": "-n -json",
        "pillow_version": PIL.__version__,
        "python_hashlib": "sha256",
        "photos": [],
    }
    for p in photos:
        r = by_name[p["file"]]
        out["photos"].append({
            "file": p["file"],
            "sha256": hashlib.sha256((HERE / p["file"]).read_bytes()).hexdigest(),
            "exiftool": {k: r[k] for k in EXIFTOOL_KEYS if k in r},
            "pillow": pillow_read(HERE / p["file"]),
        })
    (HERE / "tools_read.json").write_text(json.dumps(out, indent=2) + "\n")
    print(f"wrote tools_read.json for {len(photos)} photos")


if __name__ == "__main__":
    main()
