#include "solve/blas_runtime.hpp"

#include <unistd.h>

#include <Eigen/Core>
#include <algorithm>
#include <array>
#include <cctype>
#include <cerrno>
#include <cstdio>
#include <cstdlib>
#include <cstring>
#include <iostream>

#ifdef EIGEN_USE_BLAS
// OpenBLAS's own queries (declared in its cblas.h, which this file does not need otherwise).
extern "C" {
char* openblas_get_config(void);
char* openblas_get_corename(void);
int openblas_get_num_threads(void);
}
#endif

namespace pcasweep {

namespace {

constexpr const char* kCoretype = "OPENBLAS_CORETYPE";
constexpr const char* kGuard = "PCASWEEP_BLAS_RESTARTED";
constexpr const char* kTestHook = "PCASWEEP_TEST_BLAS_DETECTED";

bool iequal(std::string_view a, std::string_view b) {
  return a.size() == b.size() && std::equal(a.begin(), a.end(), b.begin(), [](char x, char y) {
           return std::tolower(static_cast<unsigned char>(x)) == std::tolower(static_cast<unsigned char>(y));
         });
}

// An environment value as it may appear in a one-line message: printable
// characters only (others become '?'), at most 40 of them.
std::string printable(std::string_view s) {
  std::string out;
  for (char c : s.substr(0, 40)) out += std::isprint(static_cast<unsigned char>(c)) ? c : '?';
  if (s.size() > 40) out += "...";
  return out;
}

// The guard carries the name of the core OpenBLAS had picked: letters, digits and '_' only.
std::string core_token(std::string_view s) {
  std::string out;
  for (char c : s.substr(0, 32))
    if (std::isalnum(static_cast<unsigned char>(c)) || c == '_') out += c;
  return out.empty() ? "unknown" : out;
}

std::optional<std::string> env(const char* name) {
  const char* v = std::getenv(name);
  return v ? std::optional<std::string>(v) : std::nullopt;
}

std::string feature_text(const CpuFeatures& cpu) { return cpu.avx512_skx() ? "AVX-512" : "AVX2"; }

std::string restart_target(const CpuFeatures& cpu) {
  if (cpu.avx512_skx()) return "SkylakeX";
  return cpu.vendor == "amd" ? "Zen" : "Haswell";
}

struct StartupRecord {
  bool recorded = false;
  BlasDecision decision;
};
StartupRecord& startup_record() {
  static StartupRecord r;
  return r;
}

#ifdef EIGEN_USE_BLAS
BlasStartupInput input_from_environment() {
  BlasStartupInput in;
  const char* core = openblas_get_corename();
  in.openblas_core = core ? core : "";
  in.cpu = detect_cpu_features();
  in.user_coretype = env(kCoretype);
  in.restart_guard = env(kGuard);
  in.test_detected = env(kTestHook);
  return in;
}
#endif

}  // namespace

CpuFeatures detect_cpu_features() {
  CpuFeatures f;
#if defined(__GNUC__) && (defined(__x86_64__) || defined(__i386__))
  __builtin_cpu_init();
  f.vendor = __builtin_cpu_is("intel") ? "intel" : __builtin_cpu_is("amd") ? "amd" : "other";
  f.avx2 = __builtin_cpu_supports("avx2");
  f.fma = __builtin_cpu_supports("fma");
  f.avx512f = __builtin_cpu_supports("avx512f");
  f.avx512bw = __builtin_cpu_supports("avx512bw");
  f.avx512dq = __builtin_cpu_supports("avx512dq");
  f.avx512vl = __builtin_cpu_supports("avx512vl");
#else
  f.vendor = "other";
#endif
  return f;
}

KernelLevel openblas_kernel_level(std::string_view core) {
  // The kernel sets of OpenBLAS 0.3.21's DYNAMIC_ARCH build for x86-64: the
  // names are the corename table of driver/others/dynamic.c (the same strings
  // appear in Debian's libopenblasp-r0.3.21.so; Katmai, Coppermine, Northwood,
  // Banias and Athlon are accepted there and run the Prescott kernels); the
  // instruction level is that of kernel/x86_64/KERNEL.<NAME> (Sandybridge: AVX;
  // Bulldozer to Excavator: AVX with FMA4/FMA3 kernels, no AVX2 ones). Measured
  // on this project's machine in docs/performance.md, "BLAS kernels".
  static constexpr std::array<std::string_view, 21> generic = {
      "Katmai",    "Coppermine",   "Northwood", "Prescott", "Banias",      "Atom",      "Core2",
      "Penryn",    "Dunnington",   "Nehalem",   "Athlon",   "Opteron",     "Opteron_SSE3", "Barcelona",
      "Nano",      "Bobcat",       "Sandybridge", "Bulldozer", "Piledriver", "Steamroller", "Excavator"};
  static constexpr std::array<std::string_view, 3> avx2 = {"Haswell", "Zen", "Dhyana"};
  static constexpr std::array<std::string_view, 3> avx512 = {"SkylakeX", "Cooperlake", "SapphireRapids"};
  auto in = [&](const auto& list) {
    return std::any_of(list.begin(), list.end(), [&](std::string_view n) { return iequal(n, core); });
  };
  if (in(generic)) return KernelLevel::generic;
  if (in(avx2)) return KernelLevel::avx2;
  if (in(avx512)) return KernelLevel::avx512;
  return KernelLevel::unknown;
}

BlasDecision decide_blas_kernel(const BlasStartupInput& in) {
  BlasDecision d;
  const CpuFeatures& cpu = in.cpu;
  if (in.restart_guard) {
    // The restarted process: never restart again, whatever it finds.
    d.restarted = true;
    if (!in.user_coretype) {
      d.chosen_by = "openblas";
      d.reason = "detected by OpenBLAS (" + std::string(kGuard) + " set without " + kCoretype + ")";
      return d;
    }
    d.chosen_by = "pcasweep";
    d.reason = "OpenBLAS picked " + core_token(*in.restart_guard) + " on a CPU with " + feature_text(cpu);
    if (in.test_detected) d.reason += " (test hook " + std::string(kTestHook) + ")";
    if (!iequal(in.openblas_core, *in.user_coretype)) {
      d.reason += "; asked for " + printable(*in.user_coretype) + ", OpenBLAS runs " + printable(in.openblas_core);
      if (openblas_kernel_level(in.openblas_core) == KernelLevel::generic && cpu.avx2_fma())
        d.warning = "pcasweep: restarted with " + std::string(kCoretype) + "=" + printable(*in.user_coretype) +
                    " but OpenBLAS still runs its " + printable(in.openblas_core) + " kernels";
    }
    return d;
  }
  const std::string detected = in.test_detected ? *in.test_detected : in.openblas_core;
  const std::string hook_note =
      in.test_detected ? " (test hook " + std::string(kTestHook) + "=" + printable(*in.test_detected) + ")" : "";
  const bool generic_on_avx2 = openblas_kernel_level(detected) == KernelLevel::generic && cpu.avx2_fma();
  if (in.user_coretype) {
    d.chosen_by = "user";
    d.reason = std::string(kCoretype) + "=" + printable(*in.user_coretype) + " in the environment" + hook_note;
    if (generic_on_avx2)
      d.warning = "pcasweep: " + std::string(kCoretype) + "=" + printable(*in.user_coretype) + " runs OpenBLAS's " +
                  printable(detected) + " kernels, which have no AVX2 code, on a CPU with " + feature_text(cpu) +
                  "; unset it to let pcasweep pick " + restart_target(cpu);
    return d;
  }
  d.chosen_by = "openblas";
  if (generic_on_avx2) {
    d.action = BlasAction::restart;
    d.set_coretype = restart_target(cpu);
    d.chosen_by = "pcasweep";
    d.reason = "OpenBLAS picked " + printable(detected) + " on a CPU with " + feature_text(cpu) + hook_note;
    return d;
  }
  d.reason = "detected by OpenBLAS" + hook_note;
  return d;
}

void blas_startup(char** argv) {
#ifdef EIGEN_USE_BLAS
  const BlasStartupInput in = input_from_environment();
  BlasDecision d = decide_blas_kernel(in);
  if (d.restarted) {
    // Give child processes the environment the user started pcasweep with.
    ::unsetenv(kGuard);
    if (in.user_coretype) ::unsetenv(kCoretype);
  }
  if (d.action == BlasAction::restart) {
    if (argv != nullptr && argv[0] != nullptr) {
      const std::string detected = in.test_detected ? *in.test_detected : in.openblas_core;
      ::setenv(kCoretype, d.set_coretype.c_str(), 1);
      ::setenv(kGuard, core_token(detected).c_str(), 1);
      std::cout.flush();
      std::cerr.flush();
      std::fflush(nullptr);
      ::execv("/proc/self/exe", argv);
      const int err = errno;  // execv returned: it failed
      ::unsetenv(kCoretype);
      ::unsetenv(kGuard);
      d.reason += "; restarting with " + std::string(kCoretype) + "=" + d.set_coretype +
                  " failed (execv /proc/self/exe: " + std::strerror(err) + ")";
    } else {
      d.reason += "; not restarted (no argv)";
    }
    d.warning = "pcasweep: " + d.reason + "; set " + kCoretype + "=" + d.set_coretype + " for faster products";
    d.action = BlasAction::keep;
    d.chosen_by = "openblas";
  }
  if (!d.warning.empty()) std::cerr << d.warning << "\n";
  startup_record() = {true, d};
#else
  (void)argv;
  startup_record().recorded = true;
#endif
}

BlasInfo blas_info() {
  BlasInfo info;
#ifdef EIGEN_USE_BLAS
  info.library = "OpenBLAS";
  const char* config = openblas_get_config();
  info.config = config ? config : "";
  while (!info.config.empty() && info.config.back() == ' ') info.config.pop_back();
  // "OpenBLAS 0.3.21 NO_LAPACKE DYNAMIC_ARCH ...": the version is the second word.
  if (info.config.rfind("OpenBLAS ", 0) == 0) {
    const std::size_t end = info.config.find(' ', 9);
    info.version = info.config.substr(9, end == std::string::npos ? std::string::npos : end - 9);
  }
  const char* core = openblas_get_corename();
  info.core = core ? core : "";
  info.threads = openblas_get_num_threads();
  BlasDecision d;
  if (startup_record().recorded) {
    d = startup_record().decision;
  } else {
    d = decide_blas_kernel(input_from_environment());
    if (d.action == BlasAction::restart) {
      d.action = BlasAction::keep;
      d.chosen_by = "openblas";
      d.reason += "; not changed: pcasweep's start-up check (blas_startup) did not run in this program";
    }
  }
  info.chosen_by = d.chosen_by;
  info.reason = d.reason;
  info.restarted = d.restarted;
#else
  info.library = "Eigen";
  info.version = std::to_string(EIGEN_WORLD_VERSION) + "." + std::to_string(EIGEN_MAJOR_VERSION) + "." +
                 std::to_string(EIGEN_MINOR_VERSION);
  info.config = Eigen::SimdInstructionSetsInUse();
  info.threads = Eigen::nbThreads();
  info.chosen_by = "build";
  info.reason = "built with PCASWEEP_USE_BLAS=OFF: Eigen's own kernels";
#endif
  return info;
}

nlohmann::json blas_json(const BlasInfo& info) {
  return {{"library", info.library},
          {"version", info.version},
          {"config", info.config},
          {"core", info.core.empty() ? nlohmann::json() : nlohmann::json(info.core)},
          {"threads", info.threads},
          {"chosen_by", info.chosen_by},
          {"reason", info.reason},
          {"restarted", info.restarted}};
}

std::string blas_line(const BlasInfo& info) {
  const std::string threads = std::to_string(info.threads) + (info.threads == 1 ? " thread" : " threads");
  if (info.library != "OpenBLAS") {
    return "BLAS: none, " + info.library + " " + info.version + "'s own kernels (" + info.config + "), " + threads +
           " (" + info.reason + ")\n";
  }
  std::string line = "BLAS: OpenBLAS " + info.version + ", " + info.core + " kernels, " + threads;
  if (info.chosen_by == "pcasweep") line += " (set by pcasweep: " + info.reason + ")";
  else if (info.chosen_by == "user") line += " (set by the user: " + info.reason + ")";
  else if (info.reason != "detected by OpenBLAS") line += " (" + info.reason + ")";
  return line + "\n";
}

}  // namespace pcasweep
