#!/usr/bin/env python3
"""report.html in a real browser: headless Chromium (Debian package `chromium`) (issue 7).

Usage: report_browser_check.py PATH/TO/pcasweep

Runs `pcasweep batch` on images cut from scikit-image's sample data (camera.png,
astronaut.png; Debian python3-skimage) plus one image larger than the viewer's crop
(192×192: its viewer shows a 1:1 crop), and a second batch with 16×16 patches (d = 256,
above the live viewer's d ≤ 192, so its sliders step between precomputed crops), opens
each report.html#selftest in headless Chromium with --dump-dom, and checks:
  - the page's self-test ran and reports no JavaScript error, no CSP violation and no
    resource fetched over any URL (performance resource entries = 0); Chromium's own
    console log (--enable-logging=stderr) shows no console error and no blocked request;
  - moving each slider changes the displayed k, the image (checksum) and the PSNR;
  - the PSNR shown at each swept k equals, to 0.01 dB, batch.csv's for a viewer showing
    the whole image, and for a viewer showing a crop the PSNR that
    skimage.metrics.peak_signal_noise_ratio gives on the same rectangle of the original
    and of `pcasweep sweep --no-codec`'s written reconstruction at that k (the live
    viewer recomputes it in JavaScript from the embedded float32 basis and coefficients,
    rounded and clipped; the stepped viewer shows precomputed values).
Saves a screenshot to <build folder>/test-artifacts/report.png.
"""
import csv
import json
import os
import re
import shutil
import subprocess
import sys

import numpy as np
from skimage import data

PCASWEEP = os.path.abspath(sys.argv[1])
sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from refcommon import check, failures, scratch_dir  # noqa: E402


def write_pnm(path, a):
    a = np.asarray(a, dtype=np.uint8)
    magic = b"P5" if a.ndim == 2 else b"P6"
    with open(path, "wb") as f:
        f.write(magic + b"\n%d %d\n255\n" % (a.shape[1], a.shape[0]))
        f.write(a.tobytes())


chromium = shutil.which("chromium") or shutil.which("chromium-browser")
if not chromium:
    print("FAIL chromium is not installed (scripts/deps installs the Debian package `chromium`)")
    sys.exit(1)

tmp = scratch_dir("pcasweep-report-check-")
images = os.path.join(tmp, "images")
os.makedirs(images)
cam, astro = data.camera(), data.astronaut()
write_pnm(os.path.join(images, "camera_crop.pgm"), cam[100:228, 150:310])        # 160x128 gray, live
write_pnm(os.path.join(images, "astronaut_crop.ppm"), astro[0:96, 180:308])     # 128x96 RGB, live (d = 192)
write_pnm(os.path.join(images, "camera_large.pgm"), np.tile(cam, (2, 2))[:520, :600])  # beyond 512x512: stepped
from skimage.metrics import peak_signal_noise_ratio  # noqa: E402

KS = [1, 2, 4, 8, 16, 32, 64]


def read_pnm(path):
    with open(path, "rb") as f:
        raw = f.read()
    parts = raw.split(maxsplit=4)
    w, h = int(parts[1]), int(parts[2])
    pix = np.frombuffer(parts[4], dtype=np.uint8)
    return pix.reshape(h, w) if parts[0] == b"P5" else pix.reshape(h, w, 3)


def read_png(path):
    from PIL import Image  # Debian python3-pil (pulled in by python3-skimage)
    return np.asarray(Image.open(path))


def run_report(name, extra):
    """Batch over `images`, the page's self-test in Chromium; returns the viewers' results."""
    out = os.path.join(tmp, name)
    r = subprocess.run([PCASWEEP, "batch", images, "--out", out, "-q", "--k", ",".join(map(str, KS)),
                        "--target-psnr", "30"] + extra, capture_output=True, text=True)
    check(r.returncode == 0, f"{name}: pcasweep batch exit {r.returncode} {r.stderr.strip()}")
    report = os.path.join(out, "report.html")
    html = open(report, encoding="utf-8").read()
    check(not re.search(r'(src|href)\s*=\s*"(https?:)?//', html), f"{name}: no external src/href in the page")
    check("Content-Security-Policy" in html and "default-src 'none'" in html, f"{name}: CSP meta tag forbids every fetch")
    check("not a substitute for originals in medical, forensic or legal" in html, f"{name}: footer caution present")
    data = json.loads(re.search(r'<script id="viewer-data" type="application/json">(.*?)</script>', html, re.S)
                      .group(1).replace("<\\/", "</"))
    url = "file://" + report + "#selftest"
    profile = scratch_dir("chromium-profile-")
    p = subprocess.run([chromium] + flags + ["--user-data-dir=" + profile, "--virtual-time-budget=20000", "--dump-dom", url],
                       capture_output=True, text=True, timeout=120)
    m = re.search(r'<pre id="selftest-result"[^>]*>(.*?)</pre>', p.stdout, re.S)
    check(m is not None and m.group(1).strip() != "", f"{name}: the self-test wrote its result into the page")
    if not m or not m.group(1).strip():
        print(p.stderr[-3000:])
        sys.exit(1)
    res = json.loads(m.group(1).replace("&quot;", '"').replace("&amp;", "&"))
    # The page writes nothing to the console, so any console line (an error, a blocked request:
    # "... violates the following Content Security Policy directive ...") is a failure.
    console_lines = [l for l in p.stderr.splitlines() if ":CONSOLE" in l]
    check(not console_lines, f"{name}: no console messages in Chromium's log ({console_lines[:3]})")
    check(res["errors"] == [] and res["csp_violations"] == 0, f"{name}: no JavaScript errors or CSP violations: {res['errors']}")
    check(res["resources"] == 0, f"{name}: no resource requests (performance entries: {res['resources']})")
    rows = list(csv.DictReader(open(os.path.join(out, "batch.csv"))))
    psnr = {(row["file"], int(row["k"])): float(row["psnr_db"]) for row in rows}
    worst = 0.0
    for v, meta in zip(res["viewers"], data):
        base = os.path.basename(v["file"])
        steps = v["steps"]
        ks = [s["k_shown"] for s in steps]
        sums = [s["checksum"] for s in steps]
        shown = [s["psnr_shown"] for s in steps]
        check(len(set(ks)) == len(ks) > 1, f"{name} {base}: slider moves k through {ks}")
        check(len(set(sums)) == len(sums), f"{name} {base}: the image changes with k")
        check(len(set(shown)) == len(shown), f"{name} {base}: the PSNR readout changes with k")
        whole = meta.get("whole_image", True) if meta["live"] else None
        crop = None
        if not meta["live"] or not whole:
            # The crop's place: from the live viewer's data, or (stepped) from the page's heading.
            head = re.search(re.escape(v["file"]) + r" \(1:1 crop of (\d+)×(\d+) pixels at x = (\d+), y = (\d+)\)", html)
            if head:
                cw, ch, cx, cy = map(int, head.groups())
                crop = (cx, cy, cw, ch)
        ref_dir = None
        if crop is not None:
            ref_dir = os.path.join(tmp, name + "-sweep-" + base)
            r = subprocess.run([PCASWEEP, "sweep", v["file"], "--out", ref_dir, "-q", "--no-codec", "--no-rd",
                                "--k", ",".join(map(str, sorted(set(ks))))] + extra, capture_output=True, text=True)
            check(r.returncode == 0, f"{name} {base}: reference sweep ran ({r.stderr.strip()[:200]})")
            original = read_pnm(v["file"])
        for s in steps:
            k = s["k_shown"]
            if crop is None:
                ref = psnr[(v["file"], k)]
            else:
                cx, cy, cw, ch = crop
                written = read_png(os.path.join(ref_dir, os.path.splitext(base)[0] + f".k{k}.png"))
                a = original[cy:cy + ch, cx:cx + cw]
                b = written[cy:cy + ch, cx:cx + cw]
                ref = float("inf") if np.array_equal(a, b) else peak_signal_noise_ratio(a, b, data_range=255)
            if s["psnr_shown"].startswith("∞"):
                ok = ref == float("inf")
            else:
                ok = abs(float(s["psnr_shown"]) - ref) <= 0.01
                worst = max(worst, abs(float(s["psnr_shown"]) - ref))
            if not ok:
                check(False, f"{name} {v['file']} k = {k}: shown {s['psnr_shown']} dB, reference {ref:.4f} dB")
    check(worst <= 0.01, f"{name}: PSNR shown equals the reference to 0.01 dB at every k visited (largest difference "
                         f"{worst:.4f} dB; readout has 2 decimals)")
    size = os.path.getsize(report)
    check(size <= 20 * 1024 * 1024, f"{name}: report.html is {size / 1e6:.2f} MB (at most 20 MB)")
    return res, report


flags = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking",
         "--disable-component-update", "--disable-sync", "--no-first-run", "--disable-extensions",
         "--enable-logging=stderr", "--v=0"]
res8, report = run_report("out", [])
live = [v for v in res8["viewers"] if v["live"]]
check(len(live) >= 3, f"8x8 patches: {len(live)} live viewer(s), one over a crop of camera_large")
res16, _ = run_report("out16", ["--patch", "16"])
stepped = [v for v in res16["viewers"] if not v["live"]]
check(len(stepped) >= 1, f"16x16 patches (d = 256): {len(stepped)} stepped viewer(s)")

artefacts = os.path.join(os.path.dirname(PCASWEEP), "test-artifacts")
os.makedirs(artefacts, exist_ok=True)
shot = os.path.join(artefacts, "report.png")
subprocess.run([chromium] + flags + ["--user-data-dir=" + scratch_dir("chromium-profile-"),
                                     "--window-size=1280,9000", "--hide-scrollbars", "--virtual-time-budget=20000",
                                     "--screenshot=" + shot, "file://" + report],
               capture_output=True, text=True, timeout=120)
check(os.path.exists(shot) and os.path.getsize(shot) > 10000, f"screenshot saved: {shot}")
print(f"{len(failures)} failed" if failures else "all report checks passed")
sys.exit(1 if failures else 0)
