#!/usr/bin/env python3
"""End-to-end check of `pcasweep sweep` quality columns and k rules against outside references.

References (all Debian packages):
  * skimage.metrics.structural_similarity (gaussian_weights=True, sigma=1.5,
    use_sample_covariance=False, data_range=255, channel_axis=-1) and
    skimage.metrics.peak_signal_noise_ratio on the PNGs the sweep wrote:
    sweep.csv's ssim and psnr_db columns must match to 1e-4 / 1e-6 dB.
  * sklearn.decomposition.PCA(svd_solver='full') on the same 8x8x3 patches:
    explained_variance_ are the covariance eigenvalues (N-1 divisor). From them
    this script recomputes each rule by its published definition (cumulative
    variance; Kaiser-Guttman: eigenvalue > mean; broken-stick, Jackson 1993;
    Gavish-Donoho 2014 with omega(beta) = 0.56b^3 - 0.95b^2 + 1.82b + 1.43 and
    sigma_i = sqrt((N-1) lambda_i); Kneedle, Satopaa et al. 2011, on the
    normalised scree) and compares with summary.json's choose_k rules.
  * scree.svg and cumulative.svg must parse as XML (xml.etree).
  * `spectrum --out` on a gray image stored as RGB reports exact zeros in rules.json.
Image: skimage astronaut() (python3-skimage), cropped to 256x256.
Usage: k_rules_check.py PATH_TO_PCASWEEP
"""
import csv
import json
import os
import subprocess
import sys
import xml.etree.ElementTree as ET

import numpy as np
from skimage import data, io
from skimage.metrics import peak_signal_noise_ratio, structural_similarity
from sklearn.decomposition import PCA

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from refcommon import scratch_dir  # noqa: E402

failures = 0


def check(ok, text):
    global failures
    failures += not ok
    print(("ok   " if ok else "FAIL ") + text)


def patches(img, p):
    h, w, c = img.shape
    x = img.reshape(h // p, p, w // p, p, c).transpose(0, 2, 1, 3, 4).reshape(-1, p * p * c)
    return x.astype(np.float64)


def reference_rules(ev, total, n, d):
    rules = {}
    cum = np.cumsum(ev) / total
    for pct in (90, 95, 99, 99.9):
        rules[f"variance_{pct:g}"] = int(np.argmax(cum >= pct / 100 - 1e-12) + 1)
    rules["kaiser_guttman"] = int(np.sum(ev > total / d))
    b = np.array([np.sum(1.0 / np.arange(k, d + 1)) / d for k in range(1, d + 1)])
    prop = ev / total
    k = 0
    while k < len(prop) and prop[k] > b[k]:
        k += 1
    rules["broken_stick"] = k
    m = min(n, d)
    beta = m / max(n, d)
    sv = np.sqrt((n - 1) * np.clip(ev[:m], 0, None))
    omega = 0.56 * beta**3 - 0.95 * beta**2 + 1.82 * beta + 1.43
    rules["gavish_donoho"] = int(np.sum(sv > omega * np.median(sv)))
    x = np.arange(len(ev)) / (len(ev) - 1)
    y = (ev - ev.min()) / (ev.max() - ev.min())
    rules["kneedle"] = int(np.argmax((1 - y) - x) + 1)
    return rules


def main():
    binary = sys.argv[1]
    tmp = scratch_dir("pcasweep-krules-")
    img = data.astronaut()[100:356, 120:376]
    src = os.path.join(tmp, "astro.png")
    io.imsave(src, img, check_contrast=False)
    out = os.path.join(tmp, "out")
    run = subprocess.run([binary, "sweep", src, "--out", out, "--k", "1,4,16,64", "--patch", "8", "--solver", "exact"],
                         capture_output=True, text=True)
    if run.returncode != 0 and "solver" in run.stderr:  # older CLI without --solver
        run = subprocess.run([binary, "sweep", src, "--out", out, "--k", "1,4,16,64", "--patch", "8"],
                             capture_output=True, text=True)
    check(run.returncode == 0, f"sweep ran (exit {run.returncode}) {run.stderr.strip()}")
    if run.returncode != 0:
        return 1
    with open(os.path.join(out, "sweep.csv")) as f:
        rows = list(csv.DictReader(f))
    for r in rows:
        k = int(r["k"])
        written = io.imread(os.path.join(out, f"astro.k{k}.png"))
        want_ssim = structural_similarity(img.astype(float), written.astype(float), gaussian_weights=True, sigma=1.5,
                                          use_sample_covariance=False, data_range=255, channel_axis=-1)
        want_psnr = peak_signal_noise_ratio(img, written, data_range=255)
        got_ssim, got_psnr = float(r["ssim"]), float(r["psnr_db"])
        check(abs(got_ssim - want_ssim) <= 1e-4,
              f"k={k}: sweep.csv ssim {got_ssim:.8f} vs skimage {want_ssim:.8f}")
        check(abs(got_psnr - want_psnr) <= 1e-6 * max(1, want_psnr),
              f"k={k}: sweep.csv psnr_db {got_psnr:.6f} vs skimage {want_psnr:.6f}")
        for ch, name in enumerate(("red", "green", "blue")):
            wc = peak_signal_noise_ratio(img[..., ch], written[..., ch], data_range=255)
            check(abs(float(r["psnr_db_" + name]) - wc) <= 1e-6 * max(1, wc),
                  f"k={k}: psnr_db_{name} {float(r['psnr_db_' + name]):.6f} vs skimage {wc:.6f}")
        check("energy_retained" in r, f"k={k}: energy_retained column present ({r.get('energy_retained')})")

    X = patches(img, 8)
    n, d = X.shape
    pca = PCA(svd_solver="full").fit(X)
    ev = np.zeros(d)
    ev[: len(pca.explained_variance_)] = pca.explained_variance_
    total = np.var(X, axis=0, ddof=1).sum()
    want = reference_rules(ev, total, n, d)
    with open(os.path.join(out, "summary.json")) as f:
        summary = json.load(f)
    got = {r["rule"]: r["k"] for r in summary["choose_k"]["rules"]}
    for rule, k in want.items():
        check(got.get(rule) == k, f"rule {rule}: pcasweep {got.get(rule)} vs numpy/sklearn {k}")
    check(len(summary["choose_k"]["agreement"]) > 20, "summary.json has the agreement sentence")
    for name in ("scree.svg", "cumulative.svg"):
        try:
            root = ET.parse(os.path.join(out, name)).getroot()
            check(root.tag.endswith("svg"), f"{name} parses as SVG")
        except Exception as e:  # noqa: BLE001
            check(False, f"{name} parses as SVG: {e}")

    gray = data.camera()[:128, :128]
    rgb = np.stack([gray] * 3, axis=-1)
    gsrc = os.path.join(tmp, "gray_rgb.png")
    io.imsave(gsrc, rgb, check_contrast=False)
    gout = os.path.join(tmp, "gout")
    run = subprocess.run([binary, "spectrum", gsrc, "--out", gout], capture_output=True, text=True)
    check(run.returncode == 0, f"spectrum --out ran (exit {run.returncode})")
    with open(os.path.join(gout, "rules.json")) as f:
        rules = json.load(f)
    nz = rules["near_zero"]
    check(len(nz["exact_zero_components"]) == 128 and nz["redundancy_found"],
          f"gray stored as RGB: {len(nz['exact_zero_components'])} exact zeros of 192 (want 128)")
    print("k_rules_check:", "all passed" if failures == 0 else f"{failures} failure(s)")
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
