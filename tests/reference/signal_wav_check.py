#!/usr/bin/python3
"""Recordings written by pcasweep, read back by an independent WAV reader.

Reference: scipy.io.wavfile (Debian python3-scipy), which shares no code with
libsndfile. Checks:
  1. At k = d (window x channels) the reconstruction pcasweep writes is
     sample-identical to the input, with the same dtype and rate, for 16-bit
     PCM (3 channels), 32-bit float (mono) and unsigned 8-bit PCM (2 channels).
  2. At k < d the figures in sweep.csv (RMSE, SNR, plain and mean-removed PRD,
     max abs error; overall and per channel) equal the textbook formulas
     evaluated by numpy on the original and the file on disk:
       SNR = 10 log10(sum x^2 / sum (x - xh)^2)
       PRD = 100 sqrt(sum (x - xh)^2 / sum x^2)
       PRD mean-removed = 100 sqrt(sum (x - xh)^2 / sum (x - mean x)^2)
Usage: signal_wav_check.py PATH_TO_PCASWEEP
"""
import csv
import os
import shutil
import subprocess
import sys
import tempfile

import warnings

import numpy as np
from scipy.io import wavfile

# libsndfile adds chunks scipy does not parse (PEAK for float files); scipy skips them with a warning.
warnings.simplefilter("ignore", wavfile.WavFileWarning)

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from refcommon import check, failures  # noqa: E402


def figures(x, xh):
    x = x.astype(np.float64)
    xh = xh.astype(np.float64)
    e = x - xh
    se = np.sum(e * e)
    energy = np.sum(x * x)
    centred = np.sum((x - x.mean(axis=0)) ** 2)
    return {
        "rmse": np.sqrt(se / x.size),
        "snr_db": 10 * np.log10(energy / se),
        "prd_percent": 100 * np.sqrt(se / energy),
        "prd_mean_removed_percent": 100 * np.sqrt(se / centred),
        "max_abs_error": np.max(np.abs(e)),
    }


def run(binary, args):
    r = subprocess.run([binary] + args, capture_output=True, text=True)
    if r.returncode != 0:
        print(r.stdout, r.stderr)
    return r.returncode


def main():
    binary = sys.argv[1]
    tmp = tempfile.mkdtemp(prefix="pcasweep-wavcheck-")
    try:
        rng = np.random.default_rng(6)
        t = np.arange(5003)
        cases = []
        # 16-bit, 3 channels.
        x16 = np.stack([9000 * np.sin(0.05 * t + c) + 3000 * np.sin(0.7 * t + 2 * c) + 800 * rng.standard_normal(t.size)
                        for c in range(3)], axis=1)
        cases.append(("pcm16", np.round(x16).astype(np.int16), 32, [1, 8, 96]))
        # 32-bit float, mono.
        xf = (0.6 * np.sin(0.03 * t) + 0.05 * rng.standard_normal(t.size)).astype(np.float32)
        cases.append(("float32", xf, 16, [1, 4, 16]))
        # unsigned 8-bit, 2 channels.
        x8 = np.stack([128 + 90 * np.sin(0.02 * t + c) + 10 * rng.standard_normal(t.size) for c in range(2)], axis=1)
        cases.append(("uint8", np.clip(np.round(x8), 0, 255).astype(np.uint8), 16, [2, 32]))
        for name, data, window, ks in cases:
            path = os.path.join(tmp, name + ".wav")
            wavfile.write(path, 8000, data)
            out = os.path.join(tmp, name + "-out")
            code = run(binary, ["sweep", path, "--window", str(window), "--k", ",".join(map(str, ks)),
                                "--out", out, "--quiet"])
            check(code == 0, f"{name}: pcasweep sweep exits 0")
            if code != 0:
                continue
            d = ks[-1]
            rate, back = wavfile.read(os.path.join(out, f"{name}.k{d}.wav"))
            check(rate == 8000, f"{name}: k = d file keeps the rate (8000 Hz, read {rate})")
            check(back.dtype == data.dtype, f"{name}: k = d file keeps the sample type ({data.dtype}, read {back.dtype})")
            check(back.shape == data.shape and np.array_equal(back, data),
                  f"{name}: k = d = {d} reconstruction is sample-identical to the input "
                  f"(max |difference| {np.max(np.abs(back.astype(float) - data.astype(float))) if back.shape == data.shape else 'shape differs'})")
            with open(os.path.join(out, "sweep.csv")) as f:
                rows = {int(r["k"]): r for r in csv.DictReader(f)}
            k = ks[-2]
            _, xh = wavfile.read(os.path.join(out, f"{name}.k{k}.wav"))
            # pcasweep reads unsigned 8-bit as signed (x - 128); differences and centred sums do not
            # change, but energies do: compare in that scale.
            xo = data.astype(np.float64) - (128 if data.dtype == np.uint8 else 0)
            xr = xh.astype(np.float64) - (128 if data.dtype == np.uint8 else 0)
            xo2 = xo.reshape(len(xo), -1)
            xr2 = xr.reshape(len(xr), -1)
            want = figures(xo2, xr2)
            for key, value in want.items():
                got = float(rows[k][key])
                check(abs(got - value) <= 1e-8 * max(1.0, abs(value)),
                      f"{name}: k = {k} {key}: sweep.csv {got:.10g}, numpy on the written file {value:.10g}")
            if xo2.shape[1] > 1:
                names = {"pcm16": ["ch1", "ch2", "ch3"], "uint8": ["left", "right"]}[name]
                for c, cname in enumerate(names):
                    per = figures(xo2[:, c:c + 1], xr2[:, c:c + 1])
                    got = float(rows[k]["snr_db_" + cname])
                    check(abs(got - per["snr_db"]) <= 1e-8 * max(1.0, abs(per["snr_db"])),
                          f"{name}: k = {k} snr_db_{cname}: sweep.csv {got:.10g}, numpy {per['snr_db']:.10g}")
    finally:
        shutil.rmtree(tmp, ignore_errors=True)
    print(f"{len(failures)} failure(s)")
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
