#include "present/output_folder.hpp"

#include <cerrno>
#include <cstring>
#include <filesystem>
#include <unistd.h>
#include <vector>

#include "core/error.hpp"
#include "core/interrupt.hpp"
#include "io/atomic_file.hpp"

namespace pcasweep {

namespace {

// The folders of `dir` (itself and its parents) that do not exist yet, outermost first.
std::vector<std::string> missing_folders(const std::string& dir) {
  std::vector<std::string> missing;
  std::error_code ec;
  for (std::filesystem::path p = std::filesystem::path(dir).lexically_normal();
       !p.empty() && !std::filesystem::exists(p, ec); p = p.parent_path()) {
    missing.insert(missing.begin(), p.string());
    if (p == p.parent_path()) break;
  }
  return missing;
}

}  // namespace

OutputFolder::OutputFolder(std::string dir) : dir_(std::move(dir)) {
  std::error_code ec;
  const std::vector<std::string> missing = missing_folders(dir_);
  std::filesystem::create_directories(dir_, ec);
  for (const std::string& folder : missing) register_created_folder(folder);
  if (ec) throw data_error(dir_ + ": cannot create output folder: " + ec.message());
  if (!std::filesystem::is_directory(dir_, ec))
    throw data_error(dir_ + ": cannot create output folder: a file of that name is in the way");
  check_writable();
}

void OutputFolder::check_writable() const {
  int slot = -1;
  const std::string probe = path(".write-check.tmp-" + std::to_string(::getpid()));
  const int fd = create_registered_temporary(probe, &slot);
  if (fd < 0) throw data_error(dir_ + ": cannot write into the output folder: " + std::strerror(errno));
  ::close(fd);
  ::unlink(probe.c_str());
  forget_temporary(slot);
}

std::string OutputFolder::path(const std::string& name) const { return (std::filesystem::path(dir_) / name).string(); }

void OutputFolder::write(const std::string& name, std::string_view bytes) const { write_file_atomic(path(name), bytes); }

OutputFolder OutputFolder::subfolder(const std::string& name) const { return OutputFolder(path(name)); }

}  // namespace pcasweep
