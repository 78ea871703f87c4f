#!/usr/bin/env python3
"""Checks of the codec (issue 5) through the pcasweep binary, against outside references.

Usage: codec_check.py PATH_TO_PCASWEEP. Exits non-zero on any failure, printing what was compared.

Sources named per check:
  - DCT-II: scipy.fft.dct(x, type=2, norm="ortho") from Debian's python3-scipy; the basis file
    layout from docs/format.md (parsed here independently of the C++ reader).
  - PNG: a minimal reader and writer here (zlib + struct, PNG spec ISO/IEC 15948 chunk layout and
    filters), so 16-bit colour is compared at full precision; MSE recomputed with numpy.
  - CRC-32: Python's zlib.crc32 (the same ISO-HDLC CRC the format names).
"""
import os
import struct
import subprocess
import sys
import zlib

import numpy as np
import scipy.fft

PCASWEEP = sys.argv[1]
sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from refcommon import check, failures, scratch_dir  # noqa: E402


def write_png(path, array, bits):
    """Minimal PNG writer: gray (H×W) or RGB (H×W×3), 8 or 16 bit, no filtering."""
    a = np.asarray(array)
    h, w = a.shape[:2]
    colour = 2 if a.ndim == 3 else 0
    dtype = ">u2" if bits == 16 else "u1"
    raw = b"".join(b"\x00" + a[y].astype(dtype).tobytes() for y in range(h))

    def chunk(kind, data):
        return struct.pack(">I", len(data)) + kind + data + struct.pack(">I", zlib.crc32(kind + data) & 0xFFFFFFFF)

    with open(path, "wb") as f:
        f.write(b"\x89PNG\r\n\x1a\n" + chunk(b"IHDR", struct.pack(">IIBBBBB", w, h, bits, colour, 0, 0, 0))
                + chunk(b"IDAT", zlib.compress(raw, 6)) + chunk(b"IEND", b""))


def read_png(path):
    """Minimal PNG reader (non-interlaced gray/gray+alpha/RGB/RGBA, 8 or 16 bit, all five filters),
    so 16-bit colour is read at full precision (PIL would reduce it to 8 bits)."""
    data = open(path, "rb").read()
    assert data[:8] == b"\x89PNG\r\n\x1a\n"
    pos, idat = 8, b""
    while pos < len(data):
        n, kind = struct.unpack_from(">I4s", data, pos)
        body = data[pos + 8: pos + 8 + n]
        if kind == b"IHDR":
            w, h, bits, colour, _, _, interlace = struct.unpack(">IIBBBBB", body)
        elif kind == b"IDAT":
            idat += body
        pos += 12 + n
    assert interlace == 0
    ch = {0: 1, 4: 2, 2: 3, 6: 4}[colour]
    bpp = ch * bits // 8
    stride = w * bpp
    raw = zlib.decompress(idat)
    out = bytearray(h * stride)
    prev = bytearray(stride)
    for y in range(h):
        f = raw[y * (stride + 1)]
        line = bytearray(raw[y * (stride + 1) + 1:(y + 1) * (stride + 1)])
        for i in range(stride):
            a = line[i - bpp] if i >= bpp else 0
            b = prev[i]
            c = prev[i - bpp] if i >= bpp else 0
            if f == 1:
                line[i] = (line[i] + a) & 255
            elif f == 2:
                line[i] = (line[i] + b) & 255
            elif f == 3:
                line[i] = (line[i] + (a + b) // 2) & 255
            elif f == 4:
                p_ = a + b - c
                pa, pb, pc = abs(p_ - a), abs(p_ - b), abs(p_ - c)
                line[i] = (line[i] + (a if pa <= pb and pa <= pc else b if pb <= pc else c)) & 255
        out[y * stride:(y + 1) * stride] = line
        prev = line
    arr = np.frombuffer(bytes(out), ">u2" if bits == 16 else "u1").reshape(h, w, ch)
    return arr[..., 0] if ch == 1 else arr


def scene(h, w, channels, bits, seed):
    rng = np.random.default_rng(seed)
    top = 65535 if bits == 16 else 255
    y, x = np.mgrid[0:h, 0:w]
    planes = []
    for c in range(channels):
        v = 0.3 + 0.3 * x / w + 0.15 * np.sin(0.4 * x + c) * np.cos(0.23 * y) + 0.2 * ((x > w // 3) & (y < h // 2))
        planes.append(v + 0.05 * (rng.random((h, w)) - 0.5))
    a = np.clip(np.rint(np.stack(planes, axis=-1) * top), 0, top)
    return a[..., 0] if channels == 1 else a


def run(*args):
    return subprocess.run([PCASWEEP, *args], capture_output=True, text=True)


def read_basis(path):
    """Parses a basis file as docs/format.md lays it out (little-endian)."""
    b = open(path, "rb").read()
    assert b[:4] == b"PSBF"
    d, r = struct.unpack_from("<II", b, 16)
    mean = np.frombuffer(b, "<f8", d, 40)
    comps = np.frombuffer(b, "<f8", d * r, 40 + 8 * d).reshape(r, d).T
    ev = np.frombuffer(b, "<f8", r, 40 + 8 * d + 8 * d * r)
    crc_ok = zlib.crc32(b[:-4]) & 0xFFFFFFFF == struct.unpack_from("<I", b, len(b) - 4)[0]
    return mean, comps, ev, crc_ok


tmp = scratch_dir("pcasweep-codec-")
P = lambda name: os.path.join(tmp, name)

# 1. DCT-II basis against scipy.fft.dct(norm="ortho").
for (ph, pw, ch) in [(8, 8, 1), (4, 6, 3)]:
    img = P(f"dct{ph}{pw}{ch}.png")
    write_png(img, scene(31, 29, ch, 8, 1), 8)
    out = P(f"dct{ph}{pw}{ch}.pcsb")
    r = run("fit", img, "--transform", "dct", "--patch", f"{ph}x{pw}", "-o", out, "-q")
    check(r.returncode == 0, f"fit --transform dct {ph}x{pw}x{ch} runs ({r.stderr.strip()})")
    mean, V, ev, crc_ok = read_basis(out)
    d = ph * pw * ch
    check(crc_ok and V.shape == (d, d), f"basis file {ph}x{pw}x{ch}: CRC-32 matches zlib, shape {V.shape}")
    ortho = np.abs(V.T @ V - np.eye(d)).max()
    check(ortho < 1e-12, f"DCT basis {ph}x{pw}x{ch} orthonormal: max |VᵀV − I| = {ortho:.2e} < 1e-12")
    # scipy's basis: column for frequencies (u, v) on channel c is the inverse transform of a unit impulse.
    S = np.zeros((d, d))
    for u in range(ph):
        for v in range(pw):
            coef = np.zeros((ph, pw))
            coef[u, v] = 1.0
            patch = scipy.fft.idctn(coef, type=2, norm="ortho")  # the (u, v) basis image
            for c in range(ch):
                col = np.zeros((ph, pw, ch))
                col[:, :, c] = patch
                S[:, (u * pw + v) * ch + c] = col.reshape(-1)
    # and the forward transform of each pcasweep column is an impulse (dct of the patch, per channel)
    M = V.T @ S
    match = np.argmax(np.abs(M), axis=1)
    perm_ok = len(set(match.tolist())) == d
    worst = max(np.abs(V[:, j] - S[:, match[j]]).max() for j in range(d))
    fwd = scipy.fft.dctn(V[:, 0].reshape(ph, pw, ch), type=2, norm="ortho", axes=(0, 1))
    check(perm_ok and worst < 1e-12,
          f"each pcasweep DCT column equals one scipy.fft DCT-II (ortho) basis vector: max diff {worst:.2e} < 1e-12")
    check(np.sum(np.abs(fwd) > 1e-9) == 1, "scipy.fft.dctn of the first column is a single impulse")
    check(np.all(np.diff(ev) <= 1e-9), "DCT columns are sorted by decreasing data variance")

# 2. sweep bytes = file sizes; decode(file) = the PNG sweep measured; encode reproduces the bytes;
#    bits per pixel never decreases with k.
cases = [(23, 37, 1, 8), (19, 41, 3, 8), (29, 31, 3, 16), (17, 33, 1, 16)]
for (h, w, ch, bits) in cases:
    tag = f"{w}x{h}x{ch}@{bits}"
    img = P(f"in_{tag}.png")
    write_png(img, scene(h, w, ch, bits, 3), bits)
    out = P(f"sweep_{tag}")
    r = run("sweep", img, "--k", "1,3,8,12", "--quality", "75", "--no-rd", "-o", out, "-q")
    check(r.returncode == 0, f"sweep {tag} runs ({r.stderr.strip()[:200]})")
    if r.returncode:
        continue
    lines = open(os.path.join(out, "sweep.csv")).read().splitlines()
    head = lines[0].split(",")
    rows = [dict(zip(head, l.split(","))) for l in lines[1:]]
    bpps = []
    for row in rows:
        k = row["k"]
        coded = os.path.join(out, f"in_{tag}.k{k}.pcsc")
        size = os.path.getsize(coded)
        check(int(row["bytes"]) == size, f"{tag} k={k}: sweep.csv bytes {row['bytes']} = file size {size}")
        bpps.append(float(row["bits_per_pixel"]))
        dec = P(f"dec_{tag}_{k}.png")
        r = run("decode", coded, "-o", dec, "-q")
        a = read_png(dec)
        b = read_png(os.path.join(out, f"in_{tag}.k{k}.png"))
        check(r.returncode == 0 and a.dtype == b.dtype and np.array_equal(a, b),
              f"{tag} k={k}: decode(file) is bit-identical to the image sweep measured ({a.dtype})")
        orig = read_png(img).astype(float)
        check(bits == 16 and a.dtype == np.dtype(">u2") or bits == 8 and a.dtype == np.uint8,
              f"{tag} k={k}: decoded PNG keeps {bits} bits")
        mse = np.mean((orig - a.astype(float)) ** 2)
        check(abs(mse - float(row["mse"])) <= 1e-9 * max(1.0, mse), f"{tag} k={k}: numpy MSE {mse:.6g} = sweep.csv {row['mse']}")
        enc = P(f"enc_{tag}_{k}.pcsc")
        r = run("encode", img, "--k", k, "--quality", "75", "-o", enc, "-q")
        check(r.returncode == 0 and open(enc, "rb").read() == open(coded, "rb").read(),
              f"{tag} k={k}: `pcasweep encode` writes the same bytes as the sweep")
    check(all(b2 >= b1 for b1, b2 in zip(bpps, bpps[1:])), f"{tag}: bits per pixel non-decreasing in k {bpps}")

# 3. External basis: fit, encode with it, decode only with the same file.
train, other = P("train.png"), P("other.png")
write_png(train, scene(40, 48, 3, 8, 5), 8)
write_png(other, scene(27, 35, 3, 8, 6), 8)
basis, gray_basis = P("rgb.pcsb"), P("gray.pcsb")
check(run("fit", train, "-o", basis, "-q").returncode == 0, "fit an RGB basis")
gimg = P("gray.png")
write_png(gimg, scene(27, 35, 1, 8, 6), 8)
check(run("fit", gimg, "-o", gray_basis, "-q").returncode == 0, "fit a gray basis")
ext = P("ext.pcsc")
r = run("encode", other, "--k", "12", "--basis", basis, "-o", ext, "-q")
check(r.returncode == 0, f"encode with --basis ({r.stderr.strip()})")
size_ext = os.path.getsize(ext)
own = P("own.pcsc")
run("encode", other, "--k", "12", "-o", own, "-q")
check(size_ext < os.path.getsize(own), f"external basis file {size_ext} B < own-basis file {os.path.getsize(own)} B (no basis stored)")
dec = P("ext.png")
r = run("decode", ext, "--basis", basis, "-o", dec, "-q")
check(r.returncode == 0 and read_png(dec).shape == (27, 35, 3), "decode with the right basis")
r2 = run("decode", ext, "--basis", basis, "-o", P("ext2.png"), "-q")
check(np.array_equal(read_png(dec), read_png(P("ext2.png"))), "external decode is repeatable")


def refused(args, code, needle, out_path, what):
    r = run(*args)
    err = r.stderr.strip()
    ok = (r.returncode == code and err.startswith("pcasweep: ") and "\n" not in err and needle in err
          and not os.path.exists(out_path))
    check(ok, f"{what}: exit {r.returncode} (want {code}), nothing written, message: {err}")


refused(["decode", ext, "-o", P("x1.png")], 2, "--basis", P("x1.png"), "external-basis file decoded without --basis")
other_basis = P("rgb2.pcsb")
run("fit", other, "-o", other_basis, "-q")
refused(["decode", ext, "--basis", other_basis, "-o", P("x2.png")], 1, "SHA-256", P("x2.png"), "decode with a different basis")
refused(["encode", other, "--k", "4", "--basis", gray_basis, "-o", P("x3.pcsc")], 2, "does not match", P("x3.pcsc"),
        "encode an RGB image with a gray basis (wrong geometry)")
refused(["encode", other, "--k", "4", "--basis", basis, "--patch", "4", "-o", P("x4.pcsc")], 2, "does not match",
        P("x4.pcsc"), "encode with --patch 4 against an 8x8 basis")

# 4. Corruption of a coded file: each refused, exit 1, one line, nothing written.
good = open(own, "rb").read()


def reseal(b):
    b = bytearray(b)
    b[-4:] = struct.pack("<I", zlib.crc32(bytes(b[:-4])) & 0xFFFFFFFF)
    return bytes(b)


bad = {
    "truncated": good[: len(good) // 2],
    "flipped byte": good[:120] + bytes([good[120] ^ 0x01]) + good[121:],
    "wrong magic": b"XSCI" + good[4:],
    "wrong version": good[:4] + struct.pack("<H", 7) + good[6:],
    "huge declared size": reseal(good[:8] + struct.pack("<II", 0x7FFFFFFF, 0x7FFFFFFF) + good[16:]),
    "huge declared body": reseal(good[:84] + struct.pack("<Q", 1 << 40) + good[92:]),
}
needles = {"truncated": "checksum", "flipped byte": "checksum", "wrong magic": "magic", "wrong version": "version 7",
           "huge declared size": "cap", "huge declared body": "body"}
for name, data in bad.items():
    path = P(name.replace(" ", "_") + ".pcsc")
    open(path, "wb").write(data)
    outp = P(name.replace(" ", "_") + ".png")
    refused(["decode", path, "-o", outp], 1, needles[name], outp, f"coded file, {name}")
bb = open(basis, "rb").read()
open(P("trunc.pcsb"), "wb").write(bb[:-100])
refused(["decode", ext, "--basis", P("trunc.pcsb"), "-o", P("x5.png")], 1, "checksum", P("x5.png"), "truncated basis file")

# 5. Rate-distortion outputs: JPEG points' sizes equal the JPEG files' sizes; rd.svg written.
rdimg = P("rd.png")
write_png(rdimg, scene(48, 64, 3, 8, 8), 8)
out = P("rd")
r = run("sweep", rdimg, "--k", "4", "-o", out, "-q")
check(r.returncode == 0, f"sweep with the rate-distortion study runs ({r.stderr.strip()[:200]})")
lines = open(os.path.join(out, "rd.csv")).read().splitlines()
head = lines[0].split(",")
rows = [dict(zip(head, l.split(","))) for l in lines[1:]]
jpeg = [x for x in rows if x["method"] == "jpeg"]
check(len(jpeg) >= 5, f"rd.csv has {len(jpeg)} JPEG points")
for x in jpeg:
    size = os.path.getsize(os.path.join(out, x["file"]))
    check(int(x["bytes"]) == size, f"JPEG q{x['quality']}: rd.csv bytes {x['bytes']} = file size {size}")
    bpp = 8.0 * size / (48 * 64)
    check(abs(float(x["bits_per_pixel"]) - bpp) < 1e-6, f"JPEG q{x['quality']}: bits per pixel {bpp:.4f}")
for m in ("pca", "dct", "gaussian_bound"):
    check(any(x["method"] == m for x in rows), f"rd.csv has {m} points")
svg = open(os.path.join(out, "rd.svg")).read()
check(svg.startswith("<svg") or "<svg" in svg[:200], "rd.svg is an SVG document")
import json
summary = json.load(open(os.path.join(out, "summary.json")))
check("rate_distortion" in summary and "bpp" in summary["rate_distortion"]["sentence"],
      "summary.json carries the rate-distortion sentence: " + summary.get("rate_distortion", {}).get("sentence", ""))

print(f"{len(failures)} failed" if failures else "all codec checks passed")
sys.exit(1 if failures else 0)
