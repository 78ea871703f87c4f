// solve/blas_runtime.hpp — which BLAS kernels run the large products, and making sure they fit the CPU.
//
// Debian's OpenBLAS 0.3.21 (DYNAMIC_ARCH) picks its kernels from cpuid when the
// library is loaded, before main(). On a CPU it does not recognise it falls back
// to its oldest SSE3 kernels ("Prescott"), which ran the solver's products much
// slower than the AVX2 ones (docs/performance.md, "The kernels OpenBLAS picks"). The only
// way to change the choice is OPENBLAS_CORETYPE in the environment *before* the
// library initialises, so blas_startup() sets it and restarts the program once.
//
// The decision is a pure function (decide_blas_kernel) of what OpenBLAS chose,
// the CPU's features and the environment, unit-tested over a table of cases.
//
// Environment variables:
//   OPENBLAS_CORETYPE              read by OpenBLAS itself; a value the user set is never overridden.
//   PCASWEEP_BLAS_RESTARTED        the restart guard: set by pcasweep (to the core OpenBLAS had picked)
//                                  just before it re-executes itself; a process that sees it never
//                                  restarts again. Removed again (with the OPENBLAS_CORETYPE that
//                                  pcasweep set) once read, so child processes see the user's environment.
//   PCASWEEP_TEST_BLAS_DETECTED    test hook: pcasweep's start-up check treats the core OpenBLAS
//                                  detected as this name (e.g. Prescott), so the restart can be tested
//                                  on a CPU that OpenBLAS recognises. Read in the first process only;
//                                  reports say when it was used.
#pragma once

#include <nlohmann/json.hpp>
#include <optional>
#include <string>
#include <string_view>

namespace pcasweep {

// What the CPU (and the OS, for the wide registers' state) offers, as the
// kernels of OpenBLAS need it.
struct CpuFeatures {
  std::string vendor;  // "intel", "amd" or "other"
  bool avx2 = false;
  bool fma = false;    // FMA3
  bool avx512f = false;
  bool avx512bw = false;
  bool avx512dq = false;
  bool avx512vl = false;

  // AVX2 and FMA3: what OpenBLAS's Haswell and Zen kernels use.
  bool avx2_fma() const { return avx2 && fma; }
  // AVX-512 F, BW, DQ and VL: what its SkylakeX kernels are compiled for (-march=skylake-avx512).
  bool avx512_skx() const { return avx2_fma() && avx512f && avx512bw && avx512dq && avx512vl; }
};

// The running CPU's features, from cpuid through GCC's __builtin_cpu_supports /
// __builtin_cpu_is (which also check that the OS saves the AVX / AVX-512 state).
// Takes nothing; throws nothing.
CpuFeatures detect_cpu_features();

// The instruction level of an OpenBLAS 0.3.21 DYNAMIC_ARCH kernel set, by its
// name as openblas_get_corename() returns it or OPENBLAS_CORETYPE takes it
// (case-insensitive).
enum class KernelLevel {
  generic,  // no AVX2 code paths: SSE2/SSE3 (Prescott, Core2, Penryn, Dunnington, Nehalem, Atom, Nano,
            // Opteron, Barcelona, Bobcat, ...) or AVX/FMA4 only (Sandybridge, Bulldozer, Piledriver,
            // Steamroller, Excavator)
  avx2,     // Haswell, Zen
  avx512,   // SkylakeX, Cooperlake, SapphireRapids
  unknown,  // a name 0.3.21 does not have (e.g. "Unknown")
};
// Takes a core name; returns its level (unknown for anything not in the list). Throws nothing.
KernelLevel openblas_kernel_level(std::string_view core);

// Everything the decision depends on. Optional strings are unset when the
// environment variable is absent (an empty value counts as set).
struct BlasStartupInput {
  std::string openblas_core;                 // openblas_get_corename() in this process
  CpuFeatures cpu;
  std::optional<std::string> user_coretype;  // OPENBLAS_CORETYPE at start
  std::optional<std::string> restart_guard;  // PCASWEEP_BLAS_RESTARTED at start
  std::optional<std::string> test_detected;  // PCASWEEP_TEST_BLAS_DETECTED at start
};

enum class BlasAction { keep, restart };

struct BlasDecision {
  BlasAction action = BlasAction::keep;
  std::string set_coretype;  // restart: the OPENBLAS_CORETYPE value to restart with (Haswell, Zen, SkylakeX)
  std::string chosen_by;     // "openblas", "pcasweep" or "user"
  std::string reason;        // one line, no trailing newline, for the solver line and summary.json
  std::string warning;       // non-empty: one line (no "\n") to print on stderr
  bool restarted = false;    // this process is the restarted one (the guard was set)
};

// The start-up decision, a pure function of its input:
// - guard set (this is the restarted process): keep; chosen_by "pcasweep" when
//   OPENBLAS_CORETYPE is set (pcasweep set it), with a warning if OpenBLAS still
//   runs a generic core; the test hook is ignored here.
// - OPENBLAS_CORETYPE set by the user: keep, chosen_by "user"; a warning when it
//   gives a generic core on a CPU with AVX2 and FMA.
// - otherwise the core OpenBLAS picked (or the test hook's name) is generic on a
//   CPU with AVX2 and FMA: restart with SkylakeX (AVX-512 F/BW/DQ/VL), Zen (AMD)
//   or Haswell (any other vendor); else keep, chosen_by "openblas".
// Takes the input above; returns the decision. Throws nothing.
BlasDecision decide_blas_kernel(const BlasStartupInput& input);

// What runs the large products, for reports.
struct BlasInfo {
  std::string library;    // "OpenBLAS" or "Eigen" (build without PCASWEEP_USE_BLAS)
  std::string version;    // "0.3.21" / "3.4.0"
  std::string config;     // openblas_get_config(), or Eigen's SIMD instruction sets
  std::string core;       // openblas_get_corename(); empty for Eigen
  int threads = 1;        // openblas_get_num_threads() (Eigen: Eigen::nbThreads()) when blas_info() is called
  std::string chosen_by;  // "openblas", "pcasweep", "user"; "build" for Eigen
  std::string reason;     // one line
  bool restarted = false; // pcasweep restarted itself to change the kernels
};

// Start-up check, to be called first thing in main() with main's argv (NULL-terminated).
// In a BLAS build: reads the environment, decides, and on BlasAction::restart
// sets OPENBLAS_CORETYPE and the guard, flushes stdio and execv()s
// /proc/self/exe with the same argv (so stdin/stdout and the rest of the
// environment are kept); it does not return then. If execv fails, the two
// variables are removed again, a warning goes to stderr and the program goes on
// with the kernels it has. Prints the decision's warning (if any) on stderr.
// In a build without BLAS it does nothing. Records the result for blas_info().
// Throws nothing.
void blas_startup(char** argv);

// What blas_startup() recorded, with threads read now. Without a blas_startup()
// call (unit tests, pcasweep-bench, library users) the same decision is made
// from the environment, but nothing is restarted (reason says so).
// Throws nothing.
BlasInfo blas_info();

// JSON object for summary.json: library, version, config, core, threads,
// chosen_by, reason, restarted. Takes the info; throws nothing.
nlohmann::json blas_json(const BlasInfo& info);

// One console line, ending in "\n", e.g.
// "BLAS: OpenBLAS 0.3.21, Zen kernels, 2 threads (set by pcasweep: OpenBLAS picked Prescott on a CPU with AVX2)\n".
// Takes the info; throws nothing.
std::string blas_line(const BlasInfo& info);

}  // namespace pcasweep
