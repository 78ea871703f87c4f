// Tests for io/inputs.hpp: files, folders, --recursive, glob(3) patterns, @lists.
// Behaviour checked against the POSIX glob(3) contract (sorted matches; no match
// reported) and against the rules written in the header.
#include <doctest/doctest.h>

#include <filesystem>
#include <fstream>
#include <unistd.h>

#include "io/image.hpp"
#include "io/inputs.hpp"

namespace fs = std::filesystem;
using namespace pcasweep;

namespace {
fs::path make_tree() {
  const fs::path root = fs::temp_directory_path() / ("pcasweep-inputs-" + std::to_string(::getpid()));
  fs::remove_all(root);
  fs::create_directories(root / "sub" / "deeper");
  for (const char* name : {"b.png", "a.png", "notes.txt", "sub/c.jpg", "sub/deeper/d.pgm"})
    std::ofstream(root / name) << "x";
  std::ofstream(root / "list.txt") << "# a comment\n\n  a.png  \nsub/c.jpg\nmissing.png\n";
  return root;
}
CollectOptions options(bool recursive) {
  CollectOptions o;
  o.recursive = recursive;
  o.supported = has_image_extension;
  return o;
}
}  // namespace

TEST_CASE("collect_inputs: a folder gives its files sorted, notes the rest") {
  const fs::path root = make_tree();
  const auto got = collect_inputs({root.string()}, options(false));
  REQUIRE(got.files.size() == 2);
  CHECK(got.files[0] == (root / "a.png").string());
  CHECK(got.files[1] == (root / "b.png").string());
  // list.txt and notes.txt unsupported, sub skipped without --recursive
  CHECK(got.skipped.size() == 3);
  CHECK(got.failed.empty());
  fs::remove_all(root);
}

TEST_CASE("collect_inputs: --recursive descends, duplicates are dropped") {
  const fs::path root = make_tree();
  const auto got = collect_inputs({root.string(), (root / "a.png").string()}, options(true));
  CHECK(got.files.size() == 4);  // a, b, sub/c, sub/deeper/d — and a.png only once
  fs::remove_all(root);
}

TEST_CASE("collect_inputs: glob patterns and @lists") {
  const fs::path root = make_tree();
  auto got = collect_inputs({(root / "*.png").string()}, options(false));
  CHECK(got.files.size() == 2);
  got = collect_inputs({(root / "*.bmp").string()}, options(false));
  CHECK(got.files.empty());
  REQUIRE(got.failed.size() == 1);
  CHECK(got.failed[0].reason.find("matched no file") != std::string::npos);
  got = collect_inputs({"@" + (root / "list.txt").string()}, options(false));
  REQUIRE(got.files.size() == 2);
  CHECK(got.files[0] == (root / "a.png").string());
  CHECK(got.files[1] == (root / "sub/c.jpg").string());
  REQUIRE(got.failed.size() == 1);  // missing.png, relative to the list's folder
  CHECK(got.failed[0].path == (root / "missing.png").string());
  got = collect_inputs({"@" + (root / "nope.txt").string()}, options(false));
  CHECK(got.failed.size() == 1);
  fs::remove_all(root);
}
