#!/usr/bin/env python3
"""report.html in a real browser: headless Chromium (Debian package `chromium`) (issue 7).

Usage: report_browser_check.py PATH/TO/pcasweep

Runs `pcasweep batch` on images cut from scikit-image's sample data (camera.png,
astronaut.png; Debian python3-skimage) plus one image larger than the live viewer's
limit, opens report.html#selftest in headless Chromium with --dump-dom, and checks:
  - the page's self-test ran and reports no JavaScript error, no CSP violation and no
    resource fetched over any URL (performance resource entries = 0); Chromium's own
    console log (--enable-logging=stderr) shows no console error and no blocked request;
  - moving each slider changes the displayed k, the image (checksum) and the PSNR;
  - the PSNR shown at each swept k equals batch.csv's for that file to 0.01 dB (the live
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
out = os.path.join(tmp, "out")
r = subprocess.run([PCASWEEP, "batch", images, "--out", out, "-q", "--k", "1,2,4,8,16,32,64",
                    "--target-psnr", "30"], capture_output=True, text=True)
check(r.returncode == 0, f"pcasweep batch exit {r.returncode} {r.stderr.strip()}")
report = os.path.join(out, "report.html")
html = open(report, encoding="utf-8").read()
check(not re.search(r'(src|href)\s*=\s*"(https?:)?//', html), "no external src/href in the page")
check("Content-Security-Policy" in html and "default-src 'none'" in html, "CSP meta tag forbids every fetch")
check("not a substitute for originals in medical, forensic or legal" in html, "footer caution present")

flags = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking",
         "--disable-component-update", "--disable-sync", "--no-first-run", "--disable-extensions",
         "--enable-logging=stderr", "--v=0"]
url = "file://" + report + "#selftest"
profile = scratch_dir("chromium-profile-")
p = subprocess.run([chromium] + flags + ["--user-data-dir=" + profile, "--virtual-time-budget=20000", "--dump-dom", url],
                   capture_output=True, text=True, timeout=120)
m = re.search(r'<pre id="selftest-result"[^>]*>(.*?)</pre>', p.stdout, re.S)
check(m is not None and m.group(1).strip() != "", "the self-test wrote its result into the page")
if not m or not m.group(1).strip():
    print(p.stderr[-3000:])
    sys.exit(1)
res = json.loads(m.group(1).replace("&quot;", '"').replace("&amp;", "&"))
# The page writes nothing to the console, so any console line (an error, a blocked request:
# "... violates the following Content Security Policy directive ...") is a failure.
console_lines = [l for l in p.stderr.splitlines() if ":CONSOLE" in l]
check(not console_lines, f"no console messages in Chromium's log ({console_lines[:3]})")
check(res["errors"] == [] and res["csp_violations"] == 0, f"no JavaScript errors or CSP violations: {res['errors']}")
check(res["resources"] == 0, f"no resource requests (performance entries: {res['resources']})")

rows = list(csv.DictReader(open(os.path.join(out, "batch.csv"))))
psnr = {(row["file"], int(row["k"])): float(row["psnr_db"]) for row in rows}
live = [v for v in res["viewers"] if v["live"]]
stepped = [v for v in res["viewers"] if not v["live"]]
check(len(live) >= 2 and len(stepped) >= 1, f"{len(live)} live and {len(stepped)} stepped viewer(s)")
worst = 0.0
for v in res["viewers"]:
    steps = v["steps"]
    ks = [s["k_shown"] for s in steps]
    sums = [s["checksum"] for s in steps]
    shown = [s["psnr_shown"] for s in steps]
    check(len(set(ks)) == len(ks) > 1, f"{os.path.basename(v['file'])}: slider moves k through {ks}")
    check(len(set(sums)) == len(sums), f"{os.path.basename(v['file'])}: the image changes with k")
    check(len(set(shown)) == len(shown), f"{os.path.basename(v['file'])}: the PSNR readout changes with k")
    for s in steps:
        ref = psnr[(v["file"], s["k_shown"])]
        if s["psnr_shown"].startswith("∞"):
            ok = ref == float("inf")
        else:
            ok = abs(float(s["psnr_shown"]) - ref) <= 0.01
            worst = max(worst, abs(float(s["psnr_shown"]) - ref))
        if not ok:
            check(False, f"{v['file']} k = {s['k_shown']}: shown {s['psnr_shown']} dB, batch.csv {ref:.4f} dB")
check(worst <= 0.01, f"PSNR shown equals batch.csv to 0.01 dB at every k visited (largest difference {worst:.4f} dB; "
                     f"readout has 2 decimals)")

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
