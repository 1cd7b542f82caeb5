#!/usr/bin/env python3
"""Times Pillow's draft-mode photo pipeline on the same files as sync's photo_intake bench.

Per photo: read the file, hashlib SHA-256, getexif() with the Exif and GPS IFDs,
open + draft('RGB', (320, 320)) + thumbnail((320, 320)) + save JPEG quality 80
(performance notes section 1, "Pillow pipeline" P7). Prints one JSON line with
ms per photo (median, p90 over all rounds) and photos/s with 1 and 2 threads
(Pillow releases the GIL while decoding).

Usage: python3 bench_pillow.py DIR [ROUNDS]   (DIR holds the *.jpg files, e.g. the
--dir given to `cargo bench -p groundproof-sync --bench photo_intake`).
"""
import hashlib
import io
import json
import sys
import time
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path

import PIL
from PIL import Image

EXIF_IFD, GPS_IFD = 0x8769, 0x8825


def pipeline(path):
    data = Path(path).read_bytes()
    digest = hashlib.sha256(data).hexdigest()
    with Image.open(io.BytesIO(data)) as im:
        exif = im.getexif()
        meta = (exif.get_ifd(EXIF_IFD).get(0x9003), exif.get_ifd(GPS_IFD).get(2))
        im.draft("RGB", (320, 320))
        im.thumbnail((320, 320))
        out = io.BytesIO()
        im.save(out, "JPEG", quality=80)
    return digest, meta, out.tell()


def throughput(files, threads):
    work = files * 2
    start = time.perf_counter()
    with ThreadPoolExecutor(max_workers=threads) as pool:
        list(pool.map(pipeline, work))
    return len(work) / (time.perf_counter() - start)


def main():
    folder = Path(sys.argv[1])
    rounds = int(sys.argv[2]) if len(sys.argv) > 2 else 5
    files = sorted(str(p) for p in folder.glob("*.jpg"))
    if not files:
        sys.exit(f"no .jpg files in {folder}")
    for f in files:  # warm-up, page cache
        pipeline(f)
    ms = []
    for _ in range(rounds):
        for f in files:
            t = time.perf_counter()
            pipeline(f)
            ms.append((time.perf_counter() - t) * 1e3)
    ms.sort()
    p = lambda q: ms[round((len(ms) - 1) * q)]
    print(json.dumps({
        "bench": "pillow_pipeline",
        "pillow_version": PIL.__version__,
        "python": sys.version.split()[0],
        "photos": len(files),
        "rounds": rounds,
        "ms_per_photo_median": round(p(0.5), 2),
        "ms_per_photo_p90": round(p(0.9), 2),
        "photos_per_s_1_thread": round(throughput(files, 1), 1),
        "photos_per_s_2_threads": round(throughput(files, 2), 1),
    }))


if __name__ == "__main__":
    main()
