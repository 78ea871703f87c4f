"""Reference check: pcasweep's patch PCA against scikit-learn on the digits set.

Source: scikit-learn's bundled copy of the UCI "Optical Recognition of
Handwritten Digits" test set (sklearn.datasets.load_digits: 1797 images of
8×8 pixels, values 0..16), shipped in Debian's python3-sklearn, and
sklearn.decomposition.PCA (explained_variance_: eigenvalues of the covariance
with divisor N−1; explained_variance_ratio_: their share of the total variance).

The 1797 digits are tiled into one gray PNG of 3 rows × 599 columns of cells
(24 × 4792 pixels; 1797 = 3·599, so no padding cell adds an observation). Its
non-overlapping 8×8 patches are then exactly the digits, in the same
row-major pixel order as load_digits().data, and `pcasweep sweep --patch 8`
must find sklearn's spectrum:
  - eigenvalues and proportions to 1e-6 relative, for values above 1e-9 of the
    largest; the digits have pixels that are 0 in every image, whose
    eigenvalues are zero up to round-off and are compared absolutely
    (|ours − sklearn| <= 1e-9 × the largest eigenvalue);
  - PSNR at k = 1 and 4: sklearn's PCA reconstruction (inverse_transform of
    transform), rounded half away from zero and clipped to 0..255 as pcasweep
    documents, measured with 10·log10(255²/MSE), to 0.01 dB, against
    pcasweep's plain PCA reconstruction as `pcasweep batch` reports it
    (per-file basis, no coding; `sweep` measures its coded file instead);
  - at k = 64 = d that reconstruction equals the input (MSE 0, PSNR inf);
  - sweep.csv's psnr_db is that of the <stem>.k<K>.png files sweep wrote.
Usage: digits_check.py PATH-TO-PCASWEEP. Exits 1 on any failure.
"""
import os
import shutil
import sys
import tempfile

import numpy as np
from sklearn.datasets import load_digits
from sklearn.decomposition import PCA

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import refcommon  # noqa: E402


def main():
    binary = refcommon.binary_from_argv()
    data = load_digits().data  # 1797 × 64, row-major 8×8 pixels, values 0..16
    assert data.shape == (1797, 64), data.shape
    digits = data.astype(np.uint8).reshape(1797, 8, 8)
    assert np.array_equal(digits.reshape(1797, 64), data)
    rows, cols = 3, 599
    # Cell (r, c) holds digit r·599 + c: the patch order pcasweep uses (row-major over the grid).
    tiled = digits.reshape(rows, cols, 8, 8).transpose(0, 2, 1, 3).reshape(rows * 8, cols * 8)

    work = tempfile.mkdtemp(prefix="pcasweep-digits-")
    failures = 0
    try:
        png = os.path.join(work, "digits.png")
        refcommon.write_png(png, tiled)
        out = os.path.join(work, "out")
        refcommon.run_pcasweep(binary, ["sweep", png, "--out", out, "--patch", "8", "--k", "1,4,64", "--quiet"] +
                               refcommon.sweep_extra_args(binary))
        reconstruction = refcommon.batch_psnr(binary, work, png, ["--patch", "8", "--k", "1,4,64"])
        spectrum = refcommon.read_csv(os.path.join(out, "spectrum.csv"))
        sweep = refcommon.read_csv(os.path.join(out, "sweep.csv"))

        pca = PCA(svd_solver="full").fit(data)
        print("digits: N = %d observations, d = %d variables (sklearn PCA, svd_solver='full')" % data.shape)
        failures += refcommon.compare_spectra("eigenvalues vs explained_variance_",
                                              spectrum["eigenvalue"], pca.explained_variance_)
        failures += refcommon.compare_spectra("proportions vs explained_variance_ratio_",
                                              spectrum["proportion"], pca.explained_variance_ratio_)
        cumulative = np.cumsum(pca.explained_variance_ratio_)
        gap = np.max(np.abs(np.asarray(spectrum["cumulative"]) - cumulative))
        print("cumulative proportions: largest |difference| %.3g (tol 1e-6) -> %s" %
              (gap, "ok" if gap <= 1e-6 else "FAIL"))
        failures += gap > 1e-6

        for k in (1, 4):
            reduced = PCA(n_components=k, svd_solver="full").fit(data)
            back = reduced.inverse_transform(reduced.transform(data))
            written = np.clip(np.floor(back + 0.5), 0, 255)  # round half away from zero (values >= 0 after clip)
            reference = refcommon.psnr_db(data, written, 255.0)
            ours = reconstruction.get(k, float("nan"))
            ok = abs(ours - reference) <= 0.01
            print("PSNR at k = %d: pcasweep %.6f dB, sklearn reconstruction %.6f dB, |diff| %.2g (tol 0.01) -> %s" %
                  (k, ours, reference, abs(ours - reference), "ok" if ok else "FAIL"))
            failures += not ok
        ok = reconstruction.get(64) == float("inf")
        print("k = 64 = d: PSNR of the reconstruction %s (want inf: the input back exactly) -> %s" %
              (reconstruction.get(64), "ok" if ok else "FAIL"))
        failures += not ok
        failures += refcommon.sweep_psnr_matches_written_files(out, "digits", tiled, sweep, 255.0)
    finally:
        shutil.rmtree(work, ignore_errors=True)
    print("digits_check: %s" % ("PASS" if failures == 0 else "FAIL (%d)" % failures))
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
