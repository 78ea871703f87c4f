#!/usr/bin/env python3
"""End-to-end benchmark of pcasweep on large images, beside the numpy/scikit-learn reference.

Run through `scripts/bench e2e [--build DIR] [--rounds R] [--quick] [--small] [--cases LIST]
[--clean] [--keep-going]`, which builds pcasweep and make_bench_frame (Release) and calls:

  e2e_bench.py --pcasweep BIN --make-frame BIN --cache DIR [--rounds R] [--quick] [--small]
               [--cases a,b,c,d,e,f,g] [--clean] [--scratch DIR]

Images (made by make_bench_frame into --cache when missing; --clean remakes them and removes the
cache at the end): a 24 MP RGB 6000×4000 frame, the same scene at 6 MP (3000×2000), four 6 MP
RGB frames of other scenes and seeds for a batch, and a 100 MP gray 10000×10000 8-bit frame.
`--small` divides every pixel count by 4 (3000×2000, 1500×1000, 5000×5000) for a quick look.

Cases, each timed by GNU time (`/usr/bin/time -f '%e %M'`: wall seconds, peak RSS in KiB):
  a  ours plain:    pcasweep sweep IMG24 --out D --k 1,2,4,8,16,32,64,192 --no-codec --no-rd --quiet
  b  reference:     /usr/bin/python3 bench/e2e_reference.py IMG24 --out D --k (same)
  c  ours default:  pcasweep sweep IMG24 --out D --k (same) --quiet  (codec at every k, rate–distortion)
  d  ours plain on the 6 MP frame (a/d: 4× the pixels)
  e  ours plain on IMG24 with OMP_NUM_THREADS=1 OPENBLAS_NUM_THREADS=1 (e/a: the 2-thread speed-up)
  f  pcasweep batch FOUR_6MP --out D --quiet; size of D/report.html and its load in headless Chromium
  g  ours plain on the 100 MP gray frame (--k 1,2,4,8,16,32,64: d = 64 for gray)
Rounds run every case once; the order is reversed on every other round, so that ours and the
reference alternate and a drift of the machine's load falls on both. Medians over rounds are
reported. `--quick`: one round of a, b, d and f. Output folders are temporary and removed after
each run. Prints a markdown table, the ratios, and each target as "met" / "NOT met" with its number.
Exit 0 when every case ran (targets not met do not change the exit code), 1 when a case failed.
"""
import argparse
import csv
import ctypes
import json
import math
import os
import re
import shutil
import statistics
import subprocess
import sys
import tempfile
import time

REPO = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
REFERENCE = os.path.join(REPO, "bench", "e2e_reference.py")
KS = "1,2,4,8,16,32,64,192"
KS_GRAY = "1,2,4,8,16,32,64"
CHROMIUM_FLAGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
                  "--disable-background-networking", "--disable-component-update", "--disable-sync",
                  "--disable-extensions", "--enable-logging=stderr", "--v=0"]
LOAD_TIMEOUT = 180  # seconds given to Chromium to load report.html
MB = 1e6  # targets in decimal megabytes; GNU time's %M is in KiB


def log(msg):
    print(msg, file=sys.stderr, flush=True)


# ---------------------------------------------------------------- machine

def machine_lines():
    lines = []
    model = ""
    try:
        out = subprocess.run(["lscpu"], capture_output=True, text=True).stdout
        m = re.search(r"^Model name:\s*(.+)$", out, re.M)
        model = m.group(1).strip() if m else "?"
    except OSError:
        model = "?"
    lines.append(f"machine: {model}, {os.cpu_count()} cores, "
                 f"{os.sysconf('SC_PAGE_SIZE') * os.sysconf('SC_PHYS_PAGES') / 2**30:.0f} GiB")
    # OpenBLAS as numpy (the reference) loads it, through threadpoolctl.
    probe = ("import json, numpy\n"
             "try:\n"
             "  from threadpoolctl import threadpool_info\n"
             "  print(json.dumps([{k: i.get(k) for k in ('internal_api','architecture','version',"
             "'threading_layer','num_threads','filepath')} for i in threadpool_info()"
             " if i.get('internal_api') == 'openblas']))\n"
             "except ImportError:\n"
             "  print('[]')\n")
    r = subprocess.run(["/usr/bin/python3", "-c", probe], capture_output=True, text=True)
    try:
        for i in json.loads(r.stdout):
            lines.append(f"reference (numpy) OpenBLAS: {i['version']} core {i['architecture']}, "
                         f"{i['threading_layer']} threading, {i['num_threads']} threads ({i['filepath']})")
    except (ValueError, KeyError):
        lines.append("reference (numpy) OpenBLAS: unknown (threadpoolctl missing)")
    return lines


def pcasweep_blas_line(binary):
    """The OpenBLAS library pcasweep is linked to (ldd) and the core it picks here."""
    try:
        out = subprocess.run(["ldd", binary], capture_output=True, text=True).stdout
    except OSError:
        return "pcasweep OpenBLAS: unknown (ldd failed)"
    m = re.search(r"libopenblas\S*\s*=>\s*(\S+)", out)
    if not m:
        return "pcasweep OpenBLAS: not linked (Eigen's own products)"
    path = m.group(1)
    try:
        lib = ctypes.CDLL(path)
        lib.openblas_get_corename.restype = ctypes.c_char_p
        lib.openblas_get_config.restype = ctypes.c_char_p
        return (f"pcasweep OpenBLAS: core {lib.openblas_get_corename().decode()}, "
                f"{lib.openblas_get_config().decode().strip()} ({path})")
    except (OSError, AttributeError):
        return f"pcasweep OpenBLAS: {path}"


def loadavg():
    with open("/proc/loadavg") as f:
        return " ".join(f.read().split()[:3])


# ---------------------------------------------------------------- images

def make_images(make_frame, cache, small, clean, needed):
    """Returns {name: (path, width, height, channels)}; generates the missing files among `needed`."""
    f = 2 if small else 1  # --small halves both sides: a quarter of the pixels
    specs = {
        "img24": (6000 // f, 4000 // f, 3, "dawn", 1),
        "img6": (3000 // f, 2000 // f, 3, "dawn", 1),
        "batch1": (3000 // f, 2000 // f, 3, "midday", 11),
        "batch2": (3000 // f, 2000 // f, 3, "dusk", 12),
        "batch3": (3000 // f, 2000 // f, 3, "overcast", 13),
        "batch4": (3000 // f, 2000 // f, 3, "dawn", 14),
        "gray100": (10000 // f, 10000 // f, 1, "nir", 5),
    }
    if clean and os.path.isdir(cache):
        shutil.rmtree(cache)
    os.makedirs(cache, exist_ok=True)
    images = {}
    for name, (w, h, c, scene, seed) in specs.items():
        path = os.path.join(cache, f"ternpoint_{scene}_s{seed}_{w}x{h}_{'rgb' if c == 3 else 'gray'}.png")
        if name in needed and not os.path.exists(path):
            log(f"generating {path}")
            t = time.monotonic()
            r = subprocess.run([make_frame, path, "--width", str(w), "--height", str(h), "--channels", str(c),
                                "--bit-depth", "8", "--seed", str(seed), "--scene", scene],
                               capture_output=True, text=True)
            if r.returncode != 0:
                sys.exit(f"make_bench_frame failed: {r.stderr.strip()}")
            log(f"  {r.stdout.strip()} [{time.monotonic() - t:.1f} s]")
        images[name] = (path, w, h, c)
    return images


# ---------------------------------------------------------------- running

def timed(cmd, env_extra=None, scratch=None):
    """Runs cmd under GNU time. Returns dict(wall, rss_kib, rc, stdout, stderr)."""
    fd, tfile = tempfile.mkstemp(prefix="time-", suffix=".txt", dir=scratch)
    os.close(fd)
    env = dict(os.environ)
    env.update(env_extra or {})
    p = subprocess.run(["/usr/bin/time", "-f", "%e %M", "-o", tfile] + cmd, capture_output=True, text=True, env=env)
    with open(tfile) as f:
        text = f.read().strip().splitlines()
    os.remove(tfile)
    wall, rss = float("nan"), float("nan")
    if text:
        parts = text[-1].split()  # a killed command puts "Command terminated ..." first
        try:
            wall, rss = float(parts[0]), float(parts[1])
        except (IndexError, ValueError):
            pass
    return {"wall": wall, "rss_kib": rss, "rc": p.returncode, "stdout": p.stdout, "stderr": p.stderr}


def read_sweep_csv(path):
    rows = {}
    with open(path, newline="") as f:
        for row in csv.DictReader(f):
            rows[int(row["k"])] = (float(row["psnr_db"]), float(row["ssim"]))
    return rows


def chromium_load(report, scratch):
    """Loads report.html with --dump-dom; returns (seconds, baseline seconds, console lines, dom ok)."""
    chromium = shutil.which("chromium") or "/usr/bin/chromium"
    blank = os.path.join(scratch, "blank.html")
    with open(blank, "w") as f:
        f.write("<!DOCTYPE html><html><head><meta charset='utf-8'><title>blank</title></head><body></body></html>")

    def load(path):
        profile = tempfile.mkdtemp(prefix="chromium-profile-", dir=scratch)
        t = time.monotonic()
        try:
            p = subprocess.run([chromium] + CHROMIUM_FLAGS + ["--user-data-dir=" + profile, "--dump-dom",
                                                              "file://" + path],
                               capture_output=True, text=True, timeout=LOAD_TIMEOUT)
            out, err = p.stdout, p.stderr
        except subprocess.TimeoutExpired:
            out, err = "", ""
        dt = time.monotonic() - t
        shutil.rmtree(profile, ignore_errors=True)
        return dt, out, err

    base, _, _ = load(blank)
    dt, dom, err = load(report)
    console = [line for line in err.splitlines() if ":CONSOLE" in line]
    return dt, base, console, "</html>" in dom


def median(xs):
    xs = [x for x in xs if not math.isnan(x)]
    return statistics.median(xs) if xs else float("nan")


# ---------------------------------------------------------------- main

def main():
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--pcasweep", required=True)
    ap.add_argument("--make-frame", required=True)
    ap.add_argument("--cache", required=True, help="folder for the generated images (kept unless --clean)")
    ap.add_argument("--rounds", type=int, default=2)
    ap.add_argument("--quick", action="store_true", help="one round of cases a, b, d, f")
    ap.add_argument("--small", action="store_true", help="a quarter of the pixels in every image")
    ap.add_argument("--cases", default=None, help="comma-separated subset of a,b,c,d,e,f,g")
    ap.add_argument("--clean", action="store_true", help="regenerate the images and remove the cache at the end")
    ap.add_argument("--scratch", default=None, help="parent folder of the temporary outputs (default: system temp)")
    a = ap.parse_args()
    started = time.monotonic()
    cases = "a,b,c,d,e,f,g"
    rounds = a.rounds
    if a.quick:
        cases, rounds = "a,b,d,f", 1
    if a.cases:
        cases = a.cases
    cases = [c.strip() for c in cases.split(",") if c.strip()]
    bad = [c for c in cases if c not in "abcdefg" or len(c) != 1]
    if bad or rounds < 1:
        sys.exit(f"e2e_bench: bad --cases {bad} or --rounds {rounds}")

    head = machine_lines()
    head.append(pcasweep_blas_line(a.pcasweep))
    head.append(f"load average at start: {loadavg()}")
    for line in head:
        print(line, flush=True)

    needed = set()
    for c in cases:
        needed |= {"a": {"img24"}, "b": {"img24"}, "c": {"img24"}, "d": {"img6"}, "e": {"img24"},
                   "f": {"batch1", "batch2", "batch3", "batch4"}, "g": {"gray100"}}[c]
    images = make_images(a.make_frame, a.cache, a.small, a.clean, needed)
    img24, img6, gray = images["img24"], images["img6"], images["gray100"]
    batch = [images[f"batch{i}"][0] for i in range(1, 5)]
    scratch = tempfile.mkdtemp(prefix="pcasweep-e2e-", dir=a.scratch)
    P, PY = a.pcasweep, "/usr/bin/python3"

    def mp(img):
        return f"{img[1] * img[2] / 1e6:.3g} MP {'RGB' if img[3] == 3 else 'gray'}"

    spec = {
        "a": ("ours plain", mp(img24), lambda d: [P, "sweep", img24[0], "--out", d, "--k", KS, "--no-codec",
                                                  "--no-rd", "--quiet"], None),
        "b": ("reference (numpy/sklearn/skimage/Pillow)", mp(img24),
              lambda d: [PY, REFERENCE, img24[0], "--out", d, "--k", KS], None),
        "c": ("ours default (codec, rate-distortion)", mp(img24),
              lambda d: [P, "sweep", img24[0], "--out", d, "--k", KS, "--quiet"], None),
        "d": ("ours plain", mp(img6), lambda d: [P, "sweep", img6[0], "--out", d, "--k", KS, "--no-codec",
                                                 "--no-rd", "--quiet"], None),
        "e": ("ours plain, 1 thread", mp(img24), lambda d: [P, "sweep", img24[0], "--out", d, "--k", KS,
                                                            "--no-codec", "--no-rd", "--quiet"],
              {"OMP_NUM_THREADS": "1", "OPENBLAS_NUM_THREADS": "1"}),
        "f": ("ours batch (defaults), 4 files", f"4 × {mp(images['batch1'])}",
              lambda d: [P, "batch"] + batch + ["--out", d, "--quiet"], None),
        "g": ("ours plain", mp(gray), lambda d: [P, "sweep", gray[0], "--out", d, "--k", KS_GRAY, "--no-codec",
                                                 "--no-rd", "--quiet"], None),
    }
    results = {c: [] for c in cases}
    extra = {}  # per case: figures from the first successful run
    failed = []
    for r in range(rounds):
        order = cases if r % 2 == 0 else list(reversed(cases))
        for c in order:
            name, what, cmd, env = spec[c]
            out = os.path.join(scratch, f"out-{c}")
            log(f"[round {r + 1}/{rounds}] {c}: {name} on {what} ... (load {loadavg()})")
            res = timed(cmd(out), env, scratch)
            log(f"  {res['wall']:.1f} s, peak RSS {res['rss_kib'] * 1024 / MB:.0f} MB, exit {res['rc']}")
            if res["rc"] != 0:
                failed.append(c)
                log("  FAILED: " + (res["stderr"].strip()[-1500:] or "(no message)"))
            else:
                results[c].append(res)
                if c not in extra:
                    if c == "a":
                        extra[c] = read_sweep_csv(os.path.join(out, "sweep.csv"))
                    elif c == "b":
                        extra[c] = json.loads(res["stdout"])
                    elif c == "f":
                        html = os.path.join(out, "report.html")
                        size = os.path.getsize(html) if os.path.exists(html) else float("nan")
                        load = chromium_load(html, scratch) if os.path.exists(html) else (float("nan"),) * 2 + ([], False)
                        extra[c] = {"html_bytes": size, "load": load}
            shutil.rmtree(out, ignore_errors=True)

    # ------------------------------------------------------------ report
    wall = {c: median([x["wall"] for x in results[c]]) for c in cases}
    rss = {c: median([x["rss_kib"] * 1024 / MB for x in results[c]]) for c in cases}
    print(f"\nEnd-to-end, {rounds} round(s), medians; MB = 10^6 bytes (peak RSS from GNU time)\n")
    print("| case | what | image | wall s (median) | wall s (each round) | peak RSS MB (median) |")
    print("|---|---|---|---|---|---|")
    for c in cases:
        name, what, _, _ = spec[c]
        each = ", ".join(f"{x['wall']:.1f}" for x in results[c]) or "failed"
        print(f"| {c} | {name} | {what} | {wall[c]:.1f} | {each} | {rss[c]:.0f} |")

    def have(*cs):
        return all(c in wall and not math.isnan(wall[c]) for c in cs)

    print("\n| ratio | value |\n|---|---|")
    if have("a", "b"):
        print(f"| reference / ours plain, wall (b/a) | {wall['b'] / wall['a']:.2f} |")
        print(f"| ours plain / reference, peak RSS | {rss['a'] / rss['b']:.3f} |")
    if have("a", "c"):
        print(f"| default / plain, wall (c/a) | {wall['c'] / wall['a']:.2f} |")
    if have("a", "d"):
        print(f"| 24 MP / 6 MP plain, wall (a/d; pixels ×{img24[1] * img24[2] / (img6[1] * img6[2]):.0f}) | "
              f"{wall['a'] / wall['d']:.2f} |")
    if have("a", "e"):
        print(f"| 1 thread / 2 threads, wall (e/a) | {wall['e'] / wall['a']:.2f} |")
    decoded = gray[1] * gray[2] * gray[3]  # bytes at 8 bits
    if have("g"):
        print(f"| 100 MP gray: peak RSS − decoded size, MB | {rss['g'] - decoded / MB:.0f} |")

    # ------------------------------------------------------------ targets
    print("\nTargets:")

    def target(ok, text):
        print(f"- {'met' if ok else 'NOT met'}: {text}")

    if have("a", "b"):
        sp, mem = wall["b"] / wall["a"], rss["a"] / rss["b"]
        target(sp >= 10 and mem <= 0.25, f"plain sweep ≥ 10× faster than the reference at ≤ 1/4 of its peak RSS: "
                                         f"{sp:.2f}× faster, {mem:.3f} of its RSS ({rss['a']:.0f} vs {rss['b']:.0f} MB)")
    else:
        print("- not measured: plain sweep against the reference (cases a and b)")
    if "a" in extra and "b" in extra:
        ours, ref = extra["a"], {row["k"]: row for row in extra["b"]["rows"]}
        dp, ds, missing = 0.0, 0.0, []
        for k in [int(x) for x in KS.split(",")]:
            if k not in ours or k not in ref:
                missing.append(k)
                continue
            po, so = ours[k]
            pr = math.inf if ref[k]["psnr_db"] is None else ref[k]["psnr_db"]
            if not (math.isinf(po) and math.isinf(pr)):
                dp = max(dp, abs(po - pr)) if not (math.isinf(po) or math.isinf(pr)) else math.inf
            ds = max(ds, abs(so - ref[k]["ssim"]))
        target(not missing and dp <= 0.01 and ds <= 1e-4,
               f"same PSNR to 0.01 dB and SSIM to 1e-4 at every k: largest |ΔPSNR| {dp:.2g} dB, "
               f"|ΔSSIM| {ds:.2g}" + (f", k missing: {missing}" if missing else ""))
        print("\n  | k | PSNR ours | PSNR ref | SSIM ours | SSIM ref |\n  |---|---|---|---|---|")
        for k in sorted(ours):
            if k in ref:
                pr = "inf" if ref[k]["psnr_db"] is None else f"{ref[k]['psnr_db']:.4f}"
                print(f"  | {k} | {ours[k][0]:.4f} | {pr} | {ours[k][1]:.6f} | {ref[k]['ssim']:.6f} |")
        print()
    else:
        print("- not measured: PSNR/SSIM agreement (cases a and b)")
    if have("a", "c"):
        target(wall["c"] / wall["a"] <= 2, f"default sweep ≤ 2× the plain sweep's time: {wall['c'] / wall['a']:.2f}× "
                                           f"({wall['c']:.1f} s vs {wall['a']:.1f} s)")
    else:
        print("- not measured: default sweep against plain (cases a and c)")
    if have("g"):
        target(rss["g"] <= decoded / MB + 600,
               f"{mp(gray)}: peak RSS ≤ decoded size + 600 MB: {rss['g']:.0f} MB against "
               f"{decoded / MB:.0f} + 600 = {decoded / MB + 600:.0f} MB ({wall['g']:.1f} s)")
    else:
        print("- not measured: 100 MP gray peak RSS (case g)")
    if have("a", "d"):
        target(wall["a"] / wall["d"] <= 4.4, f"linear cost, a/d ≤ 4.4 (4× the pixels): {wall['a'] / wall['d']:.2f} "
                                             f"({wall['a']:.1f} s vs {wall['d']:.1f} s)")
    else:
        print("- not measured: linear cost (cases a and d)")
    if have("a", "e"):
        target(wall["e"] / wall["a"] >= 1.7, f"2 threads ≥ 1.7× one thread (e/a): {wall['e'] / wall['a']:.2f}× "
                                             f"({wall['e']:.1f} s vs {wall['a']:.1f} s)")
    else:
        print("- not measured: thread speed-up (cases a and e)")
    if "f" in extra:
        size = extra["f"]["html_bytes"]
        dt, base, console, dom_ok = extra["f"]["load"]
        ok = size <= 20 * MB and dt < 10 and not console and dom_ok
        target(ok, f"batch report.html ≤ 20 MB, loads in < 10 s with no console errors: {size / MB:.1f} MB, "
                   f"load {dt:.1f} s in headless Chromium (an empty page {base:.1f} s), "
                   f"{len(console)} console message(s)"
                   + ("" if dom_ok else (f", did not finish loading within {LOAD_TIMEOUT} s" if dt >= LOAD_TIMEOUT
                                         else ", page DOM not dumped"))
                   + (f": {console[:3]}" if console else ""))
        if have("f"):
            print(f"  (batch of 4: {wall['f']:.1f} s, peak RSS {rss['f']:.0f} MB)")
    else:
        print("- not measured: batch report (case f)")
    print(f"\nload average at end: {loadavg()}; whole run {time.monotonic() - started:.0f} s")
    shutil.rmtree(scratch, ignore_errors=True)
    if a.clean:
        shutil.rmtree(a.cache, ignore_errors=True)
    if failed:
        print(f"cases that failed: {sorted(set(failed))}")
        return 1
    return 0


if __name__ == "__main__":
    sys.exit(main())
