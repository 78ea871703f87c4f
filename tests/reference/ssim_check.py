#!/usr/bin/env python3
"""SSIM of `pcasweep compare` against scikit-image, in both precisions.

Reference: skimage.metrics.structural_similarity (Debian python3-skimage) with
gaussian_weights=True, sigma=1.5, use_sample_covariance=False, data_range=L:
the settings of Wang, Bovik, Sheikh & Simoncelli (IEEE TIP 2004). skimage
filters the whole image with reflection and then crops 5 pixels at each
border, which is the same as our valid-region mean.

Every pair is measured three times: `--ssim-precision auto`, `single` and
`double`. Tolerances (docs/quality.md, "Precision"):
  - the precision that `auto` picks must agree with skimage to 1e-6, and auto
    must give exactly the figures of the precision it names;
  - the other precision to 1e-4 (the tolerance of the original requirement);
  - SSIM(x, x) == 1 exactly in every precision.
The largest |single - double| and |double - skimage| are printed per bit depth:
they are the measurements behind the rule for `auto` (src/measure/ssim.cpp).

Pairs, made from images shipped in python3-skimage / python3-sklearn:
  1. skimage camera() (8-bit gray) vs a blurred, noisy copy
  2. skimage astronaut() (8-bit RGB) vs a JPEG-like degraded copy (noise + shift)
  3. camera() scaled to 16-bit (x257) vs a noisy 16-bit copy, L = 65535
  4. sklearn load_sample_image('china.jpg') (8-bit RGB) crop vs quantised copy
  5. skimage coffee() (8-bit RGB) vs its rank-8 patch-PCA reconstruction (8x8 patches)
  6. skimage page() (8-bit gray, text on paper: two levels) vs blur + 2% noise
  7. skimage chelsea() smoothed to true 16-bit levels (x257 after a sigma-0.8
     blur, not a multiple of 257) vs its rank-12 patch-PCA reconstruction
  8. skimage moon() x257 (16-bit gray) vs a copy with 1% noise
  9. sklearn load_sample_image('flower.jpg') crop (8-bit RGB) vs rank-4 patch PCA
 10. constructed (no shipped image): vertical stripes 64 pixels wide at 0.02 L and
     0.98 L with 0.3% noise, vs a copy with 2% noise, at 8 bits: the worst case
     found for single precision (float rounding of second moments of order (L/2)^2
     that does not average out); single must still meet 1e-4.
PNG files are written by refcommon.write_png (zlib + struct): skimage.io turns
16-bit RGB into 8 bits on writing.
Usage: ssim_check.py PATH_TO_PCASWEEP
"""
import json
import os
import subprocess
import sys

import numpy as np
from scipy import ndimage
from skimage import data
from skimage.metrics import structural_similarity
from sklearn.datasets import load_sample_image

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from refcommon import scratch_dir, write_png  # noqa: E402

TOL_AUTO = 1e-6   # the precision auto picks
TOL_OTHER = 1e-4  # the other one


def ours(binary, a_path, b_path, precision):
    out = subprocess.run([binary, "compare", a_path, b_path, "--json", "--ssim-precision", precision],
                         check=True, capture_output=True, text=True)
    return json.loads(out.stdout)


def reference(a, b, data_range):
    kw = dict(gaussian_weights=True, sigma=1.5, use_sample_covariance=False, data_range=data_range)
    if a.ndim == 3:
        return structural_similarity(a.astype(np.float64), b.astype(np.float64), channel_axis=-1, **kw)
    return structural_similarity(a.astype(np.float64), b.astype(np.float64), **kw)


def patch_pca(img, k, maxv, dtype, p=8):
    """Rank-k PCA reconstruction of the p x p patches (all channels jointly), rounded and clipped:
    the kind of image pcasweep measures (numpy SVD of the centred patch matrix)."""
    a = img.astype(np.float64)
    if a.ndim == 2:
        a = a[..., None]
    h, w, c = a.shape
    h, w = h - h % p, w - w % p
    out = a.copy()
    x = a[:h, :w].reshape(h // p, p, w // p, p, c).transpose(0, 2, 1, 3, 4).reshape(-1, p * p * c)
    mu = x.mean(axis=0)
    u, s, vt = np.linalg.svd(x - mu, full_matrices=False)
    rec = (u[:, :k] * s[:k]) @ vt[:k] + mu
    out[:h, :w] = rec.reshape(h // p, w // p, p, p, c).transpose(0, 2, 1, 3, 4).reshape(h, w, c)
    out = np.clip(np.rint(out), 0, maxv).astype(dtype)
    return out[..., 0] if img.ndim == 2 else out


def main():
    binary = sys.argv[1]
    rng = np.random.default_rng(20040413)
    tmp = scratch_dir("pcasweep-ssim-")
    cam = data.camera()
    astro = data.astronaut()
    china = load_sample_image("china.jpg")[100:356, 200:520]
    cam16 = cam.astype(np.uint16) * 257
    coffee = data.coffee()[:256, :384]
    page = data.page()
    chelsea16 = np.clip(np.rint(ndimage.gaussian_filter(data.chelsea()[:240, :320].astype(np.float64), (0.8, 0.8, 0))
                                * 257), 0, 65535).astype(np.uint16)
    moon16 = data.moon()[:256, :256].astype(np.uint16) * 257
    flower = load_sample_image("flower.jpg")[80:336, 200:520]
    stripes = np.where((np.arange(256) // 64) % 2 == 1, 0.98, 0.02)[None, :] * np.ones((256, 1)) * 255

    def noisy(img, sd, maxv, dtype):
        return np.clip(np.rint(img.astype(np.float64) + rng.normal(0, sd, img.shape)), 0, maxv).astype(dtype)

    stripes8 = noisy(stripes, 0.003 * 255, 255, np.uint8)
    pairs = [
        ("camera 8-bit gray, blur+noise", cam,
         noisy(ndimage.gaussian_filter(cam.astype(np.float64), 1.2), 6.0, 255, np.uint8), 255),
        ("astronaut 8-bit RGB, noise+shift", astro,
         noisy(np.roll(astro, 1, axis=1), 10.0, 255, np.uint8), 255),
        ("camera x257 16-bit gray, noise", cam16, noisy(cam16, 2000.0, 65535, np.uint16), 65535),
        ("china.jpg crop 8-bit RGB, quantised to 16 levels", china, (china // 16 * 16 + 8).astype(np.uint8), 255),
        ("coffee 8-bit RGB, patch PCA k=8", coffee, patch_pca(coffee, 8, 255, np.uint8), 255),
        ("page 8-bit gray (two levels), blur+noise", page,
         noisy(ndimage.gaussian_filter(page.astype(np.float64), 1.0), 0.02 * 255, 255, np.uint8), 255),
        ("chelsea smoothed 16-bit RGB, patch PCA k=12", chelsea16, patch_pca(chelsea16, 12, 65535, np.uint16),
         65535),
        ("moon x257 16-bit gray, 1% noise", moon16, noisy(moon16, 0.01 * 65535, 65535, np.uint16), 65535),
        ("flower.jpg crop 8-bit RGB, patch PCA k=4", flower, patch_pca(flower, 4, 255, np.uint8), 255),
        ("constructed stripes 8-bit gray, 2% noise (worst case for single)", stripes8,
         noisy(stripes8, 0.02 * 255, 255, np.uint8), 255),
    ]
    failures = 0
    worst = {}  # bits -> [max |single - double|, max |double - skimage|, max |single - skimage|]
    for i, (name, a, b, L) in enumerate(pairs):
        pa, pb = os.path.join(tmp, f"a{i}.png"), os.path.join(tmp, f"b{i}.png")
        write_png(pa, a)
        write_png(pb, b)
        want = reference(a, b, L)
        got = {p: ours(binary, pa, pb, p) for p in ("auto", "single", "double")}
        chosen = got["auto"]["ssim_precision"]
        other = "single" if chosen == "double" else "double"
        print(f"{name} (L = {L}): skimage {want:.10f}; auto uses {chosen}")
        ok_auto = got["auto"]["ssim"] == got[chosen]["ssim"] and got["auto"]["channel_ssim"] == got[chosen]["channel_ssim"]
        failures += not ok_auto
        print(f"  {'ok  ' if ok_auto else 'FAIL'} auto gives exactly the {chosen} figures")
        for p, tol in ((chosen, TOL_AUTO), (other, TOL_OTHER)):
            g = got[p]
            diff = abs(g["ssim"] - want)
            ok = diff <= tol and g["data_range"] == L and g["ssim_precision"] == p
            failures += not ok
            print(f"  {'ok  ' if ok else 'FAIL'} {p:6s}: pcasweep {g['ssim']:.10f}  |diff| {diff:.2e} (tol {tol:g})")
            if a.ndim == 3:
                for c in range(a.shape[2]):
                    wc = reference(a[..., c], b[..., c], L)
                    dc = abs(g["channel_ssim"][c] - wc)
                    failures += dc > tol
                    print(f"       channel {g['channel_names'][c]}: pcasweep {g['channel_ssim'][c]:.10f}"
                          f"  skimage {wc:.10f}  |diff| {dc:.2e}{'' if dc <= tol else '  FAIL'}")
        bits = 16 if L == 65535 else 8
        w = worst.setdefault(bits, [0.0, 0.0, 0.0])
        w[0] = max(w[0], abs(got["single"]["ssim"] - got["double"]["ssim"]))
        w[1] = max(w[1], abs(got["double"]["ssim"] - want))
        w[2] = max(w[2], abs(got["single"]["ssim"] - want))
        # SSIM of an image with itself is exactly 1 (definition: every factor equals its partner).
        for p in ("single", "double"):
            same = ours(binary, pa, pa, p)
            ok_same = same["ssim"] == 1.0
            failures += not ok_same
            print(f"  {'ok  ' if ok_same else 'FAIL'} {p}: SSIM(x, x) = {same['ssim']!r} (must be exactly 1)")
    for bits, (sd, dk, sk) in sorted(worst.items()):
        print(f"{bits}-bit pairs: max |single - double| {sd:.2e}, max |double - skimage| {dk:.2e}, "
              f"max |single - skimage| {sk:.2e}")
    print("ssim_check:", "all passed" if failures == 0 else f"{failures} failure(s)")
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
