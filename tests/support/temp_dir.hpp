// tests/support/temp_dir.hpp — a private scratch folder for one test, removed afterwards.
//
// Contract: TempDir() creates a new empty folder under the system temporary
// folder (name includes the process id and a counter, so parallel test
// processes never share one); the destructor removes it with its contents.
#pragma once

#include <unistd.h>

#include <atomic>
#include <filesystem>
#include <string>

namespace pcasweep::testing {

class TempDir {
 public:
  TempDir() {
    static std::atomic<int> counter{0};
    path_ = std::filesystem::temp_directory_path() /
            ("pcasweep-test-" + std::to_string(::getpid()) + "-" + std::to_string(counter++));
    std::filesystem::remove_all(path_);
    std::filesystem::create_directories(path_);
  }
  ~TempDir() {
    std::error_code ec;
    std::filesystem::remove_all(path_, ec);
  }
  TempDir(const TempDir&) = delete;
  TempDir& operator=(const TempDir&) = delete;

  const std::filesystem::path& path() const { return path_; }
  // path()/name as a string.
  std::string operator/(const std::string& name) const { return (path_ / name).string(); }

 private:
  std::filesystem::path path_;
};

}  // namespace pcasweep::testing
