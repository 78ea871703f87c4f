#!/usr/bin/env python3
"""Which BLAS kernels pcasweep runs, and its one restart to change them (src/solve/blas_runtime.hpp).

Usage: blas_kernel_check.py PATH/TO/pcasweep

Runs `pcasweep sweep samples/ternpoint_mast_nir_gray.png --k 1,4,16 --no-codec --no-rd` (8x8 patches,
exact solver, whose covariance product goes to BLAS) under several environments and reads the
"BLAS:" line it prints and summary.json's solver.blas object:
  1. the environment as given (OPENBLAS_CORETYPE removed): pcasweep does not restart on a CPU that
     OpenBLAS recognises, chosen_by is "openblas".
  2. PCASWEEP_TEST_BLAS_DETECTED=Prescott (the test hook: treat OpenBLAS's choice as its generic
     SSE3 kernels): on a CPU with AVX2 and FMA pcasweep restarts itself once with
     OPENBLAS_CORETYPE = SkylakeX (AVX-512 F/BW/DQ/VL), Zen (AMD) or Haswell, the expected name
     worked out here from /proc/cpuinfo (the kernel's view of the CPU, not pcasweep's cpuid
     reading); the restarted process reports chosen_by "pcasweep", restarted true, that core, and
     the results (sweep.csv, summary.json's eigenvalues) equal run 1's bit for bit when run 1 ran
     the same kernels. With strace (Debian's strace, if installed) the execve calls are counted:
     exactly two (the start and the one restart). Argument with spaces, an extra environment
     variable (OMP_NUM_THREADS=1, seen in blas.threads) and stdin (a PGM image on standard input,
     read as /dev/stdin) pass through the restart.
  3. the same with the guard PCASWEEP_BLAS_RESTARTED already set: no restart (the guard is what
     makes a loop impossible).
  4. OPENBLAS_CORETYPE=Prescott set by the user: respected (core Prescott, chosen_by "user"), and on
     an AVX2 CPU one warning line on stderr; eigenvalues equal run 1's to 1e-10 of the largest (other
     kernels round differently; a tolerance, as common practice for floating-point results).
  5. a build without BLAS (-DPCASWEEP_USE_BLAS=OFF) reports library "Eigen" and never restarts,
     hook or not.
"""
import json
import os
import shutil
import subprocess
import sys

import numpy as np

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from refcommon import binary_from_argv, check, failures, read_csv, scratch_dir  # noqa: E402

PCASWEEP = binary_from_argv()
SAMPLE = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "..", "samples",
                      "ternpoint_mast_nir_gray.png")
WORK = scratch_dir("pcasweep-blas-")
HOOK, GUARD = "PCASWEEP_TEST_BLAS_DETECTED", "PCASWEEP_BLAS_RESTARTED"


def cpuinfo():
    """vendor_id and flags of the first CPU, from Linux's /proc/cpuinfo."""
    vendor, flags = "", set()
    with open("/proc/cpuinfo") as f:
        for line in f:
            key, _, value = line.partition(":")
            if key.strip() == "vendor_id" and not vendor:
                vendor = value.strip()
            if key.strip() == "flags" and not flags:
                flags = set(value.split())
    return vendor, flags


def base_env(**extra):
    env = {k: v for k, v in os.environ.items() if k not in ("OPENBLAS_CORETYPE", HOOK, GUARD)}
    env.update(extra)
    return env


def sweep(name, env, image=SAMPLE, stdin=None, trace=None):
    """Runs sweep into WORK/<name>; returns (stdout, stderr, summary, sweep.csv, execve count or None)."""
    out = os.path.join(WORK, name)
    cmd = [PCASWEEP, "sweep", image, "--out", out, "--k", "1,4,16", "--no-codec", "--no-rd"]
    log = os.path.join(WORK, name + ".strace")
    if trace:
        cmd = [trace, "-f", "-qq", "-e", "trace=execve", "-o", log] + cmd
        # LeakSanitizer cannot run under ptrace: in the sanitizer pass (scripts/sanitize) the traced
        # run checks addresses but not leaks; every other run still checks leaks.
        if "ASAN_OPTIONS" in env:
            env = dict(env, ASAN_OPTIONS=env["ASAN_OPTIONS"] + ":detect_leaks=0")
    r = subprocess.run(cmd, env=env, stdin=stdin, capture_output=True, timeout=120)  # a restart loop would end here
    stdout, stderr = r.stdout.decode(), r.stderr.decode()
    if r.returncode != 0:
        print("FAIL: %s exited %d\n%s" % (" ".join(cmd), r.returncode, stderr))
        sys.exit(1)
    with open(os.path.join(out, "summary.json")) as f:
        summary = json.load(f)
    execs = None
    if trace:
        with open(log) as f:
            execs = sum(1 for line in f if "execve(" in line and "= 0" in line)
    return stdout, stderr, summary, read_csv(os.path.join(out, "sweep.csv")), execs


def blas_lines(stdout):
    return [line for line in stdout.splitlines() if line.startswith("BLAS: ")]


def eigenvalues(summary):
    """summary.json's eigenvalues (spectrum.rows[].eigenvalue), largest first."""
    return np.asarray([row["eigenvalue"] for row in summary["spectrum"]["rows"]], dtype=float)


vendor, flags = cpuinfo()
avx2 = {"avx2", "fma"} <= flags
avx512 = avx2 and {"avx512f", "avx512bw", "avx512dq", "avx512vl"} <= flags
expected_core = "SkylakeX" if avx512 else ("Zen" if vendor == "AuthenticAMD" else "Haswell")
strace = shutil.which("strace")
print("CPU (from /proc/cpuinfo): %s, AVX2+FMA %s, AVX-512 F/BW/DQ/VL %s; a restart should pick %s; strace: %s"
      % (vendor, avx2, avx512, expected_core if avx2 else "(none)", strace or "not installed"))

# 1. As given.
out1, err1, s1, csv1, _ = sweep("plain", base_env())
b1 = s1["solver"]["blas"]
print("plain: %s" % json.dumps(b1))
check(len(blas_lines(out1)) == 1, "plain: one BLAS line on stdout (%r)" % blas_lines(out1))
check(b1["restarted"] is False, "plain: no restart")
eigen_build = b1["library"] == "Eigen"

if eigen_build:
    # 5. No BLAS in this build: nothing to restart, whatever the hook says.
    check(b1["chosen_by"] == "build" and b1["core"] is None, "Eigen build: chosen_by build, no core")
    out2, err2, s2, csv2, _ = sweep("hook", base_env(**{HOOK: "Prescott"}))
    b2 = s2["solver"]["blas"]
    check(b2["library"] == "Eigen" and b2["restarted"] is False, "Eigen build with the hook: no restart (%s)" % b2)
    check(csv2 == csv1, "Eigen build with the hook: sweep.csv identical")
else:
    check(b1["library"] == "OpenBLAS", "plain: library OpenBLAS")
    check(b1["chosen_by"] == "openblas", "plain: chosen_by openblas (%s)" % b1["chosen_by"])
    check(b1["config"].startswith("OpenBLAS %s " % b1["version"]), "plain: version is in the config string")
    check(("%s kernels" % b1["core"]) in blas_lines(out1)[0], "plain: the BLAS line names core %s" % b1["core"])

    # 2. The test hook: OpenBLAS's choice is taken as Prescott. Input with spaces in its path, read
    #    through stdin; OMP_NUM_THREADS=1 must survive the restart.
    spaced = os.path.join(WORK, "a folder", "mast nir.png")
    os.makedirs(os.path.dirname(spaced))
    shutil.copy(SAMPLE, spaced)
    out2, err2, s2, csv2, execs = sweep("hook run", base_env(**{HOOK: "Prescott"}), image=spaced, trace=strace)
    b2 = s2["solver"]["blas"]
    print("hook: %s" % json.dumps(b2))
    if avx2:
        check(b2["restarted"] is True, "hook: the restarted process saw the guard")
        check(b2["chosen_by"] == "pcasweep", "hook: chosen_by pcasweep (%s)" % b2["chosen_by"])
        check(b2["core"] == expected_core, "hook: core %s (expected %s)" % (b2["core"], expected_core))
        check("OpenBLAS picked Prescott on a CPU with" in b2["reason"], "hook: reason names Prescott (%s)" % b2["reason"])
        line = blas_lines(out2)
        check(len(line) == 1 and "(set by pcasweep: OpenBLAS picked Prescott" in line[0],
              "hook: one BLAS line saying pcasweep set it (%r)" % line)
        if execs is not None:
            check(execs == 2, "hook: exactly one restart under strace (%d successful execve)" % execs)
    else:
        check(b2["restarted"] is False and b2["chosen_by"] == "openblas", "hook on a CPU without AVX2: no restart")
    check(s2["input"]["files"] == [spaced], "hook: the path with spaces reached the restarted process")
    same_kernels = b2["core"] == b1["core"]
    if same_kernels:
        check(csv2 == csv1, "hook: sweep.csv identical to the plain run (both ran %s)" % b1["core"])
        check(np.array_equal(eigenvalues(s1), eigenvalues(s2)), "hook: eigenvalues identical to the plain run")

    # Stdin and the environment pass through the restart: the image as a PGM on standard input
    # (a regular file, read as /dev/stdin: pcasweep's reader sniffs the signature with one read
    # and then reads the file again, which a pipe cannot give), OMP_NUM_THREADS=1.
    from skimage import io
    gray = io.imread(SAMPLE)
    pgm = os.path.join(WORK, "mast.pgm")
    with open(pgm, "wb") as f:
        f.write(b"P5\n%d %d\n255\n" % (gray.shape[1], gray.shape[0]) + gray.astype(np.uint8).tobytes())
    with open(pgm, "rb") as stdin:
        out3, err3, s3, csv3, _ = sweep("hook stdin", base_env(**{HOOK: "Prescott", "OMP_NUM_THREADS": "1"}),
                                        image="/dev/stdin", stdin=stdin)
    b3 = s3["solver"]["blas"]
    check(b3["restarted"] is avx2, "stdin run: restarted %s" % b3["restarted"])
    check(b3["threads"] == 1, "stdin run: OMP_NUM_THREADS=1 reached the restarted process (threads %d)" % b3["threads"])
    # One thread here, two in run 1: sums round differently (DEVELOPERS.md, Determinism), so a tolerance.
    check(np.allclose(csv3["psnr_db"], csv1["psnr_db"], rtol=0, atol=1e-9),
          "stdin run: the image read from standard input through the restart gives run 1's PSNRs (1e-9 dB)")

    # 3. The guard already set: never restart.
    out4, err4, s4, csv4, _ = sweep("guard", base_env(**{HOOK: "Prescott", GUARD: "Prescott"}))
    b4 = s4["solver"]["blas"]
    check(b4["chosen_by"] == "openblas" and b4["core"] == b1["core"],
          "guard preset: no restart, OpenBLAS's own choice kept (%s, %s)" % (b4["chosen_by"], b4["core"]))

    # 4. The user's OPENBLAS_CORETYPE is respected, and a generic choice on AVX2 is told on stderr.
    out5, err5, s5, csv5, _ = sweep("user", base_env(OPENBLAS_CORETYPE="Prescott"))
    b5 = s5["solver"]["blas"]
    print("user: %s; stderr %r" % (json.dumps(b5), err5))
    check(b5["core"] == "Prescott" and b5["chosen_by"] == "user" and b5["restarted"] is False,
          "user Prescott: respected (%s, %s)" % (b5["core"], b5["chosen_by"]))
    warnings = [line for line in err5.splitlines() if "OPENBLAS_CORETYPE=Prescott" in line]
    check(len(warnings) == (1 if avx2 else 0), "user Prescott: %d warning line(s) on stderr" % len(warnings))
    check("(set by the user: OPENBLAS_CORETYPE=Prescott" in blas_lines(out5)[0], "user Prescott: the BLAS line says so")
    e1, e5 = eigenvalues(s1), eigenvalues(s5)
    rel = np.max(np.abs(e5 - e1)) / e1.max()
    check(rel <= 1e-10, "user Prescott: eigenvalues equal the plain run's to %.2g of the largest (<= 1e-10)" % rel)
    check(np.allclose(csv5["psnr_db"], csv1["psnr_db"], rtol=0, atol=1e-9),
          "user Prescott: PSNRs equal the plain run's to 1e-9 dB")

    # The user's setting is respected even when it names AVX2 kernels: no warning.
    out6, err6, s6, _, _ = sweep("user haswell", base_env(OPENBLAS_CORETYPE="Haswell"))
    b6 = s6["solver"]["blas"]
    check(b6["core"] == "Haswell" and b6["chosen_by"] == "user" and "OPENBLAS_CORETYPE" not in err6,
          "user Haswell: respected, no warning")

print(f"{len(failures)} failed" if failures else "all BLAS kernel checks passed")
sys.exit(1 if failures else 0)
