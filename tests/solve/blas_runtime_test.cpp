// The BLAS kernel check at start-up (solve/blas_runtime.hpp): the decision over
// a table of cases, the names of OpenBLAS 0.3.21's kernel sets, the report
// formats, and the CPU features against the kernel's /proc/cpuinfo.
#include <doctest/doctest.h>

#include <fstream>
#include <set>
#include <sstream>
#include <string>

#include "solve/blas_runtime.hpp"

using namespace pcasweep;

namespace {

CpuFeatures sse_only(const char* vendor) {
  CpuFeatures f;
  f.vendor = vendor;
  return f;
}
CpuFeatures with_avx2(const char* vendor) {
  CpuFeatures f = sse_only(vendor);
  f.avx2 = f.fma = true;
  return f;
}
CpuFeatures with_avx512(const char* vendor) {
  CpuFeatures f = with_avx2(vendor);
  f.avx512f = f.avx512bw = f.avx512dq = f.avx512vl = true;
  return f;
}

struct Case {
  const char* what;
  std::string core;
  CpuFeatures cpu;
  std::optional<std::string> user, guard, hook;
  BlasAction action;
  std::string set_coretype;  // expected on restart
  std::string chosen_by;
  bool warns;
  bool restarted;
  std::string reason_has;  // a part of the reason that must be there
};

}  // namespace

TEST_CASE("blas_runtime: the start-up decision over a table of cases") {
  using std::nullopt;
  const BlasAction keep = BlasAction::keep, restart = BlasAction::restart;
  const std::vector<Case> cases = {
      // OpenBLAS fell back to a generic kernel set on a CPU that has AVX2 + FMA: restart.
      {"Prescott on Intel AVX2", "Prescott", with_avx2("intel"), nullopt, nullopt, nullopt, restart, "Haswell",
       "pcasweep", false, false, "OpenBLAS picked Prescott on a CPU with AVX2"},
      {"Prescott on AMD AVX2", "Prescott", with_avx2("amd"), nullopt, nullopt, nullopt, restart, "Zen", "pcasweep",
       false, false, "OpenBLAS picked Prescott on a CPU with AVX2"},
      {"Prescott on Intel AVX-512", "Prescott", with_avx512("intel"), nullopt, nullopt, nullopt, restart, "SkylakeX",
       "pcasweep", false, false, "on a CPU with AVX-512"},
      {"Prescott on AMD AVX-512", "Prescott", with_avx512("amd"), nullopt, nullopt, nullopt, restart, "SkylakeX",
       "pcasweep", false, false, "on a CPU with AVX-512"},
      {"Prescott on another vendor's AVX2", "Prescott", with_avx2("other"), nullopt, nullopt, nullopt, restart,
       "Haswell", "pcasweep", false, false, "Prescott"},
      {"Nehalem on AVX2", "Nehalem", with_avx2("intel"), nullopt, nullopt, nullopt, restart, "Haswell", "pcasweep",
       false, false, "Nehalem"},
      {"Core2 on AVX2", "Core2", with_avx2("intel"), nullopt, nullopt, nullopt, restart, "Haswell", "pcasweep",
       false, false, "Core2"},
      {"Penryn on AVX2", "Penryn", with_avx2("intel"), nullopt, nullopt, nullopt, restart, "Haswell", "pcasweep",
       false, false, "Penryn"},
      {"Dunnington on AVX2", "Dunnington", with_avx2("intel"), nullopt, nullopt, nullopt, restart, "Haswell",
       "pcasweep", false, false, "Dunnington"},
      {"Atom on AVX2", "Atom", with_avx2("intel"), nullopt, nullopt, nullopt, restart, "Haswell", "pcasweep", false,
       false, "Atom"},
      {"Sandybridge (AVX, no AVX2 kernels) on AVX-512", "Sandybridge", with_avx512("intel"), nullopt, nullopt,
       nullopt, restart, "SkylakeX", "pcasweep", false, false, "Sandybridge"},
      {"Barcelona on AMD AVX2", "Barcelona", with_avx2("amd"), nullopt, nullopt, nullopt, restart, "Zen", "pcasweep",
       false, false, "Barcelona"},
      {"Excavator on AMD AVX2", "Excavator", with_avx2("amd"), nullopt, nullopt, nullopt, restart, "Zen", "pcasweep",
       false, false, "Excavator"},
      {"lower-case name", "prescott", with_avx2("intel"), nullopt, nullopt, nullopt, restart, "Haswell", "pcasweep",
       false, false, "prescott"},
      // Generic kernels are right where the CPU has no AVX2 (or no FMA): keep.
      {"Prescott on an SSE-only CPU", "Prescott", sse_only("intel"), nullopt, nullopt, nullopt, keep, "", "openblas",
       false, false, "detected by OpenBLAS"},
      {"Sandybridge on AVX without AVX2", "Sandybridge", sse_only("intel"), nullopt, nullopt, nullopt, keep, "",
       "openblas", false, false, "detected by OpenBLAS"},
      // OpenBLAS chose AVX2 / AVX-512 kernels, or a name this table does not know: keep.
      {"Zen on AMD AVX2", "Zen", with_avx2("amd"), nullopt, nullopt, nullopt, keep, "", "openblas", false, false,
       "detected by OpenBLAS"},
      {"Haswell on Intel AVX2", "Haswell", with_avx2("intel"), nullopt, nullopt, nullopt, keep, "", "openblas", false,
       false, "detected by OpenBLAS"},
      {"Haswell on AVX-512 (not generic)", "Haswell", with_avx512("intel"), nullopt, nullopt, nullopt, keep, "",
       "openblas", false, false, "detected by OpenBLAS"},
      {"SkylakeX on AVX-512", "SkylakeX", with_avx512("intel"), nullopt, nullopt, nullopt, keep, "", "openblas",
       false, false, "detected by OpenBLAS"},
      {"an unknown name", "Unknown", with_avx2("intel"), nullopt, nullopt, nullopt, keep, "", "openblas", false, false,
       "detected by OpenBLAS"},
      // The user's OPENBLAS_CORETYPE is never overridden; a generic choice on AVX2 is told.
      {"user chose Prescott on AVX2", "Prescott", with_avx2("amd"), "Prescott", nullopt, nullopt, keep, "", "user",
       true, false, "OPENBLAS_CORETYPE=Prescott"},
      {"user chose Prescott on SSE-only", "Prescott", sse_only("intel"), "Prescott", nullopt, nullopt, keep, "",
       "user", false, false, "OPENBLAS_CORETYPE=Prescott"},
      {"user chose Haswell", "Haswell", with_avx2("intel"), "Haswell", nullopt, nullopt, keep, "", "user", false,
       false, "OPENBLAS_CORETYPE=Haswell"},
      {"user set it empty (OpenBLAS then runs Haswell)", "Haswell", with_avx2("amd"), "", nullopt, nullopt, keep, "",
       "user", false, false, "OPENBLAS_CORETYPE="},
      {"user set it and the test hook says Prescott", "Zen", with_avx2("amd"), "Zen", nullopt, "Prescott", keep, "",
       "user", true, false, "test hook"},
      // The restarted process (guard set): never restarts again.
      {"restarted, OpenBLAS now runs Zen", "Zen", with_avx2("amd"), "Zen", "Prescott", nullopt, keep, "", "pcasweep",
       false, true, "OpenBLAS picked Prescott on a CPU with AVX2"},
      {"restarted, but OpenBLAS still runs Prescott", "Prescott", with_avx2("intel"), "Haswell", "Prescott", nullopt,
       keep, "", "pcasweep", true, true, "OpenBLAS runs Prescott"},
      {"restarted with the test hook still set", "Zen", with_avx2("amd"), "Zen", "Prescott", "Prescott", keep, "",
       "pcasweep", false, true, "test hook"},
      {"guard without OPENBLAS_CORETYPE", "Prescott", with_avx2("intel"), nullopt, "Prescott", nullopt, keep, "",
       "openblas", false, true, "detected by OpenBLAS"},
      {"guard carrying odd characters", "Zen", with_avx2("amd"), "Zen", "Pres\ncott; x", nullopt, keep, "",
       "pcasweep", false, true, "OpenBLAS picked Prescottx on"},
      // The test hook stands for what OpenBLAS detected, in the first process.
      {"hook Prescott, OpenBLAS detected Zen", "Zen", with_avx2("amd"), nullopt, nullopt, "Prescott", restart, "Zen",
       "pcasweep", false, false, "test hook PCASWEEP_TEST_BLAS_DETECTED=Prescott"},
      {"hook Prescott on AVX-512", "SkylakeX", with_avx512("intel"), nullopt, nullopt, "Prescott", restart,
       "SkylakeX", "pcasweep", false, false, "test hook"},
      {"hook Zen over a generic detection", "Prescott", with_avx2("amd"), nullopt, nullopt, "Zen", keep, "",
       "openblas", false, false, "test hook"},
      {"hook Prescott on an SSE-only CPU", "Prescott", sse_only("intel"), nullopt, nullopt, "Prescott", keep, "",
       "openblas", false, false, "test hook"},
  };
  for (const Case& c : cases) {
    CAPTURE(c.what);
    BlasStartupInput in;
    in.openblas_core = c.core;
    in.cpu = c.cpu;
    in.user_coretype = c.user;
    in.restart_guard = c.guard;
    in.test_detected = c.hook;
    const BlasDecision d = decide_blas_kernel(in);
    CHECK(d.action == c.action);
    if (c.action == BlasAction::restart) CHECK(d.set_coretype == c.set_coretype);
    CHECK(d.chosen_by == c.chosen_by);
    CHECK(d.restarted == c.restarted);
    CHECK(!d.warning.empty() == c.warns);
    CHECK(d.reason.find(c.reason_has) != std::string::npos);
    CHECK(d.reason.find('\n') == std::string::npos);
    CHECK(d.warning.find('\n') == std::string::npos);
    if (!d.warning.empty()) CHECK(d.warning.rfind("pcasweep: ", 0) == 0);
  }
}

TEST_CASE("blas_runtime: kernel levels of OpenBLAS 0.3.21's DYNAMIC_ARCH names") {
  // Names: the corename strings in Debian's libopenblasp-r0.3.21.so (driver/others/dynamic.c).
  for (const char* n : {"Katmai", "Coppermine", "Northwood", "Prescott", "Banias", "Atom", "Core2", "Penryn",
                        "Dunnington", "Nehalem", "Athlon", "Opteron", "Opteron_SSE3", "Barcelona", "Nano", "Bobcat",
                        "Sandybridge", "Bulldozer", "Piledriver", "Steamroller", "Excavator", "NEHALEM"}) {
    CAPTURE(n);
    CHECK(openblas_kernel_level(n) == KernelLevel::generic);
  }
  for (const char* n : {"Haswell", "Zen", "HASWELL", "zen"}) CHECK(openblas_kernel_level(n) == KernelLevel::avx2);
  for (const char* n : {"SkylakeX", "Cooperlake", "skylakex"}) CHECK(openblas_kernel_level(n) == KernelLevel::avx512);
  for (const char* n : {"Unknown", "", "Zen3", "Prescott2"}) CHECK(openblas_kernel_level(n) == KernelLevel::unknown);
}

TEST_CASE("blas_runtime: report formats") {
  BlasInfo i;
  i.library = "OpenBLAS";
  i.version = "0.3.21";
  i.config = "OpenBLAS 0.3.21 NO_LAPACKE DYNAMIC_ARCH NO_AFFINITY USE_OPENMP Zen MAX_THREADS=64";
  i.core = "Zen";
  i.threads = 2;
  i.chosen_by = "openblas";
  i.reason = "detected by OpenBLAS";
  CHECK(blas_line(i) == "BLAS: OpenBLAS 0.3.21, Zen kernels, 2 threads\n");
  i.chosen_by = "pcasweep";
  i.reason = "OpenBLAS picked Prescott on a CPU with AVX2";
  i.restarted = true;
  CHECK(blas_line(i) ==
        "BLAS: OpenBLAS 0.3.21, Zen kernels, 2 threads (set by pcasweep: OpenBLAS picked Prescott on a CPU with AVX2)\n");
  const nlohmann::json j = blas_json(i);
  CHECK(j["library"] == "OpenBLAS");
  CHECK(j["version"] == "0.3.21");
  CHECK(j["core"] == "Zen");
  CHECK(j["threads"] == 2);
  CHECK(j["chosen_by"] == "pcasweep");
  CHECK(j["restarted"] == true);
  CHECK(j["config"] == i.config);
  i.chosen_by = "user";
  i.reason = "OPENBLAS_CORETYPE=Prescott in the environment";
  i.threads = 1;
  i.core = "Prescott";
  CHECK(blas_line(i) ==
        "BLAS: OpenBLAS 0.3.21, Prescott kernels, 1 thread (set by the user: OPENBLAS_CORETYPE=Prescott in the "
        "environment)\n");
  BlasInfo e;
  e.library = "Eigen";
  e.version = "3.4.0";
  e.config = "AVX SSE, SSE2";
  e.threads = 2;
  e.chosen_by = "build";
  e.reason = "built with PCASWEEP_USE_BLAS=OFF: Eigen's own kernels";
  CHECK(blas_line(e) ==
        "BLAS: none, Eigen 3.4.0's own kernels (AVX SSE, SSE2), 2 threads (built with PCASWEEP_USE_BLAS=OFF: "
        "Eigen's own kernels)\n");
  CHECK(blas_json(e)["core"].is_null());
}

TEST_CASE("blas_runtime: what runs in this test program") {
  const BlasInfo i = blas_info();
  CHECK(!i.restarted);  // nothing called blas_startup() here
  CHECK(i.threads >= 1);
#ifdef EIGEN_USE_BLAS
  CHECK(i.library == "OpenBLAS");
  CHECK(!i.core.empty());
  CHECK(openblas_kernel_level(i.core) != KernelLevel::unknown);
  // The version is the second word of openblas_get_config().
  CHECK(i.config.rfind("OpenBLAS " + i.version + " ", 0) == 0);
  CHECK(std::set<std::string>{"openblas", "user"}.count(i.chosen_by) == 1);
#else
  CHECK(i.library == "Eigen");
  CHECK(i.chosen_by == "build");
#endif
}

TEST_CASE("blas_runtime: CPU features agree with the kernel's /proc/cpuinfo") {
  // Outside source: the flags and vendor_id lines Linux prints for the first CPU.
  std::ifstream in("/proc/cpuinfo");
  if (!in) return;  // not Linux
  std::string line, flags, vendor;
  while (std::getline(in, line)) {
    if (flags.empty() && line.rfind("flags", 0) == 0) flags = " " + line.substr(line.find(':') + 1) + " ";
    if (vendor.empty() && line.rfind("vendor_id", 0) == 0) vendor = line.substr(line.find(':') + 2);
  }
  if (flags.empty()) return;  // not x86
  auto has = [&](const char* f) { return flags.find(" " + std::string(f) + " ") != std::string::npos; };
  const CpuFeatures c = detect_cpu_features();
  CHECK(c.avx2 == has("avx2"));
  CHECK(c.fma == has("fma"));
  CHECK(c.avx512f == has("avx512f"));
  CHECK(c.avx512bw == has("avx512bw"));
  CHECK(c.avx512dq == has("avx512dq"));
  CHECK(c.avx512vl == has("avx512vl"));
  CHECK(c.vendor == (vendor == "GenuineIntel" ? "intel" : vendor == "AuthenticAMD" ? "amd" : "other"));
}
