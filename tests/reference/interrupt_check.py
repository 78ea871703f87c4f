"""Interrupted runs and failed writes leave whole files or none, and say what went wrong in one line.

1. A sweep of a generated image large enough to run several seconds is sent SIGTERM (and, in a
   second run, SIGINT) while it is writing (as soon as a temporary file shows in its output
   folder). It must exit 143 / 130 (128 + signal number, the shell's convention) within 1 s of the
   signal, leave no temporary file, and every file left must be whole: PNG and JPEG decode with
   Pillow, CSV rows all have the header's width, JSON loads, SVG parses as XML, and each coded
   image (.pcsc) has the length its header declares and a matching CRC-32. The same for a batch.
2. Failed writes: a file-size limit (RLIMIT_FSIZE, so write(2) fails with EFBIG), an output
   folder whose parent is a regular file (ENOTDIR), and /dev/full (ENOSPC) as the output of
   `encode`. Each must exit 1 with exactly one line on stderr naming the path and the reason
   (strerror's text), and leave no temporary or partial file. A batch whose output folder cannot
   be made must stop before sweeping anything. A small tmpfs is tried too when mount(8) works.

Sources: POSIX signal numbers and the shell's 128 + n exit status (POSIX.1-2017, "Shell Command
Language" 2.8.2); setrlimit(2) and write(2) for EFBIG on RLIMIT_FSIZE; Linux's null(4) for
/dev/full's ENOSPC; strerror texts from glibc via Python's os.strerror; Pillow (Debian
python3-pil) decodes the images; the .pcsc layout (docs/format.md: Z + R_v + R_q at offsets
92..115 equal the size − 120, CRC-32 of zlib over every byte before the last four).
"""
import csv
import errno
import json
import os
import resource
import shutil
import signal
import struct
import subprocess
import sys
import time
import xml.etree.ElementTree as ET
import zlib

import numpy as np
from PIL import Image

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from refcommon import check, failures, scratch_dir, write_png  # noqa: E402

binary = sys.argv[1]
tmp = scratch_dir("pcasweep-interrupt-")
began = time.monotonic()


def section(title):
    print("-- %s (%.1f s into the check)" % (title, time.monotonic() - began))
rng = np.random.default_rng(20261205)


def default_signals():
    """In the child: SIGINT and SIGTERM as a terminal would deliver them (a background ctest may ignore SIGINT)."""
    signal.signal(signal.SIGINT, signal.SIG_DFL)
    signal.signal(signal.SIGTERM, signal.SIG_DFL)


def noisy_rgb(height, width):
    y, x = np.mgrid[0:height, 0:width]
    base = np.stack([128 + 90 * np.sin(x / 17.0), 128 + 90 * np.cos(y / 11.0), 128 + 50 * np.sin((x + y) / 23.0)], -1)
    return np.clip(base + rng.normal(0, 20, base.shape), 0, 255).astype(np.uint8)


def temporaries(folder):
    found = []
    for root, _, names in os.walk(folder):
        found += [os.path.join(root, n) for n in names if ".tmp-" in n]
    return found


def pcsc_whole(path):
    with open(path, "rb") as f:
        data = f.read()
    if len(data) < 124:
        return False
    z, rv, rq = struct.unpack_from("<QQQ", data, 92)
    (crc,) = struct.unpack_from("<I", data, len(data) - 4)
    return z + rv + rq == len(data) - 120 and zlib.crc32(data[:-4]) == crc


def csv_whole(path):
    with open(path, newline="") as f:
        rows = list(csv.reader(f))
    return len(rows) >= 1 and all(len(r) == len(rows[0]) for r in rows)


def file_whole(path):
    """True when the file parses completely with an outside reader chosen by its extension."""
    ext = os.path.splitext(path)[1].lower()
    try:
        if ext in (".png", ".jpg"):
            with Image.open(path) as im:
                im.load()
            return True
        if ext == ".csv":
            return csv_whole(path)
        if ext == ".json":
            with open(path) as f:
                json.load(f)
            return True
        if ext in (".svg", ".html"):
            if ext == ".svg":
                ET.parse(path)
                return True
            with open(path) as f:
                return f.read().rstrip().endswith("</html>")
        if ext == ".pcsc":
            return pcsc_whole(path)
    except Exception as e:  # any parse failure means the file is not whole
        print("     %s: %s" % (path, e))
        return False
    print("     %s: no reader for this kind of file" % path)
    return False


def check_folder_whole(label, folder):
    check(not temporaries(folder), "%s: no temporary file left (%s)" % (label, temporaries(folder)[:3]))
    files = []
    if os.path.isdir(folder):
        for root, _, names in os.walk(folder):
            files += [os.path.join(root, n) for n in names]
    broken = [f for f in files if not file_whole(f)]
    check(not broken, "%s: all %d files left are whole (broken: %s)" % (label, len(files), broken[:3]))
    return files


def interrupt_while_writing(label, args, out, sig):
    """Starts pcasweep, sends `sig` when a temporary appears in `out`, returns (rc, seconds to exit)."""
    proc = subprocess.Popen([binary] + args, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, text=True,
                            preexec_fn=default_signals)
    deadline = time.monotonic() + 120
    while proc.poll() is None and time.monotonic() < deadline and not (os.path.isdir(out) and temporaries(out)):
        time.sleep(0.005)
    running = proc.poll() is None
    check(running, "%s: still running when a temporary appeared (else the input is too small)" % label)
    sent = time.monotonic()
    proc.send_signal(sig)
    try:
        _, err = proc.communicate(timeout=10)
    except subprocess.TimeoutExpired:
        proc.kill()
        _, err = proc.communicate()
    waited = time.monotonic() - sent
    print("     %s: exit %d, %.3f s after the signal; stderr: %s" % (label, proc.returncode, waited, err.strip()[-200:]))
    return proc.returncode, waited


# 1. Interrupted sweeps and batch.
section("interrupted sweeps")
big = os.path.join(tmp, "big.png")
write_png(big, noisy_rgb(1024, 1024))
for sig, code in ((signal.SIGTERM, 143), (signal.SIGINT, 130)):
    name = signal.Signals(sig).name
    out = os.path.join(tmp, "sweep-" + name)
    rc, waited = interrupt_while_writing("sweep " + name, ["sweep", big, "--out", out, "--quiet"], out, sig)
    check(rc == code, "sweep %s: exit %d (128 + %d), got %d" % (name, code, int(sig), rc))
    check(waited < 1.0, "sweep %s: ended %.3f s after the signal (< 1 s)" % (name, waited))
    files = check_folder_whole("sweep " + name, out)
    print("     sweep %s: %d finished files kept" % (name, len(files)))

section("interrupted batch")
batch_in = os.path.join(tmp, "batch-in")
os.makedirs(batch_in)
for i in range(40):
    write_png(os.path.join(batch_in, "f%02d.png" % i), noisy_rgb(192, 192))
out = os.path.join(tmp, "batch-out")
proc = subprocess.Popen([binary, "batch", batch_in, "--out", out, "--quiet", "--threads", "2"],
                        stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, text=True, preexec_fn=default_signals)
time.sleep(1.0)
check(proc.poll() is None, "batch: still running 1 s after the start")
sent = time.monotonic()
proc.send_signal(signal.SIGTERM)
proc.communicate(timeout=10)
waited = time.monotonic() - sent
check(proc.returncode == 143 and waited < 1.0,
      "batch SIGTERM: exit 143 within 1 s (got %d after %.3f s)" % (proc.returncode, waited))
check_folder_whole("batch SIGTERM", out)
check(not os.path.exists(out), "batch SIGTERM: the empty output folder this run created is removed")


# 2. Failed writes.
section("failed writes")
def one_line_naming(label, result, path, reason):
    lines = result.stderr.strip().splitlines()
    print("     %s: exit %d, stderr: %s" % (label, result.returncode, result.stderr.strip()))
    check(result.returncode == 1, "%s: exit 1" % label)
    check(len(lines) == 1 and path in lines[0] and reason in lines[0],
          "%s: one line on stderr naming %s and '%s'" % (label, path, reason))


small = os.path.join(tmp, "small.png")
write_png(small, noisy_rgb(256, 256))


def limit_file_size():
    default_signals()
    resource.setrlimit(resource.RLIMIT_FSIZE, (60000, 60000))


out = os.path.join(tmp, "fsize")
r = subprocess.run([binary, "sweep", small, "--out", out, "--quiet", "--no-rd"], capture_output=True, text=True,
                   preexec_fn=limit_file_size)
one_line_naming("file-size limit", r, out, os.strerror(errno.EFBIG))
files = check_folder_whole("file-size limit", out)
check(all(os.path.getsize(f) <= 60000 for f in files), "file-size limit: every file kept is within the limit")

blocker = os.path.join(tmp, "a-file")
with open(blocker, "w") as f:
    f.write("not a folder\n")
out = os.path.join(blocker, "out")
r = subprocess.run([binary, "sweep", small, "--out", out, "--quiet", "--no-rd"], capture_output=True, text=True)
one_line_naming("parent is a file", r, out, os.strerror(errno.ENOTDIR))

start = time.monotonic()
r = subprocess.run([binary, "batch", batch_in, "--out", out, "--quiet"], capture_output=True, text=True)
one_line_naming("batch, parent is a file", r, out, os.strerror(errno.ENOTDIR))
check(time.monotonic() - start < 5, "batch, parent is a file: stops before sweeping (%.2f s)" % (time.monotonic() - start))

if os.path.exists("/dev/full"):
    r = subprocess.run([binary, "encode", small, "--k", "4", "--out", "/dev/full"], capture_output=True, text=True)
    one_line_naming("encode to /dev/full", r, "/dev/full", os.strerror(errno.ENOSPC))
    check(not [n for n in os.listdir("/dev") if ".tmp-" in n], "encode to /dev/full: no temporary in /dev")
    check(os.path.exists("/dev/full") and not os.path.isfile("/dev/full"), "/dev/full is still a device")
else:
    print("skip /dev/full: not present on this machine")

mnt = os.path.join(tmp, "tmpfs")
os.makedirs(mnt)
mounted = subprocess.run(["mount", "-t", "tmpfs", "-o", "size=64k", "tmpfs", mnt], capture_output=True, text=True)
if mounted.returncode == 0:
    try:
        out = os.path.join(mnt, "out")
        r = subprocess.run([binary, "sweep", small, "--out", out, "--quiet", "--no-rd"], capture_output=True, text=True)
        one_line_naming("full tmpfs", r, out, os.strerror(errno.ENOSPC))
        check_folder_whole("full tmpfs", out)
    finally:
        subprocess.run(["umount", mnt])
else:
    print("skip small tmpfs: mount failed (%s)" % mounted.stderr.strip())

if failures:
    print("%d check(s) failed" % len(failures))
    sys.exit(1)
print("all interrupt and failed-write checks passed")
