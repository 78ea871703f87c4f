"""Shared helpers for the reference checks in tests/reference/*_check.py.

Not a check itself (no _check suffix, so ctest does not run it). Only the
Python standard library and numpy are used here, so that what the checks
compare against comes from the reference libraries, not from this file.
"""
import atexit
import csv
import math
import os
import shutil
import struct
import subprocess
import sys
import tempfile
import zlib

import numpy as np

# Failed checks of the running script, in order; check() appends to it.
failures = []


def scratch_dir(prefix):
    """A new temporary folder, removed when the check exits (pass or fail)."""
    path = tempfile.mkdtemp(prefix=prefix)
    atexit.register(shutil.rmtree, path, True)
    return path


def check(ok, what):
    print(("ok   " if ok else "FAIL ") + what)
    if not ok:
        failures.append(what)


def write_png(path, image):
    """Writes a numpy array as a PNG (zlib + struct, no imaging library).

    image: H×W (gray) or H×W×3 (RGB), dtype uint8 or uint16 (16-bit samples
    are stored big-endian, as the PNG specification requires).
    """
    image = np.ascontiguousarray(image)
    if image.dtype == np.uint8:
        depth, data = 8, image
    elif image.dtype == np.uint16:
        depth, data = 16, image.astype(">u2")
    else:
        raise ValueError("write_png takes uint8 or uint16, not %s" % image.dtype)
    if image.ndim == 2:
        colour_type = 0
    elif image.ndim == 3 and image.shape[2] == 3:
        colour_type = 2
    else:
        raise ValueError("write_png takes H×W or H×W×3, not %s" % (image.shape,))
    height, width = image.shape[:2]
    rows = data.reshape(height, -1).view(np.uint8)
    raw = b"".join(b"\x00" + rows[y].tobytes() for y in range(height))  # filter type 0 per row

    def chunk(kind, body):
        return (struct.pack(">I", len(body)) + kind + body +
                struct.pack(">I", zlib.crc32(kind + body) & 0xFFFFFFFF))

    header = struct.pack(">IIBBBBB", width, height, depth, colour_type, 0, 0, 0)
    with open(path, "wb") as f:
        f.write(b"\x89PNG\r\n\x1a\n" + chunk(b"IHDR", header) +
                chunk(b"IDAT", zlib.compress(raw, 6)) + chunk(b"IEND", b""))


def run_pcasweep(binary, args):
    """Runs pcasweep with `args`; raises SystemExit(1) with its stderr on failure."""
    result = subprocess.run([binary] + list(args), capture_output=True, text=True)
    if result.returncode != 0:
        print("FAIL: pcasweep %s exited %d\n%s" % (" ".join(args), result.returncode, result.stderr))
        sys.exit(1)
    return result.stdout


def read_csv(path):
    """Reads a CSV with a header into a dict of column name -> list of values:
    floats where the cell reads as a number ("inf" included), else the text
    (empty cells become nan)."""
    def value(text):
        try:
            return float(text) if text != "" else math.nan
        except ValueError:
            return text
    with open(path, newline="") as f:
        rows = list(csv.DictReader(f))
    return {name: [value(row[name]) for row in rows] for name in rows[0]} if rows else {}


def compare_spectra(label, ours, reference, rel_tol=1e-6, zero_tol=1e-9):
    """Compares two eigenvalue (or proportion) lists, largest first.

    Values of the reference above zero_tol·largest must agree to rel_tol
    relative; smaller ones (zero up to round-off: their relative difference
    means nothing) must agree to zero_tol·largest absolute. Prints the figures
    and returns the number of failures.
    """
    ours = np.asarray(ours, dtype=float)
    reference = np.asarray(reference, dtype=float)
    if ours.shape != reference.shape:
        print("FAIL %s: %d values from pcasweep, %d from the reference" % (label, ours.size, reference.size))
        return 1
    largest = reference.max()
    significant = reference > zero_tol * largest
    rel = np.abs(ours - reference)[significant] / reference[significant]
    absolute = np.abs(ours - reference)[~significant]
    failures = int(np.sum(rel > rel_tol)) + int(np.sum(absolute > zero_tol * largest))
    show = [0, 1, 2, min(3, ours.size - 1), ours.size - 1]
    print("%s: %d values, %d compared relatively (tol %g), %d near zero compared absolutely "
          "(|diff| <= %g x largest = %.3g)" % (label, ours.size, significant.sum(), rel_tol, (~significant).sum(),
                                              zero_tol, zero_tol * largest))
    for i in sorted(set(show)):
        print("  #%-4d pcasweep %.10g   reference %.10g" % (i + 1, ours[i], reference[i]))
    print("  largest relative difference %.3g; largest absolute difference among near-zero %.3g -> %s" %
          (rel.max() if rel.size else 0.0, absolute.max() if absolute.size else 0.0,
           "ok" if failures == 0 else "FAIL (%d values)" % failures))
    return failures


def psnr_db(original, written, data_range):
    """10·log10(L²/MSE) over all samples; +inf when identical."""
    mse = np.mean((original.astype(float) - written.astype(float)) ** 2)
    return math.inf if mse == 0 else 10.0 * math.log10(data_range ** 2 / mse)


def binary_from_argv():
    if len(sys.argv) != 2 or not os.path.exists(sys.argv[1]):
        print("usage: %s PATH-TO-PCASWEEP" % os.path.basename(sys.argv[0]))
        sys.exit(2)
    return sys.argv[1]


def sweep_extra_args(binary):
    """Options that make `sweep` skip work these checks do not look at, if this build has them.

    --no-rd skips the rate-distortion study (JPEG/DCT comparison), which costs
    most of a sweep's time and none of the figures compared here.
    """
    help_text = subprocess.run([binary, "sweep", "--help"], capture_output=True, text=True).stdout
    return ["--no-rd"] if "--no-rd" in help_text else []


def sweep_psnr_matches_written_files(out, stem, original, sweep, data_range, tol_db=1e-6):
    """sweep.csv's psnr_db must be the PSNR of the <stem>.k<K>.png files it wrote
    (issue 2: "measure on exactly what is written"), recomputed here with numpy
    from the files read back by skimage.io. Prints the figures; returns failures."""
    from skimage import io
    failures = 0
    for k, ours in zip(sweep["k"], sweep["psnr_db"]):
        written = io.imread(os.path.join(out, "%s.k%d.png" % (stem, int(k))))
        reference = psnr_db(original.reshape(written.shape), written, data_range)
        ok = abs(ours - reference) <= tol_db or ours == reference
        print("  written %s.k%d.png: sweep.csv psnr_db %.6f, numpy on the file %.6f -> %s" %
              (stem, int(k), ours, reference, "ok" if ok else "FAIL"))
        failures += not ok
    return failures


def batch_psnr(binary, work, png, args):
    """PSNR per k of pcasweep's plain PCA reconstruction (rounded, clipped, not
    codec-quantised), from `pcasweep batch` with a per-file basis and no coding.
    Returns {k: psnr_db}."""
    out = os.path.join(work, os.path.basename(png) + ".batch")
    run_pcasweep(binary, ["batch", png, "--out", out, "--no-report", "--quiet", "--threads", "1"] + list(args))
    table = read_csv(os.path.join(out, "batch.csv"))
    return {int(k): p for k, p in zip(table["k"], table["psnr_db"])}
