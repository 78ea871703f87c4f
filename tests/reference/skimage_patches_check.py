"""Reference check: pcasweep's patch PCA against the same computation in numpy.

Sources: sample images shipped in Debian's python3-skimage (skimage.data.camera(),
512×512 gray; skimage.data.astronaut(), 512×512 RGB), and numpy's symmetric
eigensolver (numpy.linalg.eigh) applied to the sample covariance (divisor N−1)
of the patch observations, built here independently with numpy:
  - patches of ph×pw every sy×sx pixels; the variable order inside a joint
    colour patch is (row, column, channel), as pcasweep documents;
  - images whose sides the patch grid does not cover exactly are first extended
    at the bottom and right by numpy.pad(mode="reflect") (the edge sample is
    not repeated) to the covered size, which is pcasweep's documented rule;
  - the reconstruction at k is mean + (X − mean)·V_k·V_kᵀ, folded back by
    averaging overlapping patches, cropped, rounded half away from zero and
    clipped to 0..L (L = 255 or 65535), and PSNR = 10·log10(L²/MSE).
pcasweep's spectrum.csv (from `sweep`) must agree to 1e-6 relative (near-zero
eigenvalues, below 1e-9 of the largest, to 1e-9·largest absolute), and the
PSNR of its PCA reconstruction at k = 1, 4, 16 to 0.01 dB. That PSNR is read
from `pcasweep batch` (per-file basis, no coding): `sweep` now measures the
decoding of its coded file (--quality), which is not the plain reconstruction.
sweep.csv's psnr_db is checked against the <stem>.k<K>.png files it wrote.
Usage: skimage_patches_check.py PATH-TO-PCASWEEP. Exits 1 on any failure.
"""
import os
import shutil
import sys
import tempfile

import numpy as np
from skimage import data

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import refcommon  # noqa: E402

KS = (1, 4, 16)


def covered_length(n, size, stride):
    """Smallest length >= n that windows of `size` every `stride` cover exactly."""
    if n <= size:
        return size
    return size + -(-(n - size) // stride) * stride


def observe(image, ph, pw, sy, sx):
    """image: H×W×C. Returns X (N×d, rows in row-major patch order) and the padded shape."""
    h, w, _ = image.shape
    hp, wp = covered_length(h, ph, sy), covered_length(w, pw, sx)
    padded = np.pad(image.astype(float), ((0, hp - h), (0, wp - w), (0, 0)), mode="reflect")
    ny, nx = (hp - ph) // sy + 1, (wp - pw) // sx + 1
    X = np.stack([padded[py * sy:py * sy + ph, px * sx:px * sx + pw, :].reshape(-1)
                  for py in range(ny) for px in range(nx)])
    return X, (hp, wp, ny, nx)


def fold(X, shape, image_shape, ph, pw, sy, sx):
    """Inverse of observe: averages overlapping patches, crops the padding."""
    hp, wp, ny, nx = shape
    h, w, c = image_shape
    total = np.zeros((hp, wp, c))
    count = np.zeros((hp, wp, 1))
    for i, row in enumerate(X):
        py, px = divmod(i, nx)
        total[py * sy:py * sy + ph, px * sx:px * sx + pw, :] += row.reshape(ph, pw, c)
        count[py * sy:py * sy + ph, px * sx:px * sx + pw, :] += 1
    return (total / count)[:h, :w, :]


def numpy_patch_pca(image, ph, pw, sy, sx, top):
    """Returns (eigenvalues, {k: psnr_db}) computed with numpy only."""
    image3 = image if image.ndim == 3 else image[:, :, None]
    X, shape = observe(image3, ph, pw, sy, sx)
    mean = X.mean(axis=0)
    centred = X - mean
    covariance = centred.T @ centred / (X.shape[0] - 1)
    eigenvalues, vectors = np.linalg.eigh(covariance)
    order = np.argsort(eigenvalues)[::-1]
    eigenvalues, vectors = eigenvalues[order], vectors[:, order]
    psnr = {}
    for k in KS:
        v = vectors[:, :k]
        back = fold(centred @ v @ v.T + mean, shape, image3.shape, ph, pw, sy, sx)
        written = np.clip(np.floor(back + 0.5), 0, top)  # half away from zero for the values kept
        psnr[k] = refcommon.psnr_db(image3, written, top)
    return eigenvalues, psnr, X.shape


def check_case(binary, work, label, image, ph=8, pw=8, sy=8, sx=8):
    top = 65535.0 if image.dtype == np.uint16 else 255.0
    name = label.replace(" ", "_").replace(",", "")
    png = os.path.join(work, name + ".png")
    refcommon.write_png(png, image)
    out = os.path.join(work, name)
    geometry = ["--patch", "%dx%d" % (ph, pw), "--stride", "%dx%d" % (sy, sx), "--k", ",".join(str(k) for k in KS)]
    refcommon.run_pcasweep(binary, ["sweep", png, "--out", out, "--quiet"] + geometry +
                           refcommon.sweep_extra_args(binary))
    spectrum = refcommon.read_csv(os.path.join(out, "spectrum.csv"))
    sweep = refcommon.read_csv(os.path.join(out, "sweep.csv"))
    eigenvalues, psnr, (n, d) = numpy_patch_pca(image, ph, pw, sy, sx, top)
    print("\n== %s: %s %s, patch %dx%d stride %dx%d, N = %d, d = %d" %
          (label, "x".join(map(str, image.shape)), image.dtype, ph, pw, sy, sx, n, d))
    failures = refcommon.compare_spectra("eigenvalues vs numpy.linalg.eigh", spectrum["eigenvalue"], eigenvalues)
    failures += refcommon.compare_spectra("proportions", spectrum["proportion"], eigenvalues / eigenvalues.sum())
    reconstruction = refcommon.batch_psnr(binary, work, png, geometry)
    for k in KS:
        ours = reconstruction.get(k, float("nan"))
        ok = abs(ours - psnr[k]) <= 0.01
        print("  PSNR of the k = %-2d reconstruction: pcasweep %.6f dB, numpy %.6f dB, |diff| %.2g (tol 0.01) -> %s" %
              (k, ours, psnr[k], abs(ours - psnr[k]), "ok" if ok else "FAIL"))
        failures += not ok
    failures += refcommon.sweep_psnr_matches_written_files(out, name, image, sweep, top)
    return failures


def main():
    binary = refcommon.binary_from_argv()
    camera = data.camera()        # 512×512 uint8 gray
    astronaut = data.astronaut()  # 512×512×3 uint8 RGB
    assert camera.shape == (512, 512) and astronaut.shape == (512, 512, 3)
    # A 16-bit image using all 16 bits: camera in the high byte, the astronaut's red in the low byte.
    sixteen = (camera[:301, :457].astype(np.uint16) << 8) | astronaut[:301, :457, 0].astype(np.uint16)
    work = tempfile.mkdtemp(prefix="pcasweep-skimage-")
    failures = 0
    try:
        failures += check_case(binary, work, "camera", camera)
        failures += check_case(binary, work, "astronaut joint colour", astronaut)
        failures += check_case(binary, work, "camera crop 301x457 mirror-padded", camera[:301, :457])
        failures += check_case(binary, work, "astronaut crop 203x317 overlapping 8x8 stride 4x4",
                               astronaut[:203, :317], sy=4, sx=4)
        failures += check_case(binary, work, "camera crop 301x457 rectangular 6x10", camera[:301, :457],
                               ph=6, pw=10, sy=6, sx=10)
        failures += check_case(binary, work, "16-bit crop 301x457", sixteen)
    finally:
        shutil.rmtree(work, ignore_errors=True)
    print("\nskimage_patches_check: %s" % ("PASS" if failures == 0 else "FAIL (%d)" % failures))
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
