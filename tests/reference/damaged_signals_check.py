"""Damaged and hostile recordings are refused with one line, before anything is written.

1. A WAV (scipy.io.wavfile) and an AIFF (laid out here after Apple's AIFF 1.3) of 4000 stereo 16-bit frames sweep
   (exit 0); each cut at 10 %, 50 % and 99 % of its length is refused by `sweep`: exit 1, exactly
   one line on stderr naming the file, no output folder.
2. CSV: a ragged row, a non-numeric cell and a blank file are refused with one line naming the
   file (and, for rows, the line number); raw int16 whose size is not whole frames likewise.
3. Limits: a WAV whose 'data' chunk declares 2^31 bytes in a 1 KB file is refused at a peak RSS
   under 100 MB (GNU time); a WAV above --max-frames is refused naming --max-frames, and reads
   once the limit is raised.
Sources: scipy.io.wavfile as encoder; Microsoft RIFF/WAVE (the 'data' chunk's size at byte 40 of
a canonical 44-byte header); Apple AIFF 1.3 (FORM/AIFF with COMM: channels, frames, bits, rate as
an 80-bit IEEE extended number; SSND: offset, block size, big-endian samples).
"""
import os
import struct
import subprocess
import sys

import numpy as np
from scipy.io import wavfile

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from refcommon import check, failures, scratch_dir  # noqa: E402

binary = sys.argv[1]
tmp = scratch_dir("pcasweep-damaged-signals-")
rng = np.random.default_rng(20261205)


runs = [0]


def sweep(path, *extra):
    runs[0] += 1
    out = os.path.join(tmp, "out-%d-%s" % (runs[0], os.path.basename(path)))
    r = subprocess.run([binary, "sweep", path, "--out", out, "--window", "16", "--k", "2", "--quiet"] + list(extra),
                       capture_output=True, text=True)
    return r, out


def refused(path, what, needle="", *extra):
    r, out = sweep(path, *extra)
    lines = r.stderr.strip().splitlines()
    ok = r.returncode == 1 and len(lines) == 1 and path in lines[0] and needle in lines[0] and not os.path.exists(out)
    check(ok, "%s: exit %d, %d line(s), output folder %s: %r" %
          (what, r.returncode, len(lines), "made" if os.path.exists(out) else "absent", r.stderr.strip()[:200]))
    return ok


t = np.arange(4000)
samples = np.stack([8000 * np.sin(t / 7.0), 6000 * np.cos(t / 11.0)], -1) + rng.normal(0, 300, (4000, 2))
samples = np.round(samples).astype(np.int16)
wav = os.path.join(tmp, "intact.wav")
wavfile.write(wav, 8000, samples)


def extended80(value):
    """A positive integer as an 80-bit IEEE 754 extended number (sign, 15-bit exponent, 64-bit
    mantissa with explicit leading bit), as AIFF's COMM chunk stores the sample rate."""
    exponent = value.bit_length() - 1
    return struct.pack(">HQ", 16383 + exponent, value << (63 - exponent))


aiff = os.path.join(tmp, "intact.aiff")
sound = samples.astype(">i2").tobytes()
comm = b"COMM" + struct.pack(">IhIh", 18, 2, len(samples), 16) + extended80(8000)
ssnd = b"SSND" + struct.pack(">III", 8 + len(sound), 0, 0) + sound
with open(aiff, "wb") as f:
    f.write(b"FORM" + struct.pack(">I", 4 + len(comm) + len(ssnd)) + b"AIFF" + comm + ssnd)

table = {}
for path in (wav, aiff):
    r, out = sweep(path)
    check(r.returncode == 0, "intact %s sweeps (exit %d %s)" % (os.path.basename(path), r.returncode, r.stderr.strip()))
    with open(path, "rb") as f:
        data = f.read()
    for label, at in (("10%", len(data) // 10), ("50%", len(data) // 2), ("99%", len(data) * 99 // 100)):
        cut = os.path.join(tmp, "cut-%s-%s" % (label.replace("%", "pc"), os.path.basename(path)))
        with open(cut, "wb") as f:
            f.write(data[:at])
        table[(os.path.splitext(path)[1], label)] = refused(cut, "%s cut at %s (%d of %d bytes)" %
                                                           (os.path.basename(path), label, at, len(data)))

# --- 2. CSV and raw -------------------------------------------------------------------------------
cases = {"ragged.csv": (b"a,b\n1,2\n3,4,5\n6,7\n", "line 3"),
         "text.csv": (b"a,b\n1,2\n3,x\n", "line 3"),
         "blank.csv": (b"\n\n  \n", ""),
         "odd.raw": (b"\x01\x02\x03", "whole number of frames")}
for name, (content, needle) in cases.items():
    path = os.path.join(tmp, name)
    with open(path, "wb") as f:
        f.write(content)
    extra = ["--raw", "int16"] if name.endswith(".raw") else []
    refused(path, name + " refused" + (" naming " + needle if needle else ""), needle, *extra)

# --- 3. Limits ------------------------------------------------------------------------------------
# A canonical 44-byte WAV header (PCM, 2 channels, 16 bits) whose data chunk declares 2^31 bytes.
header = b"RIFF" + struct.pack("<I", 36 + 2 ** 31) + b"WAVE" + b"fmt " + struct.pack("<IHHIIHH", 16, 1, 2, 8000,
                                                                                      32000, 4, 16)
huge = os.path.join(tmp, "huge.wav")
with open(huge, "wb") as f:
    f.write(header + b"data" + struct.pack("<I", 2 ** 31) + b"\x00" * 1000)
rss_file = os.path.join(tmp, "rss.txt")
out = os.path.join(tmp, "out-huge")
r = subprocess.run(["/usr/bin/time", "-o", rss_file, "-f", "%M", binary, "sweep", huge, "--out", out],
                   capture_output=True, text=True)
with open(rss_file) as f:
    peak_kb = int(f.read().split()[-1])
lines = r.stderr.strip().splitlines()
check(r.returncode == 1 and len(lines) == 1 and huge in lines[0] and not os.path.exists(out),
      "WAV declaring 2^31 bytes of samples in 1 KB: exit %d, one line: %r" % (r.returncode, r.stderr.strip()[:200]))
check(peak_kb < 100 * 1024, "WAV declaring 2^31 bytes of samples: peak RSS %d KB < 100 MB" % peak_kb)
refused(wav, "4000 frames above --max-frames 3999", "above --max-frames (3999); raise --max-frames", "--max-frames",
        "3999")
r, out = sweep(wav, "--max-frames", "4000")
check(r.returncode == 0, "4000 frames at --max-frames 4000 sweep (exit %d %s)" % (r.returncode, r.stderr.strip()))

print("\nDamaged-recording table (sweep of a cut file):")
print("| format | 10% | 50% | 99% |")
print("|---|---|---|---|")
for ext in (".wav", ".aiff"):
    print("| %s | %s |" % (ext[1:], " | ".join("refused (exit 1, 1 line)" if table.get((ext, l)) else "NOT REFUSED"
                                                for l in ("10%", "50%", "99%"))))
if failures:
    print("%d check(s) failed" % len(failures))
    sys.exit(1)
print("all damaged-recording checks passed")
