#!/usr/bin/python3
"""Eigenvalues of windowed AR(1) recordings against the Toeplitz covariance.

A stationary first-order autoregressive signal x_t = rho x_{t-1} + e_t,
e_t ~ N(0, s_e^2), has autocovariance sigma^2 rho^|k| with
sigma^2 = s_e^2 / (1 - rho^2) (textbook, e.g. Box & Jenkins, Time Series
Analysis, ch. 3; from memory). So the covariance of length-N windows is the
N x N Toeplitz matrix sigma^2 rho^|i-j|. Reference: its eigenvalues from
scipy.linalg.toeplitz + numpy.linalg.eigvalsh (Debian python3-scipy/numpy).

Sampling error (derived here, first order): for the true eigenvector v_i,
lambda_hat_i ~= v_i' S v_i, the sample mean of y_m^2 with y_m = v_i' x_m over
the M windows. The y_m are jointly Gaussian, so Cov(y_m^2, y_n^2) =
2 Cov(y_m, y_n)^2 and
    Var(lambda_hat_i) ~= (2/M) * sum_{l=-inf..inf} (v_i' C_l v_i)^2,
where C_l[a, b] = sigma^2 rho^|l N + b - a| is the covariance between a window
and the one l windows later (non-overlapping windows; C_0 is the Toeplitz
matrix, so the l = 0 term is lambda_i^2, the textbook 2 lambda^2 / M for
independent samples). Second order adds a bias (Lawley 1956, independent
normal samples): E[lambda_hat_i] - lambda_i ~= (lambda_i / M) sum_{j != i}
lambda_j / (lambda_i - lambda_j). Each eigenvalue must lie within
4 standard errors + |bias| of the reference.

The sum of the eigenvalues (the trace, N times the mean of x^2 over T = N M
samples) has Var = 2 N sigma^4 (1 + rho^2) / ((1 - rho^2) M), from
sum_k rho^(2|k|) = (1 + rho^2) / (1 - rho^2); it must lie within 4 of its
standard errors of N sigma^2.

A second, exact check: pcasweep's eigenvalues equal numpy.linalg.eigvalsh of
the sample covariance (ddof = 1) of the same windows, to 1e-9 relative.
Usage: signal_ar1_check.py PATH_TO_PCASWEEP
"""
import csv
import os
import shutil
import subprocess
import sys
import tempfile

import numpy as np
from scipy.linalg import toeplitz

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from refcommon import check, failures  # noqa: E402


def ar1(n, rho, s_e, rng):
    e = rng.standard_normal(n) * s_e
    x = np.empty(n)
    x[0] = e[0] / np.sqrt(1 - rho * rho)  # start in the stationary distribution
    for t in range(1, n):
        x[t] = rho * x[t - 1] + e[t]
    return x


def main():
    binary = sys.argv[1]
    tmp = tempfile.mkdtemp(prefix="pcasweep-ar1-")
    try:
        for rho, window, windows, seed in [(0.6, 8, 30000, 1), (0.9, 6, 30000, 2)]:
            s_e = 1.0
            sigma2 = s_e ** 2 / (1 - rho ** 2)
            rng = np.random.default_rng(seed)
            x = ar1(window * windows, rho, s_e, rng)
            path = os.path.join(tmp, f"ar1_{rho}.csv")
            with open(path, "w") as f:
                f.write("x\n")
                f.write("\n".join(repr(float(v)) for v in x))
                f.write("\n")
            out = os.path.join(tmp, f"out_{rho}")
            r = subprocess.run([binary, "sweep", path, "--window", str(window), "--k", "1", "--out", out, "--quiet"],
                               capture_output=True, text=True)
            check(r.returncode == 0, f"rho = {rho}: pcasweep sweep exits 0 {r.stderr.strip()}")
            if r.returncode != 0:
                continue
            with open(os.path.join(out, "spectrum.csv")) as f:
                ours = np.array([float(row["eigenvalue"]) for row in csv.DictReader(f)])
            # Exact: the same windows through numpy.
            X = x.reshape(windows, window)
            exact = np.sort(np.linalg.eigvalsh(np.cov(X, rowvar=False, ddof=1)))[::-1]
            rel = np.max(np.abs(ours - exact) / exact)
            check(rel <= 1e-9, f"rho = {rho}: eigenvalues equal numpy eigvalsh of the sample covariance "
                               f"(max relative difference {rel:.2e})")
            # Reference: the Toeplitz matrix sigma^2 rho^|i-j|.
            T = toeplitz(sigma2 * rho ** np.arange(window))
            lam, V = np.linalg.eigh(T)
            order = np.argsort(lam)[::-1]
            lam, V = lam[order], V[:, order]
            idx = np.arange(window)
            for i in range(window):
                v = V[:, i]
                total = lam[i] ** 2
                for l in range(1, 60):  # rho^(l N) is below 1e-16 long before l = 60
                    C = sigma2 * rho ** np.abs(l * window + idx[None, :] - idx[:, None])
                    total += 2 * (v @ C @ v) ** 2
                se = np.sqrt(2 * total / windows)
                bias = lam[i] / windows * sum(lam[j] / (lam[i] - lam[j]) for j in range(window) if j != i)
                tol = 4 * se + abs(bias)
                diff = ours[i] - lam[i]
                check(abs(diff) <= tol,
                      f"rho = {rho}, N = {window}, M = {windows}: lambda_{i + 1} ours {ours[i]:.6f}, Toeplitz "
                      f"{lam[i]:.6f}, difference {diff:+.6f} = {diff / se:+.2f} standard errors "
                      f"(se {se:.6f}, bias {bias:+.6f}, tolerance {tol:.6f})")
            check(abs(ours.sum() - window * sigma2) <= 4 * np.sqrt(2 * window * sigma2 ** 2 * (1 + rho ** 2) /
                                                                     (1 - rho ** 2) / windows) + 1e-9,
                  f"rho = {rho}: sum of eigenvalues {ours.sum():.5f} vs trace N sigma^2 = {window * sigma2:.5f}")
    finally:
        shutil.rmtree(tmp, ignore_errors=True)
    print(f"{len(failures)} failure(s)")
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
