"""The matrices the benchmarks share (scripts/bench_compare.py, scripts/scheme_compare.py).

synthetic(n, d, decay): U·diag(σ)·Vᵀ with random orthonormal U (n×r), V (d×r), r = min(n, d),
σ_i = e^(−i/20) ("fast") or 1/(1+i) ("slow"), seeded, column-centred.
faces(): the 200 lfw faces of Debian's python3-skimage as 16-bit integers (200×625), column-centred.
"""
import numpy as np


def synthetic(n, d, decay, seed=1):
    rng = np.random.default_rng(seed)
    r = min(n, d)
    u, _ = np.linalg.qr(rng.standard_normal((n, r)))
    v, _ = np.linalg.qr(rng.standard_normal((d, r)))
    i = np.arange(r)
    s = np.exp(-i / 20.0) if decay == "fast" else 1.0 / (1.0 + i)
    a = (u * s) @ v.T
    return a - a.mean(axis=0)


def faces():
    x = np.load("/usr/lib/python3/dist-packages/skimage/data/lfw_subset.npy").reshape(200, -1)
    x = np.round(x * 65535.0)
    return x - x.mean(axis=0)
