"""PNG in and out, checked against independent decoders and encoders.

1. PNGs written by pcasweep (a sweep with --no-codec at k = d writes the input back, bit for
   bit, through our row-wise encoder) are decoded by Pillow, skimage.io and pypng: exactly the
   samples we put in, 8- and 16-bit, gray, gray+alpha, RGB, RGBA, large enough that the encoder
   compresses several groups in parallel.
2. PNGs written by Pillow (palette, palette + tRNS, 1-bit gray, 2/4-bit palette, gray + tRNS,
   RGB + tRNS, 16-bit gray), and by hand with zlib where Pillow cannot write them (2/4-bit gray,
   16-bit RGB, Adam7-interlaced), are read by `pcasweep compare A B --json` against B, the
   samples Pillow/numpy see written as a plain PNG: mse must be 0. The expected channel rules
   are the ones pcasweep documents (stb_image's): palette -> RGB, or RGBA with tRNS; gray/RGB
   with tRNS -> alpha added (0 where the colour equals the tRNS value, full otherwise); 1/2/4-bit
   gray scaled to 0..255; 16-bit stays 16-bit.
3. A tiny file declaring 30000x30000 pixels is refused with exit 1, one line naming the file,
   and peak RSS under 100 MB (GNU time, /usr/bin/time -f %M, kilobytes); --max-pixels below a
   real image's size refuses it the same way.

Sources: Pillow (Debian python3-pil), scikit-image (python3-skimage) and pypng (python3-png)
as decoders and Pillow as encoder; the PNG specification (ISO/IEC 15948) for the hand-built files (chunk layout §5.3,
Adam7 pass origins and steps §8.2, sample packing §7.2, tRNS §11.3.2.1).
"""
import io
import json
import os
import struct
import subprocess
import sys
import zlib

import numpy as np
import png as pypng
from PIL import Image
import skimage.io

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from refcommon import check, failures, scratch_dir  # noqa: E402

binary = sys.argv[1]
tmp = scratch_dir("pcasweep-png-io-")
rng = np.random.default_rng(20261202)


def run(args):
    return subprocess.run([binary] + args, capture_output=True, text=True)


def chunk(kind, body):
    return struct.pack(">I", len(body)) + kind + body + struct.pack(">I", zlib.crc32(kind + body) & 0xFFFFFFFF)


def png_bytes(width, height, depth, colour_type, scanlines, interlace=0, extra=b""):
    """A PNG from already packed, filter-prefixed scanline bytes (§5.3, §11.2.2)."""
    header = struct.pack(">IIBBBBB", width, height, depth, colour_type, 0, 0, interlace)
    return (b"\x89PNG\r\n\x1a\n" + chunk(b"IHDR", header) + extra +
            chunk(b"IDAT", zlib.compress(scanlines, 6)) + chunk(b"IEND", b""))


def packed_rows(values, depth):
    """values: H×W integers < 2^depth (depth 1, 2, 4, 8) or uint16 (16): scanlines, filter 0."""
    out = b""
    for row in values:
        if depth == 16:
            data = row.astype(">u2").tobytes()
        elif depth == 8:
            data = row.astype(np.uint8).tobytes()
        else:
            per = 8 // depth
            padded = np.zeros(((len(row) + per - 1) // per) * per, dtype=np.uint8)
            padded[:len(row)] = row
            groups = padded.reshape(-1, per)
            data = bytes(int(sum(int(v) << (8 - depth * (i + 1)) for i, v in enumerate(g))) for g in groups)
        out += b"\x00" + data
    return out


def adam7_scanlines(values, depth):
    """Adam7 (§8.2): passes with (x0, y0, dx, dy); each pass is a reduced image of its own rows."""
    passes = [(0, 0, 8, 8), (4, 0, 8, 8), (0, 4, 4, 8), (2, 0, 4, 4), (0, 2, 2, 4), (1, 0, 2, 2), (0, 1, 1, 2)]
    out = b""
    for x0, y0, dx, dy in passes:
        sub = values[y0::dy, x0::dx]
        if sub.size:
            out += packed_rows(sub.reshape(sub.shape[0], -1), depth)
    return out


def save_plain(path, array):
    """B files: the expected samples as a plain PNG (Pillow for 8-bit, hand-built for 16-bit)."""
    array = np.asarray(array)
    if array.dtype == np.uint16:
        h, w = array.shape[:2]
        c = 1 if array.ndim == 2 else array.shape[2]
        colour = {1: 0, 2: 4, 3: 2, 4: 6}[c]
        with open(path, "wb") as f:
            f.write(png_bytes(w, h, 16, colour, packed_rows(array.reshape(h, -1), 16)))
    else:
        mode = {2: "L", 3: {2: "LA", 3: "RGB", 4: "RGBA"}}
        m = "L" if array.ndim == 2 else mode[3][array.shape[2]]
        Image.fromarray(array, m).save(path)


def compare_zero(a, b, what):
    r = run(["compare", a, b, "--json"])
    if r.returncode != 0:
        check(False, what + ": compare exited %d: %s" % (r.returncode, r.stderr.strip()))
        return
    mse = json.loads(r.stdout)["mse"]
    check(mse == 0, what + ": pcasweep reads the samples Pillow/numpy see (mse %g)" % mse)


# --- 1. Our PNGs decoded by Pillow and skimage.io ------------------------------------------
def smooth_noisy(h, w, c, top):
    y, x = np.mgrid[0:h, 0:w]
    base = [(0.5 + 0.4 * np.sin(x / 37.0 + k) * np.cos(y / 23.0 - k)) for k in range(c)]
    img = np.stack(base, axis=-1) * top + rng.normal(0, top / 100.0, (h, w, c))
    return np.clip(np.rint(img), 0, top)


cases = [  # (name, height, width, channels, bit depth): several 256 KiB groups each
    ("gray8", 517, 611, 1, 8), ("ga8", 301, 455, 2, 8), ("rgb8", 389, 513, 3, 8), ("rgba8", 257, 331, 4, 8),
    ("gray16", 303, 477, 1, 16), ("rgb16", 211, 333, 3, 16), ("rgba16", 190, 287, 4, 16),
]
for name, h, w, c, depth in cases:
    top = 255 if depth == 8 else 65535
    samples = smooth_noisy(h, w, c, top).astype(np.uint8 if depth == 8 else np.uint16)
    samples[0, 0, :] = 0
    samples[-1, -1, :] = top
    src = os.path.join(tmp, name + ".png")
    save_plain(src, samples[:, :, 0] if c == 1 else samples)
    out = os.path.join(tmp, "out-" + name)
    d = 4 * 4 * c  # --patch 4: d = 16·channels, k = d reconstructs exactly
    r = run(["sweep", src, "--out", out, "--patch", "4", "--k", str(d), "--no-codec", "--no-rd", "--quiet"])
    if r.returncode != 0:
        check(False, name + ": sweep exited %d: %s" % (r.returncode, r.stderr.strip()))
        continue
    ours = os.path.join(out, name + ".k%d.png" % d)
    expected = samples[:, :, 0] if c == 1 else samples
    with Image.open(ours) as im:
        info = (im.mode, im.size)
        pil = np.array(im)
    if depth == 16 and c > 1:
        print("note " + name + ": Pillow 9.4 has no 16-bit colour mode (it reduces to 8 bits); pypng only")
    else:
        check(pil.shape == expected.shape and np.array_equal(pil.astype(np.int64), expected.astype(np.int64)),
              name + ": Pillow decodes our PNG to exactly our samples %s" % (info,))
    if depth == 8 and c != 2:
        # skimage.io goes through imageio/Pillow: it widens gray+alpha to RGBA and reduces 16-bit
        # colour to 8 bits, so it is asked only about the other cases.
        sk = skimage.io.imread(ours)
        check(sk.dtype == expected.dtype and sk.shape == expected.shape and np.array_equal(sk, expected),
              name + ": skimage.io decodes our PNG to exactly our samples (%s %s)" % (sk.dtype, sk.shape))
    # pypng (Debian python3-png, pure Python: its own inflate use and unfiltering) for every case.
    pw, ph, rows, meta = pypng.Reader(filename=ours).read()
    pp = np.vstack([np.asarray(r, dtype=np.uint16) for r in rows]).reshape(expected.shape)
    check(meta["bitdepth"] == depth and meta["planes"] == c and np.array_equal(pp, expected.astype(np.uint16)),
          name + ": pypng decodes our PNG to exactly our samples (bit depth %d, %d planes)" % (meta["bitdepth"], meta["planes"]))

# --- 2. PNGs from Pillow (and by hand) read by pcasweep ------------------------------------
h, w = 29, 37
idx = rng.integers(0, 6, size=(h, w)).astype(np.uint8)
palette = rng.integers(0, 256, size=(6, 3)).astype(np.uint8)


def pillow_palette(path, bits=None, transparency=None):
    im = Image.fromarray(idx, "P")
    im.putpalette(palette.flatten().tolist())
    kwargs = {}
    if bits:
        kwargs["bits"] = bits
    if transparency is not None:
        kwargs["transparency"] = transparency
    im.save(path, **kwargs)


# Palette -> RGB.
a = os.path.join(tmp, "pal.png")
pillow_palette(a)
with Image.open(a) as im:
    rgb = np.array(im.convert("RGB"))
check(np.array_equal(rgb, palette[idx]), "palette: Pillow's RGB is the palette lookup")
b = os.path.join(tmp, "pal-expected.png")
save_plain(b, rgb)
compare_zero(a, b, "palette 8-bit -> RGB")
# 4-bit and 2-bit palettes (Pillow packs the indices).
for bits in (4,):
    a4 = os.path.join(tmp, "pal%d.png" % bits)
    pillow_palette(a4, bits=bits)
    with open(a4, "rb") as f:
        check(f.read()[24] == bits, "palette %d-bit: Pillow wrote bit depth %d" % (bits, bits))
    compare_zero(a4, b, "palette %d-bit -> RGB" % bits)
idx2 = idx % 4
pal2 = Image.fromarray(idx2, "P")
pal2.putpalette(palette[:4].flatten().tolist())
a2 = os.path.join(tmp, "pal2.png")
pal2.save(a2, bits=2)
with open(a2, "rb") as f:
    check(f.read()[24] == 2, "palette 2-bit: Pillow wrote bit depth 2")
b2 = os.path.join(tmp, "pal2-expected.png")
save_plain(b2, palette[:4][idx2])
compare_zero(a2, b2, "palette 2-bit -> RGB")
# Palette + tRNS -> RGBA (alpha from the tRNS list).
alphas = bytes([0, 64, 128, 255, 200, 10])
at = os.path.join(tmp, "pal-trns.png")
pillow_palette(at, transparency=alphas)
with Image.open(at) as im:
    rgba = np.array(im.convert("RGBA"))
check(np.array_equal(rgba[:, :, 3], np.frombuffer(alphas, np.uint8)[idx]), "palette+tRNS: Pillow's alpha is the tRNS lookup")
bt = os.path.join(tmp, "pal-trns-expected.png")
save_plain(bt, rgba)
compare_zero(at, bt, "palette + tRNS -> RGBA")
# 1-bit gray (Pillow mode "1") -> 0/255.
bits1 = rng.integers(0, 2, size=(h, w)).astype(bool)
a1 = os.path.join(tmp, "g1.png")
Image.fromarray(bits1).save(a1)
with open(a1, "rb") as f:
    head = f.read(26)
check(head[24] == 1 and head[25] == 0, "1-bit gray: Pillow wrote bit depth 1, colour type 0")
with Image.open(a1) as im:
    g1 = np.array(im.convert("L"))
b1 = os.path.join(tmp, "g1-expected.png")
save_plain(b1, g1)
compare_zero(a1, b1, "1-bit gray -> 0/255")
# 2- and 4-bit gray, hand-built (Pillow writes no such file); Pillow's decode is the expectation.
for depth in (2, 4):
    vals = rng.integers(0, 1 << depth, size=(h, w))
    ag = os.path.join(tmp, "g%d.png" % depth)
    with open(ag, "wb") as f:
        f.write(png_bytes(w, h, depth, 0, packed_rows(vals, depth)))
    with Image.open(ag) as im:
        pil = np.array(im.convert("L"))
    check(np.array_equal(pil, vals * (255 // ((1 << depth) - 1))), "%d-bit gray: Pillow scales by 255/(2^d-1)" % depth)
    bg = os.path.join(tmp, "g%d-expected.png" % depth)
    save_plain(bg, pil)
    compare_zero(ag, bg, "%d-bit gray -> 8-bit" % depth)
# Gray + tRNS -> gray+alpha; RGB + tRNS -> RGBA (Pillow writes the tRNS chunk).
gray = rng.integers(0, 8, size=(h, w)).astype(np.uint8) * 30
agt = os.path.join(tmp, "g-trns.png")
Image.fromarray(gray, "L").save(agt, transparency=60)
with Image.open(agt) as im:
    check(im.info.get("transparency") == 60, "gray+tRNS: Pillow reads back the tRNS value")
    g = np.array(im)
bgt = os.path.join(tmp, "g-trns-expected.png")
save_plain(bgt, np.stack([g, np.where(g == 60, 0, 255).astype(np.uint8)], axis=-1))
compare_zero(agt, bgt, "gray + tRNS -> gray+alpha")
col = palette[idx]
art = os.path.join(tmp, "rgb-trns.png")
key = tuple(int(v) for v in palette[2])
Image.fromarray(col, "RGB").save(art, transparency=key)
with Image.open(art) as im:
    c = np.array(im)
alpha = np.where(np.all(c == np.array(key, np.uint8), axis=-1), 0, 255).astype(np.uint8)
check(0 < int((alpha == 0).sum()) < alpha.size, "RGB+tRNS: some pixels match the key")
brt = os.path.join(tmp, "rgb-trns-expected.png")
save_plain(brt, np.dstack([c, alpha]))
compare_zero(art, brt, "RGB + tRNS -> RGBA")
# 16-bit gray from Pillow ("I;16"), 16-bit RGB by hand: stay 16-bit.
g16 = rng.integers(0, 65536, size=(h, w)).astype(np.uint16)
a16 = os.path.join(tmp, "g16.png")
Image.fromarray(g16, "I;16").save(a16)
with open(a16, "rb") as f:
    check(f.read()[24] == 16, "16-bit gray: Pillow wrote bit depth 16")
with Image.open(a16) as im:
    g16_seen = np.array(im).astype(np.uint16)
check(np.array_equal(g16_seen, g16), "16-bit gray: Pillow reads back its samples")
b16 = os.path.join(tmp, "g16-expected.png")
save_plain(b16, g16_seen)
compare_zero(a16, b16, "16-bit gray stays 16-bit")
r16 = rng.integers(0, 65536, size=(h, w, 3)).astype(np.uint16)
ar16 = os.path.join(tmp, "rgb16-sub.png")
# Filter type 1 (Sub, §9.2) on every row: byte minus the byte one pixel (6 bytes) to the left.
raw = r16.reshape(h, -1).astype(">u2").view(np.uint8).reshape(h, -1).astype(np.int64)
sub = raw.copy()
sub[:, 6:] = (raw[:, 6:] - raw[:, :-6]) % 256
with open(ar16, "wb") as f:
    f.write(png_bytes(w, h, 16, 2, b"".join(b"\x01" + bytes(row.astype(np.uint8)) for row in sub)))
_, _, rows16, _ = pypng.Reader(filename=ar16).read()
sk16 = np.vstack([np.asarray(r, dtype=np.uint16) for r in rows16]).reshape(h, w, 3)
check(np.array_equal(sk16, r16), "16-bit RGB, Sub filter: pypng reads the hand-built file to its samples")
br16 = os.path.join(tmp, "rgb16-expected.png")
save_plain(br16, sk16)
compare_zero(ar16, br16, "16-bit RGB stays 16-bit")
# Interlaced (Adam7), hand-built: 8-bit RGB, 16-bit gray and 1-bit gray; Pillow's decode is the expectation.
for name, vals, depth, colour in [("rgb8", palette[idx], 8, 2), ("gray16", g16, 16, 0), ("gray1", bits1.astype(np.uint8), 1, 0)]:
    ai = os.path.join(tmp, "adam7-%s.png" % name)
    with open(ai, "wb") as f:
        f.write(png_bytes(w, h, depth, colour, adam7_scanlines(vals, depth), interlace=1))
    with Image.open(ai) as im:
        check(im.info.get("interlace") == 1, "Adam7 %s: Pillow sees an interlaced file" % name)
        seen = np.array(im.convert("L")) if depth == 1 else np.array(im)
    if depth == 16:
        seen = seen.astype(np.uint16)
    expected = vals * 255 if depth == 1 else vals
    check(np.array_equal(seen.astype(np.int64), np.asarray(expected).astype(np.int64)),
          "Adam7 %s: Pillow decodes the hand-built file to its samples" % name)
    bi = os.path.join(tmp, "adam7-%s-expected.png" % name)
    save_plain(bi, seen)
    compare_zero(ai, bi, "Adam7-interlaced %s" % name)
# The comparison itself can fail: one changed sample gives mse > 0.
changed = rgb.copy()
changed[3, 4, 1] ^= 1
bc = os.path.join(tmp, "pal-changed.png")
save_plain(bc, changed)
r = run(["compare", a, bc, "--json"])
check(r.returncode == 0 and json.loads(r.stdout)["mse"] > 0, "a one-sample change is seen (mse > 0)")

# --- 3. The size guard: refused early, one line, little memory -----------------------------
huge = os.path.join(tmp, "huge.png")
with open(huge, "wb") as f:
    f.write(b"\x89PNG\r\n\x1a\n" + chunk(b"IHDR", struct.pack(">IIBBBBB", 30000, 30000, 8, 6, 0, 0, 0)) +
            chunk(b"IDAT", zlib.compress(b"\x00" * 1000)) + chunk(b"IEND", b""))
for args in (["sweep", huge, "--out", os.path.join(tmp, "huge-out")], ["compare", huge, huge]):
    rss_file = os.path.join(tmp, "rss.txt")
    r = subprocess.run(["/usr/bin/time", "-o", rss_file, "-f", "%M", binary] + args, capture_output=True, text=True)
    with open(rss_file) as f:
        peak_kb = int(f.read().split()[-1])
    lines = r.stderr.strip().splitlines()
    check(r.returncode == 1, "%s of a 30000x30000 header: exit 1 (got %d)" % (args[0], r.returncode))
    check(len(lines) == 1 and huge in lines[0] and "30000x30000" in lines[0],
          "%s: one line naming the file: %r" % (args[0], r.stderr.strip()))
    check(peak_kb < 100 * 1024, "%s: peak RSS %d KB < 100 MB" % (args[0], peak_kb))
check(not os.path.exists(os.path.join(tmp, "huge-out")), "sweep created no output folder for the refused file")
# --max-pixels below a real image refuses it; at its size it reads.
real = os.path.join(tmp, "rgb8.png")
pixels = 389 * 513
r = run(["sweep", real, "--out", os.path.join(tmp, "mp-out"), "--patch", "4", "--k", "4", "--no-codec", "--no-rd",
         "--quiet", "--max-pixels", str(pixels - 1)])
lines = r.stderr.strip().splitlines()
check(r.returncode == 1 and len(lines) == 1 and real in lines[0] and "--max-pixels" in lines[0],
      "--max-pixels %d refuses a %d-pixel image: %r" % (pixels - 1, pixels, r.stderr.strip()))
r = run(["sweep", real, "--out", os.path.join(tmp, "mp-out"), "--patch", "4", "--k", "4", "--no-codec", "--no-rd",
         "--quiet", "--max-pixels", str(pixels)])
check(r.returncode == 0, "--max-pixels %d reads it (exit %d %s)" % (pixels, r.returncode, r.stderr.strip()))

if failures:
    print("%d check(s) failed" % len(failures))
    sys.exit(1)
print("all PNG I/O checks passed")
