#!/usr/bin/env python3
"""SSIM of `pcasweep compare` against scikit-image.

Reference: skimage.metrics.structural_similarity (Debian python3-skimage) with
gaussian_weights=True, sigma=1.5, use_sample_covariance=False, data_range=L:
the settings of Wang, Bovik, Sheikh & Simoncelli (IEEE TIP 2004). skimage
filters the whole image with reflection and then crops 5 pixels at each
border, which is the same as our valid-region mean.
Pairs, all made from images shipped in python3-skimage / python3-sklearn:
  1. skimage camera() (8-bit gray) vs a blurred, noisy copy
  2. skimage astronaut() (8-bit RGB) vs a JPEG-like degraded copy (noise + shift)
  3. camera() scaled to 16-bit (x257) vs a noisy 16-bit copy, L = 65535
  4. sklearn load_sample_image('china.jpg') (8-bit RGB) crop vs quantised copy
Also SSIM(x, x) == 1 exactly. Tolerance 1e-4 (the issue's requirement).
Usage: ssim_check.py PATH_TO_PCASWEEP
"""
import json
import os
import subprocess
import sys

import numpy as np
from scipy import ndimage
from skimage import data, io
from skimage.metrics import structural_similarity
from sklearn.datasets import load_sample_image

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from refcommon import scratch_dir  # noqa: E402

TOL = 1e-4


def write_png(path, arr):
    # skimage.io writes 16-bit PNG for uint16 arrays (imageio backend).
    io.imsave(path, arr, check_contrast=False)


def ours(binary, a_path, b_path):
    out = subprocess.run([binary, "compare", a_path, b_path, "--json"], check=True, capture_output=True, text=True)
    return json.loads(out.stdout)


def reference(a, b, data_range):
    kw = dict(gaussian_weights=True, sigma=1.5, use_sample_covariance=False, data_range=data_range)
    if a.ndim == 3:
        return structural_similarity(a.astype(np.float64), b.astype(np.float64), channel_axis=-1, **kw)
    return structural_similarity(a.astype(np.float64), b.astype(np.float64), **kw)


def main():
    binary = sys.argv[1]
    rng = np.random.default_rng(20040413)
    tmp = scratch_dir("pcasweep-ssim-")
    cam = data.camera()
    astro = data.astronaut()
    china = load_sample_image("china.jpg")[100:356, 200:520]
    cam16 = cam.astype(np.uint16) * 257

    def noisy(img, sd, maxv, dtype):
        return np.clip(np.rint(img.astype(np.float64) + rng.normal(0, sd, img.shape)), 0, maxv).astype(dtype)

    pairs = [
        ("camera 8-bit gray, blur+noise", cam,
         noisy(ndimage.gaussian_filter(cam.astype(np.float64), 1.2), 6.0, 255, np.uint8), 255),
        ("astronaut 8-bit RGB, noise+shift", astro,
         noisy(np.roll(astro, 1, axis=1), 10.0, 255, np.uint8), 255),
        ("camera x257 16-bit gray, noise", cam16, noisy(cam16, 2000.0, 65535, np.uint16), 65535),
        ("china.jpg crop 8-bit RGB, quantised to 16 levels", china, (china // 16 * 16 + 8).astype(np.uint8), 255),
    ]
    failures = 0
    for i, (name, a, b, L) in enumerate(pairs):
        pa, pb = os.path.join(tmp, f"a{i}.png"), os.path.join(tmp, f"b{i}.png")
        write_png(pa, a)
        write_png(pb, b)
        got = ours(binary, pa, pb)
        want = reference(a, b, L)
        diff = abs(got["ssim"] - want)
        ok = diff <= TOL and got["data_range"] == L
        failures += not ok
        print(f"{'ok  ' if ok else 'FAIL'} {name}: pcasweep {got['ssim']:.8f}  skimage {want:.8f}  |diff| {diff:.2e}"
              f"  (L = {got['data_range']:.0f})")
        if a.ndim == 3:
            for c in range(a.shape[2]):
                wc = reference(a[..., c], b[..., c], L)
                dc = abs(got["channel_ssim"][c] - wc)
                failures += dc > TOL
                print(f"     channel {got['channel_names'][c]}: pcasweep {got['channel_ssim'][c]:.8f}"
                      f"  skimage {wc:.8f}  |diff| {dc:.2e}")
        # SSIM of an image with itself is exactly 1 (definition: every factor equals its partner).
        same = ours(binary, pa, pa)
        ok_same = same["ssim"] == 1.0
        failures += not ok_same
        print(f"{'ok  ' if ok_same else 'FAIL'} {name}: SSIM(x, x) = {same['ssim']!r} (must be exactly 1)")
    print("ssim_check:", "all passed" if failures == 0 else f"{failures} failure(s)")
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
