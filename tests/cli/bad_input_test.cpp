// Bad input through the real pcasweep binary (PCASWEEP_BINARY): each mistake
// must give exactly one line on stderr, "pcasweep: ...", naming the file when
// there is one, exit 2 for a usage error or 1 for bad data / I/O, and leave no
// output behind.
#include <doctest/doctest.h>

#include <sys/wait.h>
#include <unistd.h>

#include <algorithm>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <set>

#include "../support/synthetic.hpp"
#include "../support/temp_dir.hpp"
#include "io/atomic_file.hpp"
#include "io/image.hpp"

using pcasweep::testing::scene_image;
using pcasweep::testing::SplitMix64;
using pcasweep::testing::TempDir;
namespace fs = std::filesystem;

namespace {

struct RunResult {
  int exit_code = -1;
  std::string out;
  std::string err;
};

std::string quoted(const std::string& s) {
  std::string q = "'";
  for (char c : s) q += c == '\'' ? std::string("'\\''") : std::string(1, c);
  return q + "'";
}

// Runs PCASWEEP_BINARY with `args` (already quoted where needed); stdout and
// stderr go to files in `tmp`, which are read back and removed.
RunResult run_pcasweep(const TempDir& tmp, const std::string& args) {
  const std::string out_file = tmp / "stdout.txt", err_file = tmp / "stderr.txt";
  const std::string command =
      quoted(PCASWEEP_BINARY) + " " + args + " >" + quoted(out_file) + " 2>" + quoted(err_file);
  const int status = std::system(command.c_str());
  RunResult r;
  r.exit_code = WIFEXITED(status) ? WEXITSTATUS(status) : -1;
  r.out = pcasweep::read_file(out_file);
  r.err = pcasweep::read_file(err_file);
  fs::remove(out_file);
  fs::remove(err_file);
  return r;
}

void write_bytes(const std::string& path, const std::string& bytes) {
  std::ofstream f(path, std::ios::binary);
  f.write(bytes.data(), std::streamsize(bytes.size()));
}

std::set<std::string> entries(const fs::path& folder) {
  std::set<std::string> names;
  for (const auto& e : fs::directory_iterator(folder)) names.insert(e.path().filename().string());
  return names;
}

// The checks every bad input must pass. `names` is the file the message must
// mention ("" when the mistake is not about a file).
void check_refused(const TempDir& tmp, const std::string& args, int expected_exit, const std::string& names,
                   const std::string& out_dir) {
  const std::set<std::string> before = entries(tmp.path());
  const RunResult r = run_pcasweep(tmp, args);
  CAPTURE(args);
  CAPTURE(r.err);
  CHECK(r.exit_code == expected_exit);
  // Exactly one line on stderr: one newline, at the end.
  CHECK(std::count(r.err.begin(), r.err.end(), '\n') == 1);
  CHECK(!r.err.empty());
  if (!r.err.empty()) CHECK(r.err.back() == '\n');
  CHECK(r.err.rfind("pcasweep: ", 0) == 0);
  if (!names.empty()) CHECK(r.err.find(names) != std::string::npos);
  // No output folder, no stray files (temporaries included).
  CHECK_FALSE(fs::exists(out_dir));
  CHECK(entries(tmp.path()) == before);
}

}  // namespace

// Source: issue 2, "Bad input" (missing or unreadable file, corrupt image,
// patch larger than the image, k < 1 or > d, stride 0, unknown option) and
// the error contract of core/error.hpp (exit 2 usage, 1 data/I/O; one line
// "pcasweep: FILE: what is wrong"; never a partial output).
TEST_CASE("cli: bad input gives one line on stderr, the right exit code, and no output") {
  TempDir tmp;
  // A valid 96x72 gray 8-bit PNG (N = 108 patches of 8x8, d = 64) and a noisy RGB one
  // large enough that cutting its file in half cuts into the pixel data.
  const std::string good = tmp / "good.png";
  pcasweep::write_png(good, scene_image(96, 72, 1, 8, 3));
  const std::string big_bytes = pcasweep::encode_png(scene_image(96, 64, 3, 8, 4));
  REQUIRE(big_bytes.size() > 4000);
  const std::string truncated = tmp / "truncated.png";
  write_bytes(truncated, big_bytes.substr(0, big_bytes.size() / 2));
  const std::string header_only = tmp / "header-only.png";
  write_bytes(header_only, big_bytes.substr(0, 40));
  const std::string noise = tmp / "noise.png";
  {
    SplitMix64 rng(99);
    std::string bytes(3000, '\0');
    for (auto& b : bytes) b = char(rng.next() & 0xff);
    write_bytes(noise, bytes);
  }
  const std::string empty = tmp / "empty.png";
  write_bytes(empty, "");
  const std::string folder = tmp / "folder.png";
  fs::create_directory(folder);
  const std::string missing = tmp / "missing.png";
  const std::string out = tmp / "out";
  const std::string o = " --out " + quoted(out);

  SUBCASE("missing file") { check_refused(tmp, "sweep " + quoted(missing) + o, 1, missing, out); }
  SUBCASE("truncated PNG") { check_refused(tmp, "sweep " + quoted(truncated) + o, 1, truncated, out); }
  SUBCASE("PNG cut after its header") { check_refused(tmp, "sweep " + quoted(header_only) + o, 1, header_only, out); }
  SUBCASE("random bytes named .png") { check_refused(tmp, "sweep " + quoted(noise) + o, 1, noise, out); }
  SUBCASE("empty file") { check_refused(tmp, "sweep " + quoted(empty) + o, 1, empty, out); }
  SUBCASE("a folder given as the image") { check_refused(tmp, "sweep " + quoted(folder) + o, 1, folder, out); }
  SUBCASE("unreadable file") {
    if (::geteuid() == 0) {
      MESSAGE("running as root: permissions do not stop reading, unreadable-file case skipped");
    } else {
      const std::string locked = tmp / "locked.png";
      fs::copy_file(good, locked);
      fs::permissions(locked, fs::perms::none);
      check_refused(tmp, "sweep " + quoted(locked) + o, 1, locked, out);
      fs::permissions(locked, fs::perms::owner_all);
    }
  }
  SUBCASE("patch larger than the image") {
    check_refused(tmp, "sweep " + quoted(good) + o + " --patch 73", 2, good, out);
    check_refused(tmp, "sweep " + quoted(good) + o + " --patch 8x97", 2, good, out);
  }
  SUBCASE("k < 1") {
    check_refused(tmp, "sweep " + quoted(good) + o + " --k 0", 2, "", out);
    check_refused(tmp, "sweep " + quoted(good) + o + " --k 1,-2", 2, "", out);
  }
  SUBCASE("k > d") { check_refused(tmp, "sweep " + quoted(good) + o + " --k 4,65", 2, "65", out); }
  SUBCASE("k not a number") { check_refused(tmp, "sweep " + quoted(good) + o + " --k four", 2, "four", out); }
  SUBCASE("stride 0") {
    check_refused(tmp, "sweep " + quoted(good) + o + " --stride 0", 2, "--stride", out);
    check_refused(tmp, "sweep " + quoted(good) + o + " --stride 4x0", 2, "--stride", out);
  }
  SUBCASE("patch 0") { check_refused(tmp, "sweep " + quoted(good) + o + " --patch 0", 2, "--patch", out); }
  SUBCASE("unknown option") { check_refused(tmp, "sweep " + quoted(good) + o + " --bogus-option", 2, "--bogus-option", out); }
  SUBCASE("unknown product precision") {
    check_refused(tmp, "sweep " + quoted(good) + o + " --precision half", 2, "--precision", out);
    check_refused(tmp, "spectrum " + quoted(good) + " --precision half", 2, "--precision", out);
  }
  SUBCASE("unknown subcommand") { check_refused(tmp, "frobnicate " + quoted(good), 2, "", out); }
  SUBCASE("spectrum of a corrupt file") { check_refused(tmp, "spectrum " + quoted(noise), 1, noise, out); }
  SUBCASE("spectrum with a patch larger than the image") {
    check_refused(tmp, "spectrum " + quoted(good) + " --patch 100", 2, good, out);
  }
}

// Source: control for the case above: the same binary and image succeed, so
// the refusals are about the input, not a broken binary.
TEST_CASE("cli: the good image used above does sweep") {
  TempDir tmp;
  const std::string good = tmp / "good.png";
  pcasweep::write_png(good, scene_image(96, 72, 1, 8, 3));
  const std::string out = tmp / "out";
  const RunResult r = run_pcasweep(tmp, "sweep " + quoted(good) + " --out " + quoted(out) + " --k 1,64");
  CAPTURE(r.err);
  CHECK(r.exit_code == 0);
  CHECK(r.err.empty());
  CHECK(fs::exists(out + "/spectrum.csv"));
  CHECK(fs::exists(out + "/sweep.csv"));
  CHECK(fs::exists(out + "/summary.json"));
  CHECK(fs::exists(out + "/good.k1.png"));
  CHECK(fs::exists(out + "/good.k64.png"));
  const pcasweep::Image written = pcasweep::read_image(out + "/good.k64.png");
  CHECK(written.width == 96);
  CHECK(written.height == 72);
  CHECK(written.channels == 1);
}
