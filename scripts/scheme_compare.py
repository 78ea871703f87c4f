#!/usr/bin/env python3
"""Power iterations against block Krylov, by passes over the data (docs/performance.md,
"Why block Krylov"). numpy only; run with Debian's /usr/bin/python3:

    /usr/bin/python3 scripts/scheme_compare.py

Matrices from scripts/bench_matrices.py (fast σ_i = e^(−i/20), slow σ_i = 1/(1+i), 20000×1024,
k = 64, p = 10; lfw faces from python3-skimage, k = 20). For each scheme and pass count it prints
the excess of the rank-k Frobenius error over the optimum and the largest relative error of the
leading eigenvalues (all k for the synthetic matrices, the leading 20 for the faces). Power
iterations: the passes that built the subspace, then one more product for the Ritz step. Block
Krylov: the passes that built the space; its Ritz step reuses the products.
"""
import numpy as np

from bench_matrices import faces, synthetic


def report(name, scheme, passes, a, v, ev, s, k, lead):
    opt = np.sqrt((s[k:] ** 2).sum())
    err = np.linalg.norm(a - (a @ v) @ v.T) / opt - 1
    rel = np.max(np.abs(ev[:lead] - s[:lead] ** 2) / s[:lead] ** 2)
    print("%-6s %-16s passes %2d  err-1 %.2e  max rel. eigenvalue error (leading %d) %.1e"
          % (name, scheme, passes, err, lead, rel))


def power(a, k, name, lead, max_passes, p=10):
    s = np.linalg.svd(a, compute_uv=False)
    rng = np.random.default_rng(5)
    q, _ = np.linalg.qr(a @ rng.standard_normal((a.shape[1], k + p)))
    passes = 1
    while passes < max_passes:
        w, _ = np.linalg.qr(a.T @ q)
        passes += 1
        _, sv, vt = np.linalg.svd(a @ w, full_matrices=False)
        report(name, "power iterations", passes, a, w @ vt.T[:, :k], sv[:k] ** 2, s, k, lead)
        q, _ = np.linalg.qr(a @ w)
        passes += 1


def krylov(a, k, name, lead, max_blocks, p=10):
    s = np.linalg.svd(a, compute_uv=False)
    rng = np.random.default_rng(5)
    ws = [np.linalg.qr(rng.standard_normal((a.shape[1], k + p)))[0]]
    ys = [a @ ws[0]]
    passes = 1
    for _ in range(max_blocks):
        kk, yy = np.hstack(ws), np.hstack(ys)
        ev, vec = np.linalg.eigh(yy.T @ yy)
        ev, vec = ev[::-1][:k], vec[:, ::-1][:, :k]
        report(name, "block Krylov", passes, a, kk @ vec, ev, s, k, lead)
        z = a.T @ ys[-1]
        for _ in range(2):
            z -= kk @ (kk.T @ z)
        w = np.linalg.qr(z)[0]
        ws.append(w)
        ys.append(a @ w)
        passes += 2


f = faces()
power(f, 20, "faces", 20, 21)
krylov(f, 20, "faces", 20, 6)
for decay in ("fast", "slow"):
    a = synthetic(20000, 1024, decay)
    power(a, 64, decay, 64, 17)
    krylov(a, 64, decay, 64, 5)
