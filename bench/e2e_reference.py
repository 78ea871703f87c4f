#!/usr/bin/env python3
"""The plain patch-PCA sweep as a user would write it with numpy, scikit-learn, scikit-image and Pillow.

Usage: /usr/bin/python3 bench/e2e_reference.py IMAGE.png --out DIR [--k 1,2,4,8,16,32,64,192]

Does the work of `pcasweep sweep IMAGE --out DIR --k ... --no-codec --no-rd`, for the end-to-end
benchmark (scripts/bench e2e) to time and to compare figures with:
  - reads the PNG with Pillow (8-bit gray or RGB, 16-bit gray; 16-bit colour is refused, since
    Pillow would silently reduce it to 8 bits);
  - cuts 8×8 patches of all channels jointly (variables in the order row, column, channel), after
    mirror padding at the bottom and right to a multiple of 8 (numpy.pad mode "reflect", which
    does not repeat the edge sample);
  - fits sklearn.decomposition.PCA() (all components, its default solver) on the N×d patch matrix;
  - for each k: coefficients of the first k components times those components plus the mean,
    folded back into the image, cropped, rounded half away from zero (floor(x + 0.5); negatives
    are clipped anyway), clipped to 0..L (L = 255, or 65535 for 16-bit);
  - writes DIR/<stem>.k<K>.png with Pillow's defaults, and measures PSNR
    (skimage.metrics.peak_signal_noise_ratio, data_range=L) and SSIM
    (skimage.metrics.structural_similarity, gaussian_weights=True, sigma=1.5,
    use_sample_covariance=False, data_range=L, channel_axis=-1 for colour).
Prints one JSON object: {"image": ..., "width", "height", "channels", "bit_depth", "N", "d",
"rows": [{"k", "psnr_db", "ssim"}, ...]} (PSNR of an exact copy is printed as null: infinite).
Exit 0 on success, 2 on a bad command line, 1 on an unreadable image.
"""
import argparse
import json
import math
import os
import sys

import numpy as np
from PIL import Image
from sklearn.decomposition import PCA
from skimage.metrics import peak_signal_noise_ratio, structural_similarity

P = 8  # patch size


def read_png(path):
    """Returns (H×W×C uint8/uint16 array, bit depth)."""
    with open(path, "rb") as f:
        head = f.read(26)
    # Pillow reads 16-bit colour PNG as 8-bit RGB without a word: refuse it (IHDR: bit depth at
    # byte 24, colour type at byte 25; PNG specification, section 11.2.2).
    if head[:8] == b"\x89PNG\r\n\x1a\n" and head[24] == 16 and head[25] in (2, 6):
        raise SystemExit(f"{path}: 16-bit colour PNG is not read faithfully by Pillow; use 8-bit or 16-bit gray")
    im = Image.open(path)
    im.load()
    if im.mode in ("L", "RGB"):
        return np.asarray(im)[..., None] if im.mode == "L" else np.asarray(im), 8
    if im.mode in ("I;16", "I;16B", "I"):
        return np.asarray(im).astype(np.uint16)[..., None], 16
    raise SystemExit(f"{path}: unsupported Pillow mode {im.mode}")


def write_png(path, a, bits):
    if bits == 8:
        Image.fromarray(a[..., 0] if a.shape[2] == 1 else a).save(path)
    elif a.shape[2] == 1:
        Image.fromarray(a[..., 0].astype(np.uint16), mode="I;16").save(path)
    else:
        raise SystemExit("writing 16-bit colour PNG is not supported by Pillow")


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("image")
    ap.add_argument("--out", required=True)
    ap.add_argument("--k", default="1,2,4,8,16,32,64,192")
    a = ap.parse_args()
    ks = [int(k) for k in a.k.split(",")]
    if not os.path.exists(a.image):
        print(f"{a.image}: no such file", file=sys.stderr)
        return 1
    img, bits = read_png(a.image)
    L = 255 if bits == 8 else 65535
    H, W, C = img.shape
    Hp, Wp = -(-H // P) * P, -(-W // P) * P
    padded = np.pad(img, ((0, Hp - H), (0, Wp - W), (0, 0)), mode="reflect")
    # N×d patch matrix, patches in row-major order, variables (row, column, channel).
    X = (padded.reshape(Hp // P, P, Wp // P, P, C).transpose(0, 2, 1, 3, 4)
         .reshape(-1, P * P * C).astype(np.float64))
    d = X.shape[1]
    if any(k < 1 or k > d for k in ks):
        print(f"--k: each k must be 1..{d}", file=sys.stderr)
        return 2
    pca = PCA()
    scores = pca.fit_transform(X)  # N×min(N, d) coefficients
    os.makedirs(a.out, exist_ok=True)
    stem = os.path.splitext(os.path.basename(a.image))[0]
    rows = []
    for k in ks:
        Xk = scores[:, :k] @ pca.components_[:k] + pca.mean_
        rec = (Xk.reshape(Hp // P, Wp // P, P, P, C).transpose(0, 2, 1, 3, 4).reshape(Hp, Wp, C))[:H, :W]
        out = np.clip(np.floor(rec + 0.5), 0, L).astype(img.dtype)
        del Xk, rec
        write_png(os.path.join(a.out, f"{stem}.k{k}.png"), out, bits)
        with np.errstate(divide="ignore"):  # an exact copy: skimage divides by an error of 0 (inf dB)
            psnr = peak_signal_noise_ratio(img, out, data_range=L)
        if C == 1:
            ssim = structural_similarity(img[..., 0], out[..., 0], gaussian_weights=True, sigma=1.5,
                                         use_sample_covariance=False, data_range=L)
        else:
            ssim = structural_similarity(img, out, gaussian_weights=True, sigma=1.5,
                                         use_sample_covariance=False, data_range=L, channel_axis=-1)
        rows.append({"k": k, "psnr_db": None if math.isinf(psnr) else float(psnr), "ssim": float(ssim)})
    print(json.dumps({"image": a.image, "width": W, "height": H, "channels": C, "bit_depth": bits,
                      "N": int(X.shape[0]), "d": int(d), "rows": rows}))
    return 0


if __name__ == "__main__":
    sys.exit(main())
