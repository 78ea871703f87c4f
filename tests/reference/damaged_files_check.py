"""Damaged and hostile image files are refused with one line, before anything is written.

1. For every image format pcasweep reads (PNG, JPEG baseline and progressive, BMP, TGA
   uncompressed and run-length coded, binary PGM/PPM at 8 and 16 bits), a valid file is written
   by an independent encoder (Pillow, or numpy for the PNM rasters), then cut at 10 %, 50 % and
   99 % of its length and at the last byte of its pixel data. Each cut file must be refused by
   `sweep`: exit 1, exactly one line on stderr naming the file, and no output folder created.
   The intact file must sweep (exit 0) and read to the samples Pillow decodes (compare: mse 0).
2. Headers declaring 100000x100000 pixels in tiny PNG, BMP and PNM files (65535x65535 in TGA,
   whose sides are 16-bit fields) are refused with
   exit 1, one line naming the file, at peak RSS under 100 MB (GNU time, %M in kilobytes).

Sources: Pillow (Debian python3-pil) as encoder and decoder; the formats' layouts for where the
pixel data end: BMP bfOffBits at byte 10 and rows padded to 4 bytes (Microsoft BITMAPINFOHEADER
documentation), TGA 2.0's 18-byte header and 26-byte footer (Truevision TGA 2.0, from memory),
Netpbm pgm(5)/ppm(5) rasters (most significant byte first at 16 bits).
"""
import json
import os
import struct
import subprocess
import sys
import zlib

import numpy as np
from PIL import Image

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from refcommon import check, failures, scratch_dir, write_png  # noqa: E402

binary = sys.argv[1]
tmp = scratch_dir("pcasweep-damaged-")
rng = np.random.default_rng(20261205)


def run(args):
    return subprocess.run([binary] + args, capture_output=True, text=True)


def smooth_rgb(height, width):
    """A smooth RGB picture with some noise, so that JPEG and RLE do real work."""
    y, x = np.mgrid[0:height, 0:width]
    base = np.stack([128 + 100 * np.sin(x / 13.0), 128 + 100 * np.cos(y / 9.0), 128 + 60 * np.sin((x + y) / 21.0)], -1)
    return np.clip(base + rng.normal(0, 6, base.shape), 0, 255).astype(np.uint8)


def pnm_bytes(image, maxval):
    magic = b"P5" if image.ndim == 2 else b"P6"
    data = image.astype(">u2").tobytes() if maxval > 255 else image.astype(np.uint8).tobytes()
    return magic + b"\n%d %d\n%d\n" % (image.shape[1], image.shape[0], maxval) + data


pixels = smooth_rgb(61, 83)
files = {}  # name -> (bytes, where the pixel data end)
for name, kwargs in [("bmp", {}), ("tga", {}), ("rle.tga", {"compression": "tga_rle"}),
                     ("jpg", {"quality": 90}), ("progressive.jpg", {"quality": 90, "progressive": True}),
                     ("png", {})]:
    path = os.path.join(tmp, "intact." + name)
    Image.fromarray(pixels).save(path, **kwargs)
    with open(path, "rb") as f:
        data = f.read()
    end = len(data)
    if name.endswith("tga") and data[-18:-2] == b"TRUEVISION-XFILE":
        end -= 26  # the TGA 2.0 footer follows the pixel data
    files[name] = (data, end)
gray16 = (rng.integers(0, 65536, (37, 29))).astype(np.uint16)
files["16.pgm"] = (pnm_bytes(gray16, 65535), None)
files["ppm"] = (pnm_bytes(pixels, 255), None)
for name in files:
    data, end = files[name]
    files[name] = (data, len(data) if end is None else end)

for name, (data, end) in sorted(files.items()):
    intact = os.path.join(tmp, "intact." + name)
    with open(intact, "wb") as f:
        f.write(data)
    r = run(["sweep", intact, "--out", os.path.join(tmp, "out-intact-" + name), "--patch", "4", "--k", "2",
             "--no-codec", "--no-rd", "--quiet"])
    check(r.returncode == 0, "intact %s sweeps (exit %d %s)" % (name, r.returncode, r.stderr.strip()))
    reference = np.asarray(Image.open(intact)) if not name.endswith("pgm") else gray16
    plain = os.path.join(tmp, "plain-" + name + ".png")
    write_png(plain, reference)
    r = run(["compare", intact, plain, "--json"])
    report = json.loads(r.stdout) if r.returncode == 0 else {}
    if name.endswith("jpg"):
        # Two JPEG decoders may differ by a level here and there: T.81 fixes the IDCT only to an
        # accuracy (Annex A.3.3), and chroma upsampling is the decoder's choice.
        check(report.get("psnr_db") is not None and report["psnr_db"] > 40,
              "intact %s reads close to Pillow's decoding: PSNR %s dB > 40" % (name, report.get("psnr_db")))
    else:
        check(report.get("mse") == 0, "intact %s reads to Pillow's samples exactly (mse %s)" % (name, report.get("mse")))
    cuts = {"10%": len(data) // 10, "50%": len(data) // 2, "99%": len(data) * 99 // 100, "last pixel byte": end - 1}
    for label, at in cuts.items():
        cut = os.path.join(tmp, "cut-%s-%s" % (label.replace(" ", "-").replace("%", "pc"), name))
        with open(cut, "wb") as f:
            f.write(data[:at])
        out = os.path.join(tmp, "out-" + os.path.basename(cut))
        r = run(["sweep", cut, "--out", out, "--patch", "4", "--k", "2", "--no-codec", "--no-rd", "--quiet"])
        lines = r.stderr.strip().splitlines()
        check(r.returncode == 1 and len(lines) == 1 and cut in lines[0] and not os.path.exists(out),
              "%s cut at %s (%d of %d bytes): exit %d, %d line(s), output folder %s: %r" %
              (name, label, at, len(data), r.returncode, len(lines), "made" if os.path.exists(out) else "absent",
               r.stderr.strip()[:160]))


# --- 2. Huge declared sizes ------------------------------------------------------------------
def png_chunk(kind, body):
    return struct.pack(">I", len(body)) + kind + body + struct.pack(">I", zlib.crc32(kind + body) & 0xFFFFFFFF)


def huge_files(side):
    """Tiny files whose headers declare side x side pixels (TGA: at most 65535, its 16-bit field)."""
    tside = min(side, 65535)
    return {
        "png": b"\x89PNG\r\n\x1a\n" + png_chunk(b"IHDR", struct.pack(">IIBBBBB", side, side, 8, 2, 0, 0, 0)) +
               png_chunk(b"IDAT", zlib.compress(b"\x00" * 1000)) + png_chunk(b"IEND", b""),
        # BITMAPFILEHEADER (14) + BITMAPINFOHEADER (40), 24 bits, BI_RGB, then a little data.
        "bmp": b"BM" + struct.pack("<IHHI", 54 + 1000, 0, 0, 54) +
               struct.pack("<IiiHHIIiiII", 40, side, side, 1, 24, 0, 0, 2835, 2835, 0, 0) + b"\x00" * 1000,
        # TGA header: no ID, no colour map, type 2 (truecolour) or 10 (RLE), 24 bits, then a little data.
        "tga": struct.pack("<BBBHHBHHHHBB", 0, 0, 2, 0, 0, 0, 0, 0, tside, tside, 24, 0) + b"\x00" * 1000,
        "rle.tga": struct.pack("<BBBHHBHHHHBB", 0, 0, 10, 0, 0, 0, 0, 0, tside, tside, 24, 0) +
                   b"\xff\x00\x00\x00" * 250,
        "ppm": b"P6\n%d %d\n255\n" % (side, side) + b"\x00" * 1000,
    }


# 100000x100000 is above the default --max-pixels (2^30); 30000x30000 is below it and refused
# because the file is far too small for it.
for side in (100000, 30000):
    for name, data in sorted(huge_files(side).items()):
        path = os.path.join(tmp, "huge%d.%s" % (side, name))
        with open(path, "wb") as f:
            f.write(data)
        rss_file = os.path.join(tmp, "rss.txt")
        out = os.path.join(tmp, "huge-out-%d-%s" % (side, name))
        r = subprocess.run(["/usr/bin/time", "-o", rss_file, "-f", "%M", binary, "sweep", path, "--out", out],
                           capture_output=True, text=True)
        with open(rss_file) as f:
            peak_kb = int(f.read().split()[-1])
        lines = r.stderr.strip().splitlines()
        size = "%dx%d" % ((min(side, 65535),) * 2 if name.endswith("tga") else (side, side))
        check(r.returncode == 1 and len(lines) == 1 and path in lines[0] and size in lines[0] and not os.path.exists(out),
              "%s declaring %s: exit %d, one line naming the file: %r" % (name, size, r.returncode,
                                                                          r.stderr.strip()[:170]))
        check(peak_kb < 100 * 1024, "%s declaring %s: peak RSS %d KB < 100 MB" % (name, size, peak_kb))

if failures:
    print("%d check(s) failed" % len(failures))
    sys.exit(1)
print("all damaged-file checks passed")
