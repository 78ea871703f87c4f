#!/usr/bin/env python3
"""The comparison behind scripts/bench (see that script for usage).

Every matrix is written once to a temporary .npy that pcasweep-bench and numpy both read.
Matrices are column-centred first, so that our solver (which always removes the mean) and
randomized_svd / numpy.linalg.svd (which do not) solve the same problem.
Per case it prints seconds (median of R), GFLOP/s (nominal flop counts, stated below), the
Frobenius error of projecting on the returned k components relative to the optimum from the
full SVD, and the ratios ours/sklearn and ours/two-pass floor (2 GEMMs of N×d by d×(k+p) at
the best rate pcasweep-bench measured for that shape in the precision of the run: double, or
float32 for our single-precision rows). "accurate" says whether our error/optimum is within
sklearn's + 0.001. A second sklearn row runs randomized_svd on a float32 copy of the matrix
(its products then run in float32 too), for comparison with our single-precision rows.
Flop counts: randomized = passes · 2·N·d·l (l = k+10; sklearn passes = 2·n_iter+2, n_iter 7 when
k < 0.1·min(N,d), else 4); exact = N·d² (scatter) + 9·d³ (eigensolver, nominal);
numpy svd = 4·m·n² + 22·n³ (Golub & Van Loan's R-SVD count, m = max(N,d), n = min(N,d)).
"""
import argparse
import json
import os
import resource
import shutil
import subprocess
import sys
import tempfile
import time

import numpy as np
import threadpoolctl
from sklearn.utils.extmath import randomized_svd

from bench_matrices import faces, synthetic

ap = argparse.ArgumentParser()
ap.add_argument("--bench", required=True)
ap.add_argument("--repeat", type=int, default=5)
ap.add_argument("--quick", action="store_true")
opt = ap.parse_args()
benches = opt.bench.split(",")
R = opt.repeat
tmp = tempfile.mkdtemp(prefix="pcasweep-bench-")


def median_time(f):
    ts = []
    for _ in range(R):
        t = time.perf_counter()
        out = f()
        ts.append(time.perf_counter() - t)
    return float(np.median(ts)), out


def rel_error(a, v, opt_err):
    return np.linalg.norm(a - (a @ v) @ v.T) / opt_err


def bench_json(exe, args):
    r = subprocess.run([exe] + args, capture_output=True, text=True)
    if r.returncode != 0:
        raise SystemExit("pcasweep-bench failed: " + r.stderr)
    return json.loads(r.stdout.strip().splitlines()[-1])


print("numpy/OpenBLAS:", [(d["internal_api"], d.get("version"), d.get("architecture"), d["num_threads"])
                          for d in threadpoolctl.threadpool_info()])
cases = []
if opt.quick:
    cases = [("fast", 20000, 1024, [64]), ("slow", 20000, 1024, [64]), ("faces", 200, 625, [20])]
else:
    cases = [("fast", 20000, 1024, [16, 64, 256]), ("slow", 20000, 1024, [16, 64, 256]),
             ("fast", 2000, 16384, [16, 64]), ("slow", 2000, 16384, [16, 64]), ("faces", 200, 625, [20])]

gemm_cache = {}


def floor_rate(n, d, l):
    """Best GEMM rate (GFLOP/s) for the shape, per precision: {"double": .., "single": ..}."""
    key = (n, d, l)
    if key not in gemm_cache:
        best = {"double": 0.0, "single": 0.0}
        for exe in benches:
            g = bench_json(exe, ["gemm", "--n", str(n), "--d", str(d), "--l", str(l), "--repeat", str(R)])
            best["double"] = max(best["double"], g["double"]["a_times_omega_gflops"], g["double"]["at_times_y_gflops"])
            best["single"] = max(best["single"], g["float"]["a_times_omega_gflops"], g["float"]["at_times_y_gflops"])
            print("  gemm %s %dx%d by %dx%d: double %.1f / %.1f GFLOP/s (A·Ω / Aᵀ·Y), float %.1f / %.1f"
                  % (g["gemm"], n, d, d, l, g["double"]["a_times_omega_gflops"], g["double"]["at_times_y_gflops"],
                     g["float"]["a_times_omega_gflops"], g["float"]["at_times_y_gflops"]))
        gemm_cache[key] = best
    return gemm_cache[key]


rows = []
for decay, n, d, ks in cases:
    a = faces() if decay == "faces" else synthetic(n, d, decay)
    name = "lfw faces (whole)" if decay == "faces" else "%s %dx%d" % (decay, n, d)
    name += " [data %.0f MiB]" % (a.nbytes / 2 ** 20)
    path = os.path.join(tmp, "a.npy")
    np.save(path, np.asfortranarray(a))
    t_np, (u, s, vt) = median_time(lambda: np.linalg.svd(a, full_matrices=False))
    m_, n_ = max(n, d), min(n, d)
    rows.append((name, "-", "numpy.linalg.svd", t_np, (4 * m_ * n_ ** 2 + 22 * n_ ** 3) / t_np / 1e9, 1.0, None, None, None,
                 None))
    print("%s: numpy svd %.3f s" % (name, t_np), flush=True)
    for k in ks:
        opt_err = np.sqrt(np.sum(s[k:] ** 2))
        l = k + 10
        n_iter = 7 if k < 0.1 * min(n, d) else 4
        t_sk, (_, _, vt_sk) = median_time(lambda: randomized_svd(a, k, random_state=0))
        e_sk = rel_error(a, vt_sk.T, opt_err)
        flops_sk = (2 * n_iter + 2) * 2 * n * d * l
        rows.append((name, k, "sklearn randomized_svd", t_sk, flops_sk / t_sk / 1e9, e_sk, None, None, None, None))
        a32 = a.astype(np.float32)
        t_sk32, (_, _, vt_sk32) = median_time(lambda: randomized_svd(a32, k, random_state=0))
        e_sk32 = rel_error(a, vt_sk32.T.astype(np.float64), opt_err)
        del a32
        rows.append((name, k, "sklearn randomized_svd (float32 input)", t_sk32, flops_sk / t_sk32 / 1e9, e_sk32,
                     None, None, None, None))
        rate = floor_rate(n, d, l)
        for exe in benches:
            for precision in ("double", "single"):
                comp = os.path.join(tmp, "v.npy")
                j = bench_json(exe, ["solve", path, "--solver", "randomized", "--k", str(k), "--repeat", str(R),
                                     "--precision", precision, "--components", comp])
                e = rel_error(a, np.load(comp), opt_err)
                t = j["seconds_median"]
                floor = 2 * 2 * n * d * l / (rate[precision] * 1e9)
                label = "ours randomized (%s, %s, %d passes)" % (j["gemm"], precision, j["passes"])
                if not j.get("precision_suffices", True):
                    label += " [beyond float32: solve(X) and the CLI re-solve in double]"
                rows.append((name, k, label, t,
                             j["product_flops"] / t / 1e9, e, t_sk / t, t / floor, j["peak_rss_kb"],
                             e <= e_sk + 0.001))
                print("  k=%d ours %s %s %.3f s err %.6f, sklearn %.3f s err %.6f"
                      % (k, j["gemm"], precision, t, e, t_sk, e_sk), flush=True)
        if d <= 2048:
            comp = os.path.join(tmp, "v.npy")
            j = bench_json(benches[0], ["solve", path, "--solver", "exact", "--k", str(k), "--repeat", str(R),
                                        "--components", comp])
            e = rel_error(a, np.load(comp), opt_err)
            t = j["seconds_median"]
            rows.append((name, k, "ours exact (%s)" % j["gemm"], t, (n * d * d + 9 * d ** 3) / t / 1e9, e, t_sk / t,
                         None, j["peak_rss_kb"], e <= e_sk + 0.001))

print()
print("| matrix | k | solver | seconds | GFLOP/s | error/optimum | accurate | sklearn/ours | ours/floor | peak RSS MiB |")
print("|---|---|---|---|---|---|---|---|---|---|")
for name, k, solver, t, gf, e, sp, fl, rss, ok in rows:
    print("| %s | %s | %s | %.3f | %.1f | %.6f | %s | %s | %s | %s |" % (
        name, k, solver, t, gf, e, "" if ok is None else ("yes" if ok else "NO"), "%.2f" % sp if sp else "",
        "%.1f" % fl if fl else "", "%.0f" % (rss / 1024) if rss else ""))
print()
print("python peak RSS: %.0f MiB" % (resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024))
shutil.rmtree(tmp, ignore_errors=True)
