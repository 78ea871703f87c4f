#!/usr/bin/env python3
"""pcasweep batch, checked against numpy (issue 7).

Usage: batch_check.py PATH/TO/pcasweep

Checks, each against something outside pcasweep:
  1. failures: a batch with one corrupt file among good ones completes, names exactly
     that file in failures.csv and on stderr, exits 1; the good files alone exit 0.
  2. aggregate.csv: min / 5th percentile / median / mean per k equal numpy's
     (numpy.percentile, default "linear" method) computed from batch.csv.
  3. recommendation: a constructed batch of files of differing detail (file i is
     exactly of patch-rank r_i): the k in summary.json equals the smallest k found by an
     exhaustive numpy computation (own PCA per file with numpy.linalg.eigh, reconstruct
     at every swept k, round half away from zero, clip, PSNR), and the failing files are
     those numpy finds below the target, worst first.
  4. shared basis: training and held-out subsets are disjoint and cover the batch; the
     held-out rows of aggregate.csv are computed from held-out files only; a held-out
     file's PSNR equals numpy's reconstruction with a basis learned (numpy.linalg.eigh)
     from the training files' pooled patches only.
  5. streaming: peak RSS (ru_maxrss of the child, from os.wait4) of a batch of 200
     generated images stays within a bound set from a one-file batch's footprint.
  6. demo: its batch over the constructed files recommends the k numpy finds for batch's
     default goal (40 dB PSNR in 95 % of the files).
Images are written as PGM (a plain binary format the reader supports) by this script.
"""
import csv
import json
import os
import subprocess
import sys
import tempfile

import numpy as np

PCASWEEP = sys.argv[1]
sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from refcommon import check, failures, scratch_dir  # noqa: E402


def write_pgm(path, a):
    a = np.asarray(a, dtype=np.uint8)
    with open(path, "wb") as f:
        f.write(b"P5\n%d %d\n255\n" % (a.shape[1], a.shape[0]))
        f.write(a.tobytes())


def run(args, **kw):
    return subprocess.run([PCASWEEP] + args, capture_output=True, text=True, **kw)


def read_csv(path):
    with open(path, newline="") as f:
        return list(csv.DictReader(f))


def num(s):
    return float(s) if s not in ("", None) else float("nan")


def patches(img, p=8):
    h, w = img.shape
    return img.reshape(h // p, p, w // p, p).transpose(0, 2, 1, 3).reshape(-1, p * p).astype(float)


def unpatch(X, h, w, p=8):
    return X.reshape(h // p, w // p, p, p).transpose(0, 2, 1, 3).reshape(h, w)


def pca(X):
    mu = X.mean(axis=0)
    Xc = X - mu
    vals, vecs = np.linalg.eigh(Xc.T @ Xc / (len(X) - 1))
    order = np.argsort(vals)[::-1]
    return mu, vecs[:, order]


def psnr_at(img, mu, V, k):
    X = patches(img)
    C = (X - mu) @ V[:, :k]
    Xh = C @ V[:, :k].T + mu
    out = unpatch(Xh, *img.shape)
    out = np.clip(np.sign(out) * np.floor(np.abs(out) + 0.5), 0, 255)  # round half away from zero, clip
    mse = np.mean((img.astype(float) - out) ** 2)
    return float("inf") if mse == 0 else 10 * np.log10(255.0 ** 2 / mse)


def low_rank_image(rng, rank, h=64, w=64):
    """An image whose 8x8 patches lie in a rank-`rank` affine subspace, kept well inside 0..255."""
    n = (h // 8) * (w // 8)
    basis = np.linalg.qr(rng.standard_normal((64, 64)))[0][:, :rank]
    coef = rng.standard_normal((n, rank)) * np.linspace(30, 8, rank)
    X = 128 + coef @ basis.T
    X = np.clip(np.round(X), 0, 255)
    return unpatch(X, h, w).astype(np.uint8)


tmp = scratch_dir("pcasweep-batch-check-")
rng = np.random.default_rng(7)

# ---- 1. failure handling -------------------------------------------------------------
good = os.path.join(tmp, "good")
os.makedirs(good)
for i in range(4):
    write_pgm(os.path.join(good, f"g{i}.pgm"), rng.integers(0, 256, (32, 40)))
mixed = os.path.join(tmp, "mixed")
os.makedirs(mixed)
for i in range(4):
    write_pgm(os.path.join(mixed, f"g{i}.pgm"), rng.integers(0, 256, (32, 40)))
corrupt = os.path.join(mixed, "broken.png")
with open(corrupt, "wb") as f:
    f.write(b"\x89PNG\r\n\x1a\n" + bytes(range(200)))  # PNG signature, then no valid chunk
with open(os.path.join(mixed, "readme.txt"), "w") as f:
    f.write("not an image\n")
r = run(["batch", mixed, "--out", os.path.join(tmp, "o1"), "-q", "--no-report"])
rows = read_csv(os.path.join(tmp, "o1", "failures.csv"))
check(r.returncode == 1, f"one corrupt file among 4 good: exit code {r.returncode} (want 1)")
check([x["file"] for x in rows] == [corrupt], f"failures.csv names exactly the corrupt file: {rows}")
check(corrupt in r.stderr, "stderr names the corrupt file")
summary = json.load(open(os.path.join(tmp, "o1", "summary.json")))
check(summary["inputs"]["swept"] == 4 and summary["inputs"]["files"] == 5,
      f"4 of 5 files swept: {summary['inputs']['swept']} of {summary['inputs']['files']}")
check(any(s["file"].endswith("readme.txt") for s in summary["inputs"]["skipped"]), "the .txt file is noted as skipped")
r = run(["batch", good, "--out", os.path.join(tmp, "o2"), "-q", "--no-report"])
check(r.returncode == 0, f"only good files: exit code {r.returncode} (want 0)")

# ---- 2 and 3. aggregates against numpy; recommendation against an exhaustive check --
detail = os.path.join(tmp, "detail")
os.makedirs(detail)
ranks = [2, 3, 5, 6, 9, 12, 14, 20, 24, 30]  # differing detail
images = {}
for i, rk in enumerate(ranks):
    img = low_rank_image(rng, rk)
    path = os.path.join(detail, f"d{i:02d}.pgm")
    write_pgm(path, img)
    images[path] = img
ks = [1, 2, 4, 6, 8, 10, 12, 16, 20, 24, 28, 32, 48, 64]
target, coverage = 45.0, 0.8
out = os.path.join(tmp, "o3")
r = run(["batch", detail, "--out", out, "-q", "--no-report", "--k", ",".join(map(str, ks)),
         "--target-psnr", str(target), "--coverage", str(coverage * 100)])
check(r.returncode == 0, f"constructed batch runs: exit {r.returncode} {r.stderr.strip()}")
batch = read_csv(os.path.join(out, "batch.csv"))
agg = read_csv(os.path.join(out, "aggregate.csv"))
summary = json.load(open(os.path.join(out, "summary.json")))
worst = 0.0
for a in agg:
    k = int(a["k"])
    v = np.array([num(b["psnr_db"]) for b in batch if int(b["k"]) == k])
    fin = v[np.isfinite(v)]
    if len(fin) != len(v):
        continue  # numpy's interpolation with +inf is not what we compare here
    for stat, ref in (("min", v.min()), ("p5", np.percentile(v, 5)), ("median", np.percentile(v, 50)),
                      ("mean", v.mean())):
        worst = max(worst, abs(num(a["psnr_db_" + stat]) - ref))
check(worst < 1e-6, f"aggregate.csv PSNR min/p5/median/mean equal numpy.percentile/mean from batch.csv "
                    f"(largest difference {worst:.2e} dB)")
# exhaustive: own PCA per file, every k
table = {}
for path, img in images.items():
    mu, V = pca(patches(img))
    table[path] = [psnr_at(img, mu, V, k) for k in ks]
max_diff = max(abs(num(b["psnr_db"]) - table[b["file"]][ks.index(int(b["k"]))])
               for b in batch if np.isfinite(num(b["psnr_db"])))
check(max_diff < 1e-3, f"batch.csv PSNR equals numpy's own reconstruction (largest difference {max_diff:.2e} dB)")
want_k = None
for j, k in enumerate(ks):
    share = np.mean([table[p][j] >= target for p in images])
    if share >= coverage - 1e-12:
        want_k = k
        break
rec = summary["recommendation"]
check(rec["found"] and rec["k"] == want_k,
      f"recommended k = {rec.get('k')} equals the exhaustive search's k = {want_k} "
      f"(target {target} dB for {coverage:.0%} of {len(images)} files)")
j = ks.index(want_k)
want_failing = sorted([p for p in images if table[p][j] < target], key=lambda p: table[p][j])
got_failing = [f["file"] for f in rec["failing"]]
check(got_failing == want_failing, f"failing files worst first: {len(got_failing)} listed, numpy finds {len(want_failing)}")

# ---- 4. shared basis: held-out quality on files outside the training subset ---------
out = os.path.join(tmp, "o4")
r = run(["batch", detail, "--out", out, "-q", "--no-report", "--basis", "shared", "--train-fraction", "0.3",
         "--seed", "11", "--k", "4,8,16,32"])
check(r.returncode == 0, f"shared basis run: exit {r.returncode} {r.stderr.strip()}")
summary = json.load(open(os.path.join(out, "summary.json")))
batch = read_csv(os.path.join(out, "batch.csv"))
train = set(summary["basis"]["training_files"])
held = {f["file"] for f in summary["files"] if f.get("subset") == "held_out"}
check(len(train) == 3 and not (train & held) and train | held == set(images),
      f"split: {len(train)} training, {len(held)} held out, disjoint, covering all {len(images)} files")
check(all((b["subset"] == "training") == (b["file"] in train) for b in batch), "batch.csv subset column matches the split")
agg = read_csv(os.path.join(out, "aggregate.csv"))
ok_held = True
for a in (a for a in agg if a["subset"] == "held_out"):
    v = [num(b["psnr_db"]) for b in batch if b["file"] in held and int(b["k"]) == int(a["k"])]
    ok_held &= int(a["files"]) == len(held) and abs(num(a["psnr_db_mean"]) - np.mean(v)) < 1e-6
check(ok_held, "aggregate.csv held_out rows are computed from the held-out files only")
Xtrain = np.vstack([patches(images[p]) for p in sorted(train)])
mu, V = pca(Xtrain)
diffs = []
for b in batch:
    if b["file"] in held:
        ref = psnr_at(images[b["file"]], mu, V, int(b["k"]))
        diffs.append(abs(num(b["psnr_db"]) - ref))
check(max(diffs) < 1e-3, f"held-out PSNR equals numpy with a basis from the training files only "
                         f"({len(diffs)} values, largest difference {max(diffs):.2e} dB)")
saving = summary["basis"]["saving"][0]
check(saving["values_saved_by_sharing"] == (saving["k"] * 64 + 64) * (len(images) - 1),
      f"values saved by storing the basis once at k = {saving['k']}: {saving['values_saved_by_sharing']}")

# ---- 5. streaming: memory does not grow with the number of files -------------------
many = os.path.join(tmp, "many")
os.makedirs(many)
base = rng.integers(0, 256, (256, 256)).astype(np.uint8)
for i in range(200):
    write_pgm(os.path.join(many, f"m{i:03d}.pgm"), np.roll(base, i, axis=1))
one = os.path.join(tmp, "one")
os.makedirs(one)
write_pgm(os.path.join(one, "m000.pgm"), base)


def peak_rss_kib(args):
    """Peak RSS of pcasweep, in KiB: ru_maxrss from wait4(2) in GNU time (Debian package `time`).

    Not os.wait4 from here: a child forked from this Python process keeps Python's own
    high-water mark in its ru_maxrss across exec, which would hide pcasweep's figure."""
    fd, report = tempfile.mkstemp(suffix=".rss")
    os.close(fd)
    r = subprocess.run(["/usr/bin/time", "-f", "%M", "-o", report, PCASWEEP] + args,
                       stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    return r.returncode, int(open(report).read().split()[-1])


common = ["-q", "--no-report", "--threads", "2"]
if not os.path.exists("/usr/bin/time"):
    check(False, "/usr/bin/time (Debian package `time`, in scripts/deps) is needed to measure peak RSS")
    sys.exit(1)
rc0, rss_idle = peak_rss_kib(["--version"])
rc1, rss1 = peak_rss_kib(["batch", one, "--out", os.path.join(tmp, "o5a")] + common)
rc200, rss200 = peak_rss_kib(["batch", many, "--out", os.path.join(tmp, "o5b")] + common)
one_file = max(rss1 - rss_idle, 1024)
# Bound: two files in flight at once (2 threads) plus the per-file tables (a few KiB each)
# and allocator slack: 3 one-file footprints + 16 MiB. Keeping every X (512 KiB each)
# and image would add over 100 MiB for 200 files.
bound = rss1 + 3 * one_file + 16 * 1024
print(f"     peak RSS: idle {rss_idle} KiB, 1 file {rss1} KiB (footprint {one_file} KiB), 200 files {rss200} KiB, "
      f"bound {bound} KiB")
check(rc1 == 0 and rc200 == 0, "both streaming runs succeed")
check(rss200 <= bound, f"200-file batch peak RSS {rss200} KiB <= {bound} KiB")

# ---- 6. demo's batch recommends with batch's default goal (40 dB for 95 % of files) --
# The same constructed files as a samples folder: the recommendation in demo's
# batch/summary.json equals the smallest default k (1, 2, 4, ... 64) at which numpy's own
# reconstruction reaches 40 dB in at least 95 % of the files.
out6 = os.path.join(tmp, "o6")
r = run(["demo", "--samples", detail, "--out", out6])
check(r.returncode == 0, f"demo on the constructed files runs: exit {r.returncode} {r.stderr.strip()}")
default_ks = [1, 2, 4, 8, 16, 32, 64]
want_k = None
for k in default_ks:
    share = np.mean([psnr_at(img, *pca(patches(img)), k) >= 40.0 for img in images.values()])
    if share >= 0.95 - 1e-12:
        want_k = k
        break
rec6 = json.load(open(os.path.join(out6, "batch", "summary.json")))["recommendation"]
check(rec6["found"] and rec6["k"] == want_k,
      f"demo's batch recommends k = {rec6.get('k')}, numpy's smallest k at 40 dB for 95 % is {want_k}")

print(f"{len(failures)} failed" if failures else "all batch checks passed")
sys.exit(1 if failures else 0)
