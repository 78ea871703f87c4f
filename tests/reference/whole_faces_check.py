#!/usr/bin/env python3
"""pcasweep's whole-image layout and randomized solver, checked against scikit-learn (issue 3).

Usage: whole_faces_check.py PATH/TO/pcasweep

Data: the 200 faces (25x25, float 0..1) that Debian's python3-skimage ships as
skimage/data/lfw_subset.npy, written as 16-bit PNG files (Pillow) with samples round(65535·x)
so that pcasweep and scikit-learn see the same integers.
Checks:
  1. --layout whole --solver exact: the eigenvalues equal
     sklearn.decomposition.PCA(svd_solver="full").explained_variance_ to 1e-6 relative
     (all components carrying more than 1e-9 of the largest).
  2. --solver randomized with default settings and --k 20: the leading 20 eigenvalues
     equal the exact ones to 1e-4 relative (issue 3's target; this spectrum decays slowly).
  3. summary.json reports the randomized solve: solver name and passes; the subspace
     residual lies between the exact variance beyond rank 30 (the 30 sampled vectors can
     capture no more) and that plus 1e-3 of the trace; the variance beyond rank 20 equals
     trace minus the 20 eigenvalues and the exact tail beyond 20 to 1e-4.
  4. components/: the leading 16 components written as PNG images (mid-gray = 0).
  5. bad input: one file of another size -> exit 1 naming that file; one image only ->
     exit 2; k above min(N, d) -> exit 2; bands with a colour image -> exit 1 naming it.
  6. --solver randomized --k 20 --precision single (float32 products; N = 200 < d = 625, so
     the fused A_c·A_cᵀ sweeps cross a 512-column block and a partial one): the leading 20
     eigenvalues equal sklearn's to 1e-4 relative (the target the double default meets);
     summary.json's solver block says "precision": "single" (and "double" for the default
     run of check 2); the console says so; --precision half -> exit 2, no output folder.
"""
import csv
import json
import os
import subprocess
import sys

import numpy as np
from PIL import Image
from sklearn.decomposition import PCA

PCASWEEP = sys.argv[1]
sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from refcommon import check, failures, scratch_dir  # noqa: E402


def write_png16(path, a):
    # Pillow (Debian's python3-pil) writes mode "I;16" as a 16-bit gray PNG.
    Image.fromarray(np.ascontiguousarray(a, dtype=np.uint16), mode="I;16").save(path)


def run(args):
    return subprocess.run([PCASWEEP] + args, capture_output=True, text=True)


def read_spectrum(path):
    with open(path) as f:
        return np.array([float(r["eigenvalue"]) for r in csv.DictReader(f)])


faces = np.load("/usr/lib/python3/dist-packages/skimage/data/lfw_subset.npy")
ints = np.round(faces * 65535.0).astype(np.uint16)
tmp = scratch_dir("pcasweep-faces-")
paths = []
for i, face in enumerate(ints):
    p = os.path.join(tmp, "face%03d.png" % i)
    write_png16(p, face)
    paths.append(p)
X = ints.reshape(len(ints), -1).astype(np.float64)
reference = PCA(svd_solver="full").fit(X).explained_variance_
print("sklearn PCA(full): %d eigenvalues, largest %.6g, 20th %.6g" % (len(reference), reference[0], reference[19]))

# 1. exact
out = os.path.join(tmp, "exact")
r = run(["sweep", "--layout", "whole", "--solver", "exact", "--k", "1", "--out", out] + paths)
check(r.returncode == 0, "exact whole-layout sweep runs (exit %d) %s" % (r.returncode, r.stderr.strip()))
if r.returncode == 0:
    ev = read_spectrum(os.path.join(out, "spectrum.csv"))
    m = reference > 1e-9 * reference[0]
    rel = np.max(np.abs(ev[: len(reference)][m] - reference[m]) / reference[m])
    print("exact vs sklearn full: %d eigenvalues compared, max relative difference %.3g" % (m.sum(), rel))
    check(rel <= 1e-6, "exact eigenvalues = sklearn PCA(svd_solver='full') to 1e-6 (got %.3g)" % rel)

# 2-4. randomized, defaults
out = os.path.join(tmp, "randomized")
r = run(["sweep", "--layout", "whole", "--solver", "randomized", "--k", "20", "--out", out] + paths)
check(r.returncode == 0, "randomized whole-layout sweep runs (exit %d) %s" % (r.returncode, r.stderr.strip()))
if r.returncode == 0:
    print(r.stdout)
    ev = read_spectrum(os.path.join(out, "spectrum.csv"))
    check(len(ev) == 20, "randomized returns 20 eigenvalues (got %d)" % len(ev))
    rel = np.max(np.abs(ev[:20] - reference[:20]) / reference[:20])
    print("randomized (defaults) vs sklearn full, leading 20: max relative difference %.3g" % rel)
    check(rel <= 1e-4, "randomized leading 20 eigenvalues = exact to 1e-4 (got %.3g)" % rel)
    summary = json.load(open(os.path.join(out, "summary.json")))
    s = summary["solver"]
    check(s["name"] == "randomized" and s["passes"] >= 3, "summary.json names the randomized solver, passes %s" % s.get("passes"))
    total = reference.sum()
    tail30 = reference[30:].sum()
    check(s["subspace_residual"] >= tail30 * (1 - 1e-9) and s["subspace_residual"] <= tail30 + 1e-3 * total,
          "subspace residual %.6g between the exact tail beyond 30 (%.6g) and that + 1e-3 of the trace"
          % (s["subspace_residual"], tail30))
    beyond = s["variance_beyond_rank"]
    check(abs(beyond - (total - ev.sum())) <= 1e-9 * total,
          "variance beyond rank 20 = trace - sum of eigenvalues (%.6g vs %.6g)" % (beyond, total - ev.sum()))
    check(abs(beyond - reference[20:].sum()) <= 1e-4 * reference[20:].sum(),
          "variance beyond rank 20 = exact tail to 1e-4 (%.6g vs %.6g)" % (beyond, reference[20:].sum()))
    comps = sorted(os.listdir(os.path.join(out, "components")))
    check(len(comps) == 16 and comps[0] == "component_01.png", "16 component images written (%d)" % len(comps))

# 5. bad input
odd = os.path.join(tmp, "odd.png")
write_png16(odd, np.zeros((24, 25), np.uint16))
r = run(["spectrum", "--layout", "whole"] + paths[:5] + [odd])
check(r.returncode == 1 and "odd.png" in r.stderr, "mismatched size -> exit 1 naming odd.png: %d %s" % (r.returncode, r.stderr.strip()))
r = run(["spectrum", "--layout", "whole", paths[0]])
check(r.returncode == 2 and "at least 2" in r.stderr, "one image -> exit 2: %d %s" % (r.returncode, r.stderr.strip()))
r = run(["sweep", "--layout", "whole", "--k", "11", "--out", os.path.join(tmp, "never")] + paths[:10])
check(r.returncode == 2 and "min(N, d)" in r.stderr and not os.path.exists(os.path.join(tmp, "never")),
      "k = 11 with N = 10 -> exit 2, no output folder: %d %s" % (r.returncode, r.stderr.strip()))
rgb = os.path.join(tmp, "rgb.ppm")
with open(rgb, "wb") as f:
    f.write(b"P6\n25 25\n255\n" + bytes(25 * 25 * 3))
r = run(["spectrum", "--layout", "bands", paths[0], paths[1], rgb])
check(r.returncode == 1 and "rgb.ppm" in r.stderr, "bands with a colour image -> exit 1 naming it: %d %s" % (r.returncode, r.stderr.strip()))

# 6. randomized with single-precision (float32) products
default_summary = os.path.join(tmp, "randomized", "summary.json")
if os.path.exists(default_summary):
    p = json.load(open(default_summary))["solver"].get("precision")
    check(p == "double", "summary.json of the default randomized run says precision double (got %s)" % p)
out = os.path.join(tmp, "single")
from refcommon import sweep_extra_args  # noqa: E402  (--no-rd: the rate-distortion study is not looked at here)
r = run(["sweep", "--layout", "whole", "--solver", "randomized", "--k", "20", "--precision", "single", "--out", out]
        + sweep_extra_args(PCASWEEP) + paths)
check(r.returncode == 0, "randomized --precision single sweep runs (exit %d) %s" % (r.returncode, r.stderr.strip()))
if r.returncode == 0:
    ev = read_spectrum(os.path.join(out, "spectrum.csv"))
    check(len(ev) == 20, "single: randomized returns 20 eigenvalues (got %d)" % len(ev))
    rel = np.max(np.abs(ev[:20] - reference[:20]) / reference[:20])
    print("randomized --precision single vs sklearn full, leading 20: max relative difference %.3g" % rel)
    check(rel <= 1e-4, "single: leading 20 eigenvalues = sklearn PCA(svd_solver='full') to 1e-4 (got %.3g)" % rel)
    s = json.load(open(os.path.join(out, "summary.json")))["solver"]
    check(s.get("precision") == "single" and s.get("name") == "randomized",
          "single: summary.json solver block says randomized, precision single (got %s, %s)" % (s.get("name"), s.get("precision")))
    check("single-precision products" in r.stdout, "single: the console names single-precision products")
r = run(["sweep", "--layout", "whole", "--precision", "half", "--out", os.path.join(tmp, "never-half")] + paths[:10])
check(r.returncode == 2 and "--precision" in r.stderr and not os.path.exists(os.path.join(tmp, "never-half")),
      "--precision half -> exit 2 naming the option, no output folder: %d %s" % (r.returncode, r.stderr.strip()))

if failures:
    print("FAILED: %d check(s)" % len(failures))
    sys.exit(1)
print("all checks passed")
