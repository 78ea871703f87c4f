"""Damaged and hostile image files are refused with one line, before anything is written.

1. For every image format pcasweep reads (PNG, JPEG baseline and progressive, BMP, TGA
   uncompressed and run-length coded, binary PGM/PPM at 8 and 16 bits), a valid file is written
   by an independent encoder (Pillow, or numpy for the PNM rasters), then cut at 10 %, 50 % and
   99 % of its length and at the last byte of its pixel data. Each cut file must be refused by
   `sweep`: exit 1, exactly one line on stderr naming the file, and no output folder created.
   The intact file must sweep (exit 0) and read to the samples Pillow decodes (compare: mse 0).
2. Headers declaring 100000x100000 pixels in tiny PNG, BMP and PNM files (65535x65535 in TGA
   and JPEG, whose sides are 16-bit fields) are refused with
   exit 1, one line naming the file, at peak RSS under 100 MB (GNU time, %M in kilobytes).
3. A batch over a folder holding every intact file and every cut one keeps going: each cut file
   is listed in failures.csv with a reason naming it, every intact file has its rows in
   batch.csv, and the batch exits 1 (some input failed).
At the end a table format x cut -> result is printed (for the closing note).

Sources: Pillow (Debian python3-pil) as encoder and decoder; the formats' layouts for where the
pixel data end: BMP bfOffBits at byte 10 and rows padded to 4 bytes (Microsoft BITMAPINFOHEADER
documentation), TGA 2.0's 18-byte header and 26-byte footer (Truevision TGA 2.0, from memory),
Netpbm pgm(5)/ppm(5) rasters (most significant byte first at 16 bits).
"""
import csv
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

table = {}      # (format, cut) -> result, printed at the end
cut_files = {}  # path of each cut file -> its format
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
    # JPEG included: T.81 fixes the IDCT only to an accuracy (Annex A.3.3) and leaves chroma
    # upsampling to the decoder, but pcasweep and Pillow both decode through Debian's libjpeg-turbo
    # with its defaults (islow IDCT, fancy upsampling), so the samples agree exactly.
    check(report.get("mse") == 0, "intact %s reads to Pillow's samples exactly (mse %s)" % (name, report.get("mse")))
    cuts = {"10%": len(data) // 10, "50%": len(data) // 2, "99%": len(data) * 99 // 100, "last pixel byte": end - 1}
    for label, at in cuts.items():
        cut = os.path.join(tmp, "cut-%s-%s" % (label.replace(" ", "-").replace("%", "pc"), name))
        with open(cut, "wb") as f:
            f.write(data[:at])
        out = os.path.join(tmp, "out-" + os.path.basename(cut))
        r = run(["sweep", cut, "--out", out, "--patch", "4", "--k", "2", "--no-codec", "--no-rd", "--quiet"])
        lines = r.stderr.strip().splitlines()
        refused = r.returncode == 1 and len(lines) == 1 and cut in lines[0] and not os.path.exists(out)
        check(refused,
              "%s cut at %s (%d of %d bytes): exit %d, %d line(s), output folder %s: %r" %
              (name, label, at, len(data), r.returncode, len(lines), "made" if os.path.exists(out) else "absent",
               r.stderr.strip()[:160]))
        table[(name, label)] = "refused (exit 1, 1 line)" if refused else "ACCEPTED or bad (exit %d)" % r.returncode
        cut_files[cut] = name


# --- 2. Huge declared sizes ------------------------------------------------------------------
def png_chunk(kind, body):
    return struct.pack(">I", len(body)) + kind + body + struct.pack(">I", zlib.crc32(kind + body) & 0xFFFFFFFF)


def huge_files(side):
    """Tiny files whose headers declare side x side pixels (TGA: at most 65535, its 16-bit field;
    JPEG: at most 65500, libjpeg's JPEG_MAX_DIMENSION, above which libjpeg refuses the header itself)."""
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
        "jpg": huge_jpeg(min(side, 65500)),
    }


def huge_jpeg(side):
    """A baseline JPEG header (ITU-T T.81 B.2) declaring side x side gray pixels, with a DQT and a
    DHT table and a scan header, then a little entropy-coded data and EOI."""
    dqt = b"\xff\xdb" + struct.pack(">H", 67) + b"\x00" + bytes([1] * 64)
    sof = b"\xff\xc0" + struct.pack(">HBHHB", 11, 8, side, side, 1) + b"\x01\x11\x00"
    # One DC table (class 0, id 0) with a single 1-bit code for category 0; one AC table with a
    # single 1-bit code for EOB (0x00).
    dht = b"\xff\xc4" + struct.pack(">H", 2 + 17 + 1) + b"\x00" + bytes([1] + [0] * 15) + b"\x00"
    dht += b"\xff\xc4" + struct.pack(">H", 2 + 17 + 1) + b"\x10" + bytes([1] + [0] * 15) + b"\x00"
    sos = b"\xff\xda" + struct.pack(">HB", 8, 1) + b"\x01\x00" + b"\x00\x3f\x00"
    return b"\xff\xd8" + dqt + sof + dht + sos + b"\x00" * 1000 + b"\xff\xd9"


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
        size = "%dx%d" % ((min(side, 65535),) * 2 if name.endswith("tga") else
                          (min(side, 65500),) * 2 if name.endswith("jpg") else (side, side))
        check(r.returncode == 1 and len(lines) == 1 and path in lines[0] and size in lines[0] and not os.path.exists(out),
              "%s declaring %s: exit %d, one line naming the file: %r" % (name, size, r.returncode,
                                                                          r.stderr.strip()[:170]))
        check(peak_kb < 100 * 1024, "%s declaring %s: peak RSS %d KB < 100 MB" % (name, size, peak_kb))

# --- 3. A batch keeps going past every damaged file ---------------------------------------------
folder = os.path.join(tmp, "batch-in")
os.makedirs(folder)
for name, (data, end) in sorted(files.items()):
    with open(os.path.join(folder, "intact." + name), "wb") as f:
        f.write(data)
batch_names = {}  # name in the batch folder (the cut files, with an extension batch recognises) -> format
for path, name in cut_files.items():
    label = os.path.basename(path)[len("cut-"):-len(name) - 1]
    batch_names["cut-%s.%s" % (label, name)] = name
    with open(path, "rb") as src, open(os.path.join(folder, "cut-%s.%s" % (label, name)), "wb") as f:
        f.write(src.read())
out = os.path.join(tmp, "batch-out")
r = run(["batch", folder, "--out", out, "--patch", "4", "--k", "2", "-q", "--no-report"])
check(r.returncode == 1, "batch over intact and cut files exits 1 (some failed): exit %d %s" %
      (r.returncode, r.stderr.strip()[-200:].replace("\n", " | ")))
with open(os.path.join(out, "failures.csv"), newline="") as f:
    failed = {os.path.basename(row["file"]): row["reason"] for row in csv.DictReader(f)}
expected = sorted(batch_names)
check(sorted(failed) == expected, "failures.csv lists exactly the %d cut files (it lists %d; missing %s, extra %s)" %
      (len(expected), len(failed), sorted(set(expected) - set(failed))[:4], sorted(set(failed) - set(expected))[:4]))
check(all(reason.strip() and "\n" not in reason for reason in failed.values()),
      "every failures.csv row gives a one-line reason: %s" % list(failed.items())[:2])
with open(os.path.join(out, "batch.csv"), newline="") as f:
    swept = {os.path.basename(row["file"]) for row in csv.DictReader(f)}
intact_names = {"intact." + name for name in files}
check(swept == intact_names, "batch.csv has rows for exactly the %d intact files: %s" %
      (len(intact_names), sorted(swept)[:10]))

formats = sorted({name for name, _ in table})
labels = ["10%", "50%", "99%", "last pixel byte"]
print("\nDamaged-file table (sweep of a cut file; batch: listed in failures.csv):")
print("| format | " + " | ".join(labels) + " | batch |")
print("|---" * (len(labels) + 2) + "|")
for name in formats:
    listed = all(b in failed for b, n in batch_names.items() if n == name)
    print("| %s | %s | %s |" % (name, " | ".join(table.get((name, l), "-") for l in labels),
                                 "all listed" if listed else "NOT ALL LISTED"))

if failures:
    print("%d check(s) failed" % len(failures))
    sys.exit(1)
print("all damaged-file checks passed")
